// DC operating point.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

TEST_CASE("Resistive divider (Ohm's and Kirchhoff's laws)", "[engine][op]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(12.0));
  c.emplace<Resistor>("R1", c.node("in"), c.node("mid"), 1e3);
  c.emplace<Resistor>("R2", c.node("mid"), kGround, 2e3);
  const Result r = operatingPoint(c);
  CHECK(r["v:mid"][0] == Approx(8.0).epsilon(1e-6));
  // The "i" of a source is the current from its + terminal through it: -4 mA when delivering.
  CHECK(r["i:V1"][0] == Approx(-4e-3).epsilon(1e-6));
}

TEST_CASE("Diode and resistor: the Shockley law solved independently by bisection",
          "[engine][op]") {
  DiodeParams p;
  p.seriesResistance = 0.0;
  p.temperature = 300.0;
  p.referenceTemperature = 300.0;
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(5.0));
  c.emplace<Resistor>("R1", c.node("in"), c.node("a"), 100.0);
  c.emplace<Diode>("D1", c.node("a"), kGround, p);
  OperatingPointOptions o;
  o.tol.reltol = 1e-9;
  const Result r = operatingPoint(c, o);
  // Shockley: I = Is (exp(V / (n kT/q)) - 1) (S. M. Sze and K. K. Ng, Physics of Semiconductor
  // Devices, 3rd ed.), plus the 1 pS junction shunt and breakdown term of the model.
  const double nvt = p.ideality * constants::thermalVoltage(300.0);
  double lo = 0.0, hi = 5.0;
  for (int k = 0; k < 200; ++k) {
    const double v = 0.5 * (lo + hi);
    // 1 pS junction shunt plus the 1 pS node-to-gnd conductance of the operating point.
    const double id = p.saturationCurrent * (std::exp(v / nvt) - 1.0) + 2e-12 * v -
                      p.breakdownCurrent * std::exp(-(v + p.breakdownVoltage) / nvt);
    ((5.0 - v) / 100.0 > id ? lo : hi) = v;
  }
  CHECK(r["v:a"][0] == Approx(0.5 * (lo + hi)).epsilon(1e-6));
}

TEST_CASE("Transformer passes no DC", "[engine][op]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("p"), kGround, Waveform::dc(1.0), 0.0);
  c.emplace<Resistor>("RP", c.node("p"), c.node("w"), 10.0);
  c.emplace<Transformer>("T1", c.node("w"), kGround, c.node("s"), kGround,
                         TransformerParams{2.0, 1.0, 1.0, 0, 0, 1.0});
  c.emplace<Resistor>("RL", c.node("s"), kGround, 5.0);
  const Result r = operatingPoint(c);
  CHECK(r["v:s"][0] == Approx(0.0).margin(1e-9));
  CHECK(r["v:w"][0] == Approx(1.0 / 11.0).epsilon(1e-9));
}

namespace {

OperatingPointOptions strategies(bool gminStepping, bool sourceStepping, int maxIterations) {
  OperatingPointOptions o;
  o.gminStepping = gminStepping;
  o.sourceStepping = sourceStepping;
  o.maxIterations = maxIterations;
  o.tol.reltol = 1e-9;
  return o;
}

/// The diodes' parameter reference temperature, so that their Is is the given one.
constexpr double kStringTemperature = 300.15;

/// n default silicon diodes in series from `volts` through `ohms` to gnd (nodes n0 ... n(n-1)).
Circuit diodeString(int n, double volts, double ohms) {
  Circuit c;
  c.setAmbient(kStringTemperature);
  c.emplace<VoltageSource>("V1", c.node("s"), kGround, Waveform::dc(volts));
  c.emplace<Resistor>("R1", c.node("s"), c.node("n0"), ohms);
  // Names built by append: GCC 12 warns falsely (-Wstringop-overflow) on "x" + std::to_string.
  const auto named = [](char prefix, int k) {
    return std::string(1, prefix).append(std::to_string(k));
  };
  for (int k = 1; k <= n; ++k)
    c.emplace<Diode>(named('D', k), c.node(named('n', k - 1)),
                     k == n ? kGround : c.node(named('n', k)));
  return c;
}

/// The string's current by bisection on V = I R + n (n_e kT/q ln(1 + I/Is) + I rs): the
/// Shockley law with series resistance (Sze and Ng), written here again; the 1 pS junction
/// shunts and the 1 pS gmin change the answer by about 1e-9.
double stringCurrent(int n, double volts, double ohms) {
  const DiodeParams d;
  const double nvt = d.ideality * constants::thermalVoltage(kStringTemperature);
  double lo = 0.0, hi = volts / ohms;
  for (int k = 0; k < 300; ++k) {
    const double i = 0.5 * (lo + hi);
    const double v =
        i * ohms + n * (nvt * std::log1p(i / d.saturationCurrent) + i * d.seriesResistance);
    (v < volts ? lo : hi) = i;
  }
  return 0.5 * (lo + hi);
}

}  // namespace

// With the operating point's Newton iterations capped at 10 per solve, the two strings below
// cannot be solved by plain Newton from zero: each test shows that failure first, then that
// the strategy named in its title finds the answer (checked against the bisection above).
TEST_CASE("gmin stepping solves what plain Newton cannot (5 diodes, 5 V, 10 kOhm)",
          "[engine][op]") {
  const int n = 5;
  const double volts = 5.0, ohms = 1e4;
  {
    Circuit c = diodeString(n, volts, ohms);
    CHECK_THROWS_AS(operatingPoint(c, strategies(false, false, 10)), ConvergenceError);
  }
  Circuit c = diodeString(n, volts, ohms);
  const Result r = operatingPoint(c, strategies(true, false, 10));
  const double i = stringCurrent(n, volts, ohms);
  CHECK(r["i:R1"][0] == Approx(i).epsilon(1e-6));
  CHECK(r["v:n0"][0] == Approx(volts - i * ohms).epsilon(1e-6));
}

TEST_CASE(
    "Source stepping solves what plain Newton and gmin stepping cannot (5 diodes, 5 V, "
    "10 mOhm)",
    "[engine][op]") {
  // A low-impedance string: the gmin conductances (at most 1e-2 S) are negligible beside it,
  // so gmin stepping starts from the same hard problem; ramping the source does not.
  const int n = 5;
  const double volts = 5.0, ohms = 0.01;
  for (bool gmin : {false, true}) {
    Circuit c = diodeString(n, volts, ohms);
    CHECK_THROWS_AS(operatingPoint(c, strategies(gmin, false, 10)), ConvergenceError);
  }
  Circuit c = diodeString(n, volts, ohms);
  const Result r = operatingPoint(c, strategies(true, true, 10));
  const double i = stringCurrent(n, volts, ohms);
  INFO("string current " << i << " A");
  CHECK(r["i:R1"][0] == Approx(i).epsilon(1e-6));
  CHECK(r["v:n0"][0] == Approx(volts - i * ohms).epsilon(1e-6));
}
