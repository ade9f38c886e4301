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

TEST_CASE("Hard operating points converge by stepping", "[engine][op]") {
  // A long series string of diodes at high voltage starts far from the answer.
  Circuit c = reference::diodeLadder(200);
  OperatingPointOptions o;
  o.maxIterations = 20;
  const Result r = operatingPoint(c, o);
  CHECK(std::isfinite(r["v:n200"][0]));
  CHECK(r["v:n200"][0] == Approx(0.0).margin(1e-6));  // the sine source is zero at t = 0
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
