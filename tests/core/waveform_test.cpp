// Source waveforms.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/error.hpp"
#include "disc/waveform.hpp"

using disc::Waveform;

TEST_CASE("Sine given as rms has amplitude sqrt(2) rms", "[core][waveform]") {
  const Waveform w = Waveform::sineRms(230.0, 50.0);
  CHECK(w.value(0.005) == Approx(230.0 * std::sqrt(2.0)).epsilon(1e-12));
  CHECK(w.value(0.0) == Approx(0.0).margin(1e-12));
}

TEST_CASE("Gated waveforms are zero outside the switched-on interval", "[core][waveform]") {
  Waveform w = Waveform::dc(5.0);
  w.gate(1.0, 2.0);
  CHECK(w.value(0.5) == 0.0);
  CHECK(w.value(1.5) == 5.0);
  CHECK(w.value(2.5) == 0.0);
  std::vector<double> bp;
  w.breakpoints(0.0, 3.0, bp);
  CHECK(bp == std::vector<double>{1.0, 2.0});
}

TEST_CASE("Points waveform interpolates and holds its ends", "[core][waveform]") {
  const Waveform w = Waveform::points({{0.0, 0.0}, {1.0, 10.0}, {2.0, 0.0}});
  CHECK(w.value(-1.0) == 0.0);
  CHECK(w.value(0.25) == Approx(2.5));
  CHECK(w.value(1.5) == Approx(5.0));
  CHECK(w.value(3.0) == 0.0);
}

TEST_CASE("A level schedule scales the waveform on the slow clock", "[core][waveform]") {
  // A variac: a quarter for a minute, a ramp to half, then full after two minutes.
  Waveform w = Waveform::sineRms(230.0, 50.0);
  w.schedule({{0.0, 0.25}, {60.0, 0.25}, {90.0, 0.5}, {120.0, 0.5}, {121.0, 1.0}});
  CHECK(w.level(-5.0) == 0.25);
  CHECK(w.level(75.0) == Approx(0.375));
  CHECK(w.level(500.0) == 1.0);
  // Read at a fixed slow time, the waveform over one period is the sine times that level:
  // the periodic steady state holds the level over a period.
  for (double t = 100.0; t < 100.02; t += 0.001)
    CHECK(w.value(t, 75.0) == Approx(0.375 * Waveform::sineRms(230.0, 50.0).value(t)));
  // On one clock it follows the schedule.
  CHECK(w.value(100.005) == Approx(0.5 * 230.0 * std::sqrt(2.0)));
  std::vector<double> bp;
  w.breakpoints(0.0, 200.0, bp);
  CHECK(bp == std::vector<double>{60.0, 90.0, 120.0, 121.0});
  CHECK_THROWS_AS(Waveform::dc(1.0).schedule({{0.0, 1.0}, {1.0, -0.5}}), disc::InputError);
  CHECK_THROWS_AS(Waveform::dc(1.0).schedule({{1.0, 1.0}, {1.0, 0.5}}), disc::InputError);
}
