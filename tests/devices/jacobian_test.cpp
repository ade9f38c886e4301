// Every device's analytic Jacobians (G = di/dx, C = dq/dx) against central finite differences.
#include <catch2/catch.hpp>
#include <random>

#include "disc/disc.hpp"

using namespace disc;

namespace {

void requireJacobian(Circuit& c, double spread, double offset = 0.0, double t = 1e-3) {
  std::mt19937 rng(42);
  std::uniform_real_distribution<double> u(-spread, spread);
  const auto names = unknownNames(c);
  for (int trial = 0; trial < 5; ++trial) {
    std::vector<double> x(names.size());
    for (auto& v : x) v = offset + u(rng);
    const JacobianCheck j = checkJacobian(c, x, t);
    INFO("worst entry " << j.worst);
    // Finite differences carry rounding near 1e-7 relative; a wrong sign or factor shows as O(1).
    CHECK(j.maxErrorG < 1e-5);
    CHECK(j.maxErrorC < 1e-5);
    CHECK(j.maxErrorChargesOnly < 1e-14);
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
