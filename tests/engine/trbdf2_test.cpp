// TR-BDF2 (R. E. Bank et al., IEEE Trans. CAD 4(4), 1985; M. E. Hosea and L. F. Shampine,
// Appl. Numer. Math. 20, 1996): its order, its damping of stiff modes and the convergence of
// its results with the tolerance, against the closed forms of J. W. Nilsson and S. A. Riedel,
// Electric Circuits (first- and second-order step responses).
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

namespace {

// Series RLC, 1 V step, underdamped (R = 10 ohm, L = 1 mH, C = 1 uF): v_C(t).
double rlcExact(double t) {
  const double L = 1e-3, C = 1e-6, R = 10.0, w0 = 1.0 / std::sqrt(L * C), a = R / (2.0 * L);
  const double wd = std::sqrt(w0 * w0 - a * a);
  return 1.0 - std::exp(-a * t) * (std::cos(wd * t) + a / wd * std::sin(wd * t));
}

Circuit rlc() {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(1.0).gate(0.0));
  c.emplace<Resistor>("R1", c.node("in"), c.node("a"), 10.0);
  c.emplace<Inductor>("L1", c.node("a"), c.node("b"), 1e-3);
  c.emplace<Capacitor>("C1", c.node("b"), kGround, 1e-6);
  return c;
}

double worstRlcError(const Result& r) {
  double worst = 0.0;
  for (std::size_t k = 0; k < r.time().size(); ++k)
    worst = std::max(worst, std::abs(r["v:b"][k] - rlcExact(r.time()[k])));
  return worst;
}

// Every step of size h: tolerances so loose that no step is rejected or resized.
TransientOptions fixedStep(Method m, double stop, double h) {
  TransientOptions o;
  o.stop = stop;
  o.method = m;
  o.start = Start::Cold;
  o.maxStep = h;
  o.initialStep = h;
  o.tol.reltol = 0.04;
  o.tol.voltage = 10.0;
  o.tol.current = 10.0;
  return o;
}

}  // namespace

TEST_CASE("TR-BDF2 is second order: halving a fixed step quarters the error", "[engine][trbdf2]") {
  // Hairer and Wanner (Solving ODEs II, section IV.3) for the order of one-step methods; the
  // error against the closed form falls as h^2 (ratio 4 per halving).
  double previous = 0.0;
  for (double h : {8e-6, 4e-6, 2e-6}) {
    auto o = fixedStep(Method::TrBdf2, 2e-3, h);
    o.record = {"v:b"};
    const Result r = transient(rlc(), o);
    REQUIRE(r.stats().rejectedSteps == 0);
    const double err = worstRlcError(r);
    INFO("h = " << h << ": error " << err << ", previous " << previous);
    if (previous > 0.0) {
      CHECK(previous / err > 3.3);
      CHECK(previous / err < 4.8);
    }
    previous = err;
  }
}

TEST_CASE("TR-BDF2 damps a stiff mode the trapezoidal rule rings on", "[engine][trbdf2]") {
  // A 10 V step into 1 ohm and 1 uF (time constant 1 us) taken in steps of 100 us: the
  // trapezoidal rule multiplies the error by (1 - h/2tau)/(1 + h/2tau) = -0.96 per step (it
  // alternates and barely decays), TR-BDF2 by its stability function at -100, -0.044
  // (L-stable: zero at infinity). The first step after the step in the source is backward
  // Euler in both, leaving 10/101 V.
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(10.0).gate(0.0));
  c.emplace<Resistor>("R1", c.node("in"), c.node("out"), 1.0);
  c.emplace<Capacitor>("C1", c.node("out"), kGround, 1e-6);
  auto residue = [&](Method m) {
    auto o = fixedStep(m, 2e-3, 1e-4);
    o.record = {"v:out"};
    const Result r = transient(c, o);
    double worst = 0.0;  // over the last half of the run
    for (std::size_t k = 0; k < r.time().size(); ++k)
      if (r.time()[k] >= 1e-3) worst = std::max(worst, std::abs(r["v:out"][k] - 10.0));
    return worst;
  };
  const double trap = residue(Method::Trapezoidal), trbdf2 = residue(Method::TrBdf2);
  INFO("trapezoidal " << trap << " V, TR-BDF2 " << trbdf2 << " V");
  CHECK(trap > 1e-2);
  CHECK(trbdf2 < 1e-9);
}

TEST_CASE("TR-BDF2's error falls with the tolerance at the method's order", "[engine][trbdf2]") {
  // A second-order method whose step keeps the local error (h^3) at the tolerance: the global
  // error goes as reltol^(2/3), 1.59 times less per halving (Hairer and Wanner, Solving ODEs
  // I, section II.4, on error per step). Halving and quartering on the RLC step.
  double err[3];
  const double tols[3] = {1e-4, 5e-5, 2.5e-5};
  for (int k = 0; k < 3; ++k) {
    TransientOptions o;
    o.stop = 2e-3;
    o.method = Method::TrBdf2;
    o.start = Start::Cold;
    o.tol.reltol = tols[k];
    o.tol.voltage = 1e-12;
    o.tol.current = 1e-12;
    o.record = {"v:b"};
    err[k] = worstRlcError(transient(rlc(), o));
  }
  INFO("errors " << err[0] << ", " << err[1] << ", " << err[2]);
  CHECK(err[0] / err[1] > 1.25);
  CHECK(err[0] / err[1] < 2.1);
  CHECK(err[0] / err[2] > 1.8);
  CHECK(err[0] / err[2] < 3.6);
}
