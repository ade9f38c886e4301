// Every device's analytic Jacobians (G = di/dx, C = dq/dx) against central finite differences.
#include <catch2/catch.hpp>
#include <map>
#include <random>

#include "disc/disc.hpp"

using namespace disc;

namespace {

void requireJacobianAtX(Circuit& c, const std::vector<double>& x, double t) {
  const JacobianCheck j = checkJacobian(c, x, t);
  INFO("worst entry " << j.worst);
  // Finite differences carry rounding near 1e-7 relative; a wrong sign or factor shows as O(1).
  CHECK(j.maxErrorG < 1e-5);
  CHECK(j.maxErrorC < 1e-5);
  CHECK(j.maxErrorChargesOnly < 1e-14);
}

void requireJacobian(Circuit& c, double spread, double offset = 0.0, double t = 1e-3) {
  std::mt19937 rng(42);
  std::uniform_real_distribution<double> u(-spread, spread);
  const auto names = unknownNames(c);
  for (int trial = 0; trial < 5; ++trial) {
    std::vector<double> x(names.size());
    for (auto& v : x) v = offset + u(rng);
    requireJacobianAtX(c, x, t);
  }
}

}  // namespace

TEST_CASE("Linear elements have exact Jacobians", "[devices][jacobian]") {
  Circuit c;
  const NodeId a = c.node("a"), b = c.node("b"), d = c.node("d");
  c.emplace<Resistor>("R1", a, b, 47.0);
  c.emplace<Capacitor>("C1", b, kGround, 1e-6);
  c.emplace<Inductor>("L1", a, d, 2e-3, 0.5);
  c.emplace<Inductor>("L2", d, kGround, 3e-3);
  c.emplace<Coupling>("K1", "L1", "L2", 0.7);
  c.emplace<VoltageSource>("V1", a, kGround, Waveform::sine(10, 50), 0.3, 1e-3);
  c.emplace<CurrentSource>("I1", b, d, Waveform::dc(1e-3));
  c.emplace<Switch>("S1", b, d, false, std::vector<double>{1e-4, 2e-3});
  requireJacobian(c, 5.0);
}

TEST_CASE("Transformer Jacobian", "[devices][jacobian]") {
  Circuit c;
  TransformerParams p{10.0, 2.0, 0.1, 5e-3, 2e-5, 8.0};
  c.emplace<Transformer>("T1", c.node("p"), kGround, c.node("s1"), c.node("s2"), p);
  c.emplace<Resistor>("R1", c.node("s1"), c.node("s2"), 10.0);
  requireJacobian(c, 3.0);
}

TEST_CASE("Diode Jacobian in reverse, forward, breakdown and high-injection regions",
          "[devices][jacobian]") {
  // Without a transit time the transient takes the charges-only path (no junction law).
  for (double tt : {0.0, 1e-6}) {
    for (double rs : {0.0, 0.5}) {
      for (double rth : {0.0, 40.0}) {
        DiodeParams p;
        p.seriesResistance = rs;
        p.thermalResistance = rth;
        p.transitTime = tt;
        p.junctionCapacitance = 5e-12;
        p.breakdownVoltage = 50.0;
        for (double bias : {-10.0, 0.3, 0.6, -50.5}) {
          Circuit c;
          c.emplace<Diode>("D1", c.node("a"), kGround, p);
          c.emplace<Resistor>("R1", c.node("a"), kGround, 1e3);
          INFO("tt = " << tt << ", rs = " << rs << ", rth = " << rth << ", bias " << bias);
          requireJacobian(c, 0.02, bias);
        }
      }
    }
  }
}

namespace {

/// Jacobian check at points around given values of each unknown (by name; others near 0).
void requireJacobianAt(Circuit& c, const std::map<std::string, std::pair<double, double>>& around,
                       double t = 1e-3) {
  std::mt19937 rng(7);
  std::uniform_real_distribution<double> u(-1.0, 1.0);
  const auto names = unknownNames(c);
  for (int trial = 0; trial < 5; ++trial) {
    std::vector<double> x(names.size());
    for (std::size_t k = 0; k < names.size(); ++k) {
      const auto it = around.find(names[k]);
      const auto [centre, spread] = it == around.end() ? std::pair{0.0, 0.01} : it->second;
      x[k] = centre + spread * u(rng);
    }
    requireJacobianAtX(c, x, t);
  }
}

}  // namespace

TEST_CASE("Lamp Jacobian from a cold to a white-hot filament", "[devices][jacobian]") {
  for (double conduction : {0.0, 0.1}) {
    // Rises of 0, 300 and 2400 K: cold, warm, rated; voltages across the mains range.
    for (double rise : {1.0, 300.0, 2400.0}) {
      for (double v : {-300.0, 10.0, 230.0}) {
        LampParams p;
        p.conduction = conduction;
        Circuit c;
        c.emplace<Lamp>("L1", c.node("a"), c.node("b"), p);
        c.emplace<Resistor>("R1", c.node("b"), kGround, 10.0);
        INFO("conduction " << conduction << ", rise " << rise << " K, v " << v);
        requireJacobianAt(c, {{"a", {v, 0.5}}, {"b", {0.1 * v, 0.5}}, {"L1.temp", {rise, 0.5}}});
      }
    }
  }
}

TEST_CASE("Valve load Jacobian: cold, warming and warm, forward and reversed",
          "[devices][jacobian]") {
  for (double exponent : {1.0, 1.5}) {
    for (double w : {0.0, 0.4, 1.0}) {
      for (double v : {-20.0, 5.0, 250.0}) {
        ValveLoadParams p;
        p.exponent = exponent;
        p.on = 0.5e-3;  // heaters switch on between the check's clock (1 ms) and zero
        Circuit c;
        c.emplace<ValveLoad>("V1", c.node("ht"), kGround, p);
        c.emplace<Resistor>("R1", c.node("ht"), kGround, 1e4);
        INFO("exponent " << exponent << ", w " << w << ", v " << v);
        requireJacobianAt(c, {{"ht", {v, 0.5}}, {"V1.warm", {w, 0.01}}});
      }
    }
  }
}

TEST_CASE("Thermistor Jacobian from cold to hot, both polarities", "[devices][jacobian]") {
  for (double rise : {0.0, 40.0, 150.0}) {
    for (double v : {-200.0, 3.0, 120.0}) {
      ThermistorParams p;
      p.resistance = 10.0;
      p.bConstant = 3500.0;
      Circuit c;
      c.emplace<Thermistor>("TH1", c.node("a"), c.node("b"), p);
      c.emplace<Resistor>("R1", c.node("b"), kGround, 50.0);
      INFO("rise " << rise << " K, v " << v);
      requireJacobianAt(c, {{"a", {v, 0.5}}, {"b", {0.1 * v, 0.5}}, {"TH1.temp", {rise, 0.5}}});
    }
  }
}

TEST_CASE("Electrolytic Jacobian: deformed to formed, charged and reversed",
          "[devices][jacobian]") {
  for (double f : {0.02, 0.5, 1.0}) {
    for (double v : {-5.0, 40.0, 350.0}) {
      ElectrolyticParams p;
      p.forming = f;
      Circuit c;
      c.emplace<Electrolytic>("C1", c.node("a"), kGround, p);
      c.emplace<Resistor>("R1", c.node("a"), kGround, 1e3);
      INFO("forming " << f << ", v " << v);
      requireJacobianAt(c, {{"a", {v, 0.5}}, {"C1.cap", {v, 0.5}}, {"C1.form", {f, 0.01}}});
    }
  }
}
