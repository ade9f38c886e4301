// Linear transients against their exact solutions (J. W. Nilsson and S. A. Riedel, Electric
// Circuits, chapters on first- and second-order circuits): relative error at most 1e-4 of the
// step amplitude, for every integration method.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

namespace {

TransientOptions tight(Method m, double stop) {
  TransientOptions o;
  o.stop = stop;
  o.method = m;
  o.start = Start::Cold;
  o.tol.reltol = 1e-7;
  o.tol.voltage = 1e-9;
  o.tol.current = 1e-12;
  return o;
}

template <class Exact>
double worstError(const Result& r, const std::string& signal, Exact exact) {
  double worst = 0.0;
  const auto& t = r.time();
  const auto& y = r[signal];
  for (std::size_t k = 1; k < t.size(); ++k) worst = std::max(worst, std::abs(y[k] - exact(t[k])));
  return worst;
}

Waveform step(double v) {
  return Waveform::dc(v).gate(0.0);
}

}  // namespace

TEST_CASE("RC step response matches v = V (1 - exp(-t/RC))", "[engine][linear]") {
  for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::TrBdf2, Method::Ida}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("in"), kGround, step(10.0));
    c.emplace<Resistor>("R1", c.node("in"), c.node("out"), 1e3);
    c.emplace<Capacitor>("C1", c.node("out"), kGround, 1e-6);
    auto o = tight(m, 5e-3);
    o.record = {"v:out"};
    const Result r = transient(c, o);
    INFO(methodName(m));
    CHECK(worstError(r, "v:out", [](double t) { return 10.0 * (1.0 - std::exp(-t / 1e-3)); }) <=
          1e-4 * 10.0);
  }
}

TEST_CASE("RL step response matches i = V/R (1 - exp(-t R/L))", "[engine][linear]") {
  for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::TrBdf2, Method::Ida}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("in"), kGround, step(10.0));
    c.emplace<Resistor>("R1", c.node("in"), c.node("mid"), 10.0);
    c.emplace<Inductor>("L1", c.node("mid"), kGround, 10e-3);
    auto o = tight(m, 5e-3);
    o.record = {"i:L1"};
    const Result r = transient(c, o);
    INFO(methodName(m));
    CHECK(worstError(r, "i:L1", [](double t) { return 1.0 * (1.0 - std::exp(-t * 1e3)); }) <= 1e-4);
  }
}

TEST_CASE("Series RLC step response, under- and over-damped", "[engine][linear]") {
  const double L = 1e-3, C = 1e-6, w0 = 1.0 / std::sqrt(L * C);
  for (double R : {10.0, 200.0}) {
    const double a = R / (2.0 * L);
    auto exact = [&](double t) {
      if (a < w0) {
        const double wd = std::sqrt(w0 * w0 - a * a);
        return 1.0 - std::exp(-a * t) * (std::cos(wd * t) + a / wd * std::sin(wd * t));
      }
      const double d = std::sqrt(a * a - w0 * w0), s1 = -a + d, s2 = -a - d;
      return 1.0 + (s2 * std::exp(s1 * t) - s1 * std::exp(s2 * t)) / (s1 - s2);
    };
    for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::TrBdf2, Method::Ida}) {
      Circuit c;
      c.emplace<VoltageSource>("V1", c.node("in"), kGround, step(1.0));
      c.emplace<Resistor>("R1", c.node("in"), c.node("a"), R);
      c.emplace<Inductor>("L1", c.node("a"), c.node("b"), L);
      c.emplace<Capacitor>("C1", c.node("b"), kGround, C);
      auto o = tight(m, 2e-3);
      o.record = {"v:b"};
      const Result r = transient(c, o);
      INFO(methodName(m) << " R = " << R);
      CHECK(worstError(r, "v:b", exact) <= 1e-4);
    }
  }
}

TEST_CASE("Coupled inductors transfer a step with the ideal-transformer ratio",
          "[engine][linear]") {
  // Two windings with k close to 1: the secondary open-circuit voltage is M/L1 times the primary
  // (Nilsson and Riedel, magnetically coupled circuits).
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("p"), kGround, Waveform::sine(10.0, 50.0));
  c.emplace<Inductor>("L1", c.node("p"), kGround, 1.0, 0.0);
  c.emplace<Inductor>("L2", c.node("s"), kGround, 0.25, 0.0);
  c.emplace<Resistor>("RS", c.node("s"), kGround, 1e9);
  c.emplace<Coupling>("K1", "L1", "L2", 0.99);
  auto o = tight(Method::Bdf2, 0.04);
  o.record = {"v:p", "v:s"};
  const Result r = transient(c, o);
  const double ratio = 0.99 * std::sqrt(0.25 / 1.0);
  double worst = 0.0;
  for (std::size_t k = 0; k < r.time().size(); ++k)
    worst = std::max(worst, std::abs(r["v:s"][k] - ratio * r["v:p"][k]));
  CHECK(worst <= 1e-4 * 10.0);
}
