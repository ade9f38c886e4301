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

TEST_CASE("Ripple rms keeps its digits on a high DC level", "[analysis][measures]") {
  // 10 kV with 0.1 mV of ripple: rms^2 - mean^2 cancels 1e8 against 1e8 and leaves no digit of
  // the 5e-9 V^2 ripple term; the rms of (v - mean) is A / sqrt(2) (closed form of a sine).
  std::vector<double> t, y;
  for (int k = 0; k <= 20000; ++k) {
    t.push_back(k * 1e-6);
    y.push_back(1e4 + 1e-4 * std::sin(2 * std::numbers::pi * 50.0 * t.back()));
  }
  const auto f = measure::outputFigures(t, y, 50.0);
  CHECK(f.mean == Approx(1e4).epsilon(1e-12));
  CHECK(f.rippleRms == Approx(1e-4 / std::sqrt(2.0)).epsilon(1e-5));
  CHECK(f.ripplePeakToPeak == Approx(2e-4).epsilon(1e-5));
}
