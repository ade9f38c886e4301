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

namespace {

// A sine sampled on an uneven grid of about `perPeriod` points a period (steps alternating
// between 0.6 and 1.4 of the mean, as an integrator's steps wander).
void unevenSine(int perPeriod, std::vector<double>& t, std::vector<double>& y, double periods) {
  const double f = 50.0, h = 1.0 / (f * perPeriod);
  t.clear();
  y.clear();
  double x = 0.0;
  for (int k = 0; x < periods / f; ++k) {
    t.push_back(x);
    y.push_back(10.0 * std::sqrt(2.0) * std::sin(2 * std::numbers::pi * f * x + 0.3));
    x += h * (k % 2 ? 1.4 : 0.6);
  }
  t.push_back(periods / f);
  y.push_back(10.0 * std::sqrt(2.0) * std::sin(2 * std::numbers::pi * periods + 0.3));
}

}  // namespace

TEST_CASE("Crests and crossings of a coarsely and unevenly sampled sine", "[analysis][measures]") {
  // 24 uneven points a period: the largest sample lies below the crest by up to (w h)^2 / 8,
  // about 1 % on the longer steps; the quadratic through the samples with the neighbours'
  // curvature finds it within 5e-4. Closed forms: crest 10 sqrt(2) V, rising zero crossings at
  // w t + 0.3 = 2 pi k.
  std::vector<double> t, y;
  unevenSine(24, t, y, 2.0);
  CHECK(measure::maximum(t, y, t.front(), t.back()) == Approx(10.0 * std::sqrt(2.0)).epsilon(5e-4));
  CHECK(measure::minimum(t, y, t.front(), t.back()) ==
        Approx(-10.0 * std::sqrt(2.0)).epsilon(5e-4));
  const auto up = measure::crossings(t, y, 0.0, +1, t.front(), t.back());
  REQUIRE(up.size() == 2);
  CHECK(up[0] ==
        Approx((2 * std::numbers::pi - 0.3) / (2 * std::numbers::pi * 50.0)).epsilon(5e-4));
  // Crossings of 10 V, where the sine bends (w t + 0.3 = pi/4 or 3 pi/4, modulo 2 pi): the
  // chords miss them by 1.6e-5 to 2.6e-5 s on this grid, the interpolant by under 1.3e-6 s.
  const auto at10 = measure::crossings(t, y, 10.0, 0, t.front(), t.back());
  REQUIRE(at10.size() == 4);
  const double w = 2 * std::numbers::pi * 50.0;
  for (std::size_t k = 0; k < at10.size(); ++k) {
    const double phase = (k % 2 ? 0.75 : 0.25) * std::numbers::pi;
    const double exact = (phase + 2 * std::numbers::pi * static_cast<double>(k / 2) - 0.3) / w;
    INFO("crossing " << k);
    CHECK(at10[k] == Approx(exact).margin(3e-6));
  }
}

TEST_CASE("A clipped waveform's knee does not overshoot", "[analysis][measures]") {
  // max(0, sin): the kink at the zero crossing must not make the interpolant dip below 0 or
  // peak above the crest.
  std::vector<double> t, y;
  for (int k = 0; k <= 37; ++k) {
    t.push_back(k / 37.0 * 0.02);
    y.push_back(std::max(0.0, std::sin(2 * std::numbers::pi * 50.0 * t.back() + 0.1)));
  }
  CHECK(measure::minimum(t, y, t.front(), t.back()) >= -1e-12);
  CHECK(measure::maximum(t, y, t.front(), t.back()) <= 1.0 + 1e-9);
}

TEST_CASE("A jump recorded as two rows at one time", "[analysis][measures]") {
  // A step from 0 to 1 at t = 1 (a breakpoint's left and right limits): the integral over
  // [0, 2] is 1, with no curvature carried across the jump.
  const std::vector<double> t{0.0, 0.5, 1.0, 1.0, 1.5, 2.0}, y{0.0, 0.0, 0.0, 1.0, 1.0, 1.0};
  CHECK(measure::integral(t, y, 0.0, 2.0) == Approx(1.0).epsilon(1e-12));
  CHECK(measure::maximum(t, y, 0.0, 2.0) == Approx(1.0).epsilon(1e-12));
  CHECK(measure::minimum(t, y, 0.0, 2.0) == Approx(0.0).margin(1e-12));
}
