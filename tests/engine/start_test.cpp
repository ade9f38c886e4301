// The start of a transient and its restarts at breakpoints: a first recorded row that satisfies
// the circuit equations, and first steps whose error is checked like every other step.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

namespace {

TransientOptions options(double stop, double reltol) {
  TransientOptions o;
  o.stop = stop;
  o.start = Start::Cold;
  o.tol.reltol = reltol;
  return o;
}

}  // namespace

TEST_CASE("A cold start's first row holds the sources and the currents they drive at t = 0",
          "[engine][start]") {
  // A DC source through a resistor into a discharged capacitor: at t = 0 the capacitor's voltage
  // is still zero (continuity of capacitor voltage), so the whole source voltage is across the
  // resistor and the current is V/R (J. W. Nilsson and S. A. Riedel, Electric Circuits, the
  // natural and step response of RC circuits).
  for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::Ida}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(25.0));
    c.emplace<Resistor>("R1", c.node("in"), c.node("out"), 100.0);
    c.emplace<Capacitor>("C1", c.node("out"), kGround, 1e-6);
    auto o = options(1e-3, 1e-3);
    o.method = m;
    o.record = {"v:in", "v:out", "i:R1", "i:C1"};
    const Result r = transient(c, o);
    INFO(methodName(m));
    REQUIRE(r.time().front() == 0.0);
    CHECK(r["v:in"].front() == Approx(25.0).epsilon(1e-9));
    CHECK(std::abs(r["v:out"].front()) <= 1e-9);
    CHECK(r["i:R1"].front() == Approx(0.25).epsilon(1e-6));
    CHECK(r["i:C1"].front() == Approx(0.25).epsilon(1e-3));
  }
}

TEST_CASE("The first step of an RLC step response is error-checked", "[engine][start]") {
  // Series RLC switched onto 1 V at t = 0: v_C = 1 - exp(-a t)(cos wd t + a/wd sin wd t), which
  // starts as t^2 / (2 L C) (Nilsson and Riedel, the step response of series RLC circuits). A
  // first backward-Euler step that is not checked doubles that start, an offset that never
  // decays. Checked: the points of the first microsecond (where the start dominates) within 1 %
  // wherever the curve is well above the absolute tolerance; the global error of the lightly
  // damped response (ten periods) within 300 tolerances, and falling with the tolerance at the
  // trapezoidal rule's order (local error h^3 against the tolerance, global h^2: error ~
  // tol^(2/3), E. Hairer and G. Wanner, Solving Ordinary Differential Equations II, section IV.8).
  const double L = 1e-3, C = 1e-6, R = 10.0, w0 = 1.0 / std::sqrt(L * C), a = R / (2.0 * L);
  const double wd = std::sqrt(w0 * w0 - a * a);
  auto exact = [&](double t) {
    return 1.0 - std::exp(-a * t) * (std::cos(wd * t) + a / wd * std::sin(wd * t));
  };
  std::vector<double> worstAt;
  for (double reltol : {1e-4, 1e-6}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(1.0).gate(0.0));
    c.emplace<Resistor>("R1", c.node("in"), c.node("a"), R);
    c.emplace<Inductor>("L1", c.node("a"), c.node("b"), L);
    c.emplace<Capacitor>("C1", c.node("b"), kGround, C);
    auto o = options(2e-3, reltol);
    o.tol.voltage = 1e-12;
    o.tol.current = 1e-12;
    o.record = {"v:b"};
    const Result r = transient(c, o);
    const auto& t = r.time();
    const auto& v = r["v:b"];
    double worst = 0.0, worstEarly = 0.0;
    for (std::size_t k = 1; k < t.size(); ++k) {
      worst = std::max(worst, std::abs(v[k] - exact(t[k])));
      if (t[k] < 1e-6 && exact(t[k]) > 1e-9)
        worstEarly = std::max(worstEarly, std::abs(v[k] / exact(t[k]) - 1.0));
    }
    INFO("reltol " << reltol);
    CHECK(worst <= 300.0 * reltol);
    CHECK(worstEarly <= 0.01);
    worstAt.push_back(worst);
  }
  CHECK(worstAt[1] < worstAt[0] / 15.0);  // 100^(2/3) = 21.5
}

TEST_CASE("After a source switches on at a breakpoint the response follows the exact curve",
          "[engine][start]") {
  // An RC charged from a source switched on at 1 ms: v = V (1 - exp(-(t - 1 ms)/RC)) after it,
  // zero before (Nilsson and Riedel). The step landing on the breakpoint sees the source still
  // off, a second row at 1 ms holds it on, and the first steps after it are error-checked.
  const double tau = 1e-4, ton = 1e-3;
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(10.0).gate(ton));
  c.emplace<Resistor>("R1", c.node("in"), c.node("out"), 100.0);
  c.emplace<Capacitor>("C1", c.node("out"), kGround, tau / 100.0);
  auto o = options(2e-3, 1e-6);
  o.tol.voltage = 1e-10;
  o.record = {"v:in", "v:out"};
  const Result r = transient(c, o);
  const auto& t = r.time();
  std::size_t rows = 0;
  double worst = 0.0;
  for (std::size_t k = 0; k < t.size(); ++k) {
    if (std::abs(t[k] - ton) <= 1e-15) ++rows;
    const double expected = t[k] <= ton ? 0.0 : 10.0 * (1.0 - std::exp(-(t[k] - ton) / tau));
    worst = std::max(worst, std::abs(r["v:out"][k] - expected));
  }
  CHECK(rows == 2);  // the left and the right limit
  CHECK(worst <= 1e-4 * 10.0);
}
