// Source waveforms.
#include <catch2/catch.hpp>
#include <cmath>

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
