// Waveform figures against closed forms of sampled functions.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "disc/measures.hpp"

using namespace disc;

TEST_CASE("Mean and rms of a sampled sine", "[analysis][measures]") {
  std::vector<double> t, y;
  for (int k = 0; k <= 20000; ++k) {
    t.push_back(k * 1e-6);
    y.push_back(1.0 + 2.0 * std::sin(2 * std::numbers::pi * 50.0 * t.back()));
  }
  CHECK(measure::mean(t, y, 0.0, 0.02) == Approx(1.0).epsilon(1e-6));
  // rms of offset + sine: sqrt(1 + 2^2/2).
  CHECK(measure::rms(t, y, 0.0, 0.02) == Approx(std::sqrt(3.0)).epsilon(1e-6));
  const auto f = measure::outputFigures(t, y, 50.0);
  CHECK(f.ripplePeakToPeak == Approx(4.0).epsilon(1e-6));
  CHECK(f.rippleRms == Approx(std::sqrt(2.0)).epsilon(1e-5));
  CHECK(measure::crossings(t, y, 2.0, +1, 0.001, 0.02).size() == 1);
}
