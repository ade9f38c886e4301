// The warming valve load: its first-order warm-up against the closed form, its space-charge
// law, and the cold-valve HT surge on a reservoir capacitor.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "disc/disc.hpp"

using namespace disc;

namespace {

Result warmUp(const ValveLoadParams& p, double stop) {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("ht"), kGround, Waveform::dc(250.0).gate(0.0));
  c.emplace<ValveLoad>("VL", c.node("ht"), kGround, p);
  TransientOptions o;
  o.stop = stop;
  o.start = Start::Cold;
  o.tol.reltol = 1e-6;
  o.tol.state = 1e-8;
  o.record = {"warm:VL", "i:VL"};
  return transient(c, o);
}

}  // namespace

TEST_CASE("A valve load warms as 1 - exp(-(t - on) / tau) and draws in proportion",
          "[devices][valve]") {
  // The closed form of tau dw/dt = h - w with w(0) = w0, h stepping to 1 at t = on:
  // w = w0 before on, then 1 - (1 - w0) exp(-(t - on) / tau).
  for (auto [on, w0] : {std::pair{0.0, 0.0}, std::pair{10.0, 0.0}, std::pair{0.0, 0.5}}) {
    ValveLoadParams p;
    p.warmUp = 15.0;
    p.on = on;
    p.warmth = w0;
    const Result r = warmUp(p, 80.0);
    INFO("on " << on << " s, starting state " << w0);
    double worst = 0.0, worstCurrent = 0.0;
    const auto& t = r.time();
    for (std::size_t k = 1; k < t.size(); ++k) {
      const double exact = t[k] < on ? w0 : 1.0 - (1.0 - w0) * std::exp(-(t[k] - on) / 15.0);
      worst = std::max(worst, std::abs(r["warm:VL"][k] - exact));
      // At the rated voltage the current is the warm-up state times the rated current.
      worstCurrent = std::max(worstCurrent, std::abs(r["i:VL"][k] - exact * p.ratedCurrent));
    }
    CHECK(worst < 1e-4);
    CHECK(worstCurrent < 1e-4 * p.ratedCurrent);
  }
}

TEST_CASE("A warm valve load follows the space-charge law", "[devices][valve]") {
  // Child (1911) and Langmuir (1913): I = K V^(3/2) under space-charge limitation; at a
  // quarter of the rated voltage the current is an eighth. Exponent 1: Ohm's law.
  for (auto [exponent, fraction] : {std::pair{1.5, 0.125}, std::pair{1.0, 0.25}}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("ht"), kGround, Waveform::dc(62.5));
    ValveLoadParams p;
    p.exponent = exponent;
    c.emplace<ValveLoad>("VL", c.node("ht"), kGround, p);
    OperatingPointOptions o;
    o.record = {"i:VL", "warm:VL"};
    const Result r = operatingPoint(c, o);
    // The operating point is the warm-up's equilibrium: heaters on since t = 0.
    CHECK(r["warm:VL"][0] == Approx(1.0).epsilon(1e-9));
    CHECK(r["i:VL"][0] == Approx(fraction * p.ratedCurrent).epsilon(1e-6));
  }
}

TEST_CASE("Cold valves let the reservoir charge to the crest, then pull it down as they warm",
          "[devices][valve]") {
  // Half-wave silicon rectifier into 50 uF and a 60 mA valve load (warm-up 2 s).
  Circuit c;
  const double crest = std::numbers::sqrt2 * 230.0;
  c.emplace<VoltageSource>("V1", c.node("ac"), kGround, Waveform::sineRms(230.0, 50.0), 2.0);
  c.emplace<Diode>("D1", c.node("ac"), c.node("ht"), DiodeParams{});
  c.emplace<Capacitor>("C1", c.node("ht"), kGround, 50e-6);
  ValveLoadParams p;
  p.ratedCurrent = 0.06;
  p.ratedVoltage = 300.0;
  p.warmUp = 2.0;
  c.emplace<ValveLoad>("VL", c.node("ht"), kGround, p);
  TransientOptions o;
  o.stop = 16.0;
  o.start = Start::Cold;
  o.record = {"v:ht", "i:VL"};
  const Result r = transient(c, o);
  const auto& t = r.time();
  // Cold, nothing but the diode's drop (about a volt) stands between the crest and the HT.
  const double surge = measure::maximum(t, r["v:ht"], 0.0, 0.5);
  CHECK(surge > crest - 2.0);
  CHECK(surge < crest);
  // Warm (8 time constants), it sags between charging pulses by somewhat less than I / (f C)
  // peak to peak (half-wave, J. Millman and C. C. Halkias, Electronic Devices and Circuits,
  // 1967, from memory; an upper bound, as it recharges for part of the cycle), so its mean lies
  // at least half that sag below the crest the cold valves left it at.
  const double i = measure::mean(t, r["i:VL"], 15.0, 16.0);
  const double sag = i / (50.0 * 50e-6);
  CHECK(i > 0.05);
  CHECK(surge - measure::minimum(t, r["v:ht"], 15.0, 16.0) > 0.5 * sag);
  CHECK(surge - measure::mean(t, r["v:ht"], 15.0, 16.0) > 0.25 * sag);
}
