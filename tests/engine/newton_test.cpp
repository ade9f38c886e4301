// Solver robustness: step counts independent of chain length, IDA from a hard cold start.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"
#include "engine/system.hpp"

using namespace disc;

namespace {

struct LadderRun {
  RunStats stats;
  double peakPerDiode = 0.0;  // largest output voltage divided by the number of diodes
};

LadderRun runLadder(int diodes) {
  Circuit c = reference::diodeLadder(diodes);
  TransientOptions o;
  o.stop = 0.02;
  o.method = Method::Bdf2;
  o.start = Start::Cold;
  const std::string out = reference::outputNode("ladder-" + std::to_string(diodes));
  o.record = {"v:" + out};
  const Result r = transient(c, o);
  const auto& v = r["v:" + out];
  LadderRun run;
  run.stats = r.stats();
  run.peakPerDiode = *std::max_element(v.begin(), v.end()) / diodes;
  return run;
}

}  // namespace

TEST_CASE("A chain of 10000 junctions takes the steps of a chain of 1000", "[engine][newton]") {
  // The ladder scales exactly: N identical diodes, a source of 1.5 N V and a load of N ohm give
  // every diode the same current whatever N (Kirchhoff's laws), so the output per diode and the
  // steps the error control needs are the same. At long steps in reverse bias the 10000-diode
  // chain's weakest mode is lost to round-off in a fresh factorisation; Newton must still
  // converge there (it diverged, and the run took 107 + 16 steps against 80 + 4, before the
  // factors of the previous step were reused).
  const LadderRun small = runLadder(1000);
  const LadderRun large = runLadder(10000);
  CHECK(large.stats.acceptedSteps <= small.stats.acceptedSteps + small.stats.acceptedSteps / 10);
  CHECK(large.stats.rejectedSteps <= small.stats.rejectedSteps + 2);
  CHECK(large.peakPerDiode == Approx(small.peakPerDiode).epsilon(2e-3));
  CHECK(small.peakPerDiode > 0.5);  // conducting: 1.5 V peak per diode less one junction drop
}

TEST_CASE("IDA starts a cold switch-on under tight absolute tolerances", "[engine][ida]") {
  // The Shockley bridge's inputs sit behind 1 ohm and 10 nF: at t = 0 they accelerate at about
  // 6e11 V/s^2, so with 1e-10 V and A the first step needs more than IDA's default ten
  // error-test failures to find its size. The result must agree with the trapezoidal rule.
  auto run = [](Method m) {
    Circuit c = reference::build("shockley-bridge");
    TransientOptions o;
    o.stop = 0.02;
    o.method = m;
    o.start = Start::Cold;
    o.tol.reltol = 1e-6;
    o.tol.voltage = 1e-10;
    o.tol.current = 1e-10;
    o.record = {"v:out"};
    const Result r = transient(c, o);
    return r["v:out"].back();
  };
  double ida = 0.0;
  REQUIRE_NOTHROW(ida = run(Method::Ida));
  CHECK(ida == Approx(run(Method::Trapezoidal)).epsilon(1e-4));
  CHECK(ida > 10.0);  // charged towards the 20 V peak less two junction drops
}

TEST_CASE("Junctions between two nodes are measured from the devices' declared pairs",
          "[engine][newton]") {
  // Two diodes with series resistance in a tall chain: each junction lies between an internal
  // node and the next chain node, high above ground. Newton's junction measure must be the
  // largest |dv| / (reltol max(|v|, |v - dv|) + vabstol) over both junctions (common practice
  // in circuit engines: the same test as for the unknowns, applied to the junction voltage).
  Circuit c;
  const NodeId a = c.node("a"), m = c.node("m"), k = c.node("k");
  c.emplace<VoltageSource>("V1", a, kGround, Waveform::dc(1000.0));
  DiodeParams d;
  d.seriesResistance = 1.0;
  c.emplace<Diode>("D1", a, m, d);
  c.emplace<Diode>("D2", m, k, d);
  c.emplace<Resistor>("R1", k, kGround, 1000.0);
  detail::System sys(c);
  const int n = sys.size();
  const auto index = [&](const std::string& name) {
    for (int u = 0; u < n; ++u)
      if (sys.unknownName(u) == name) return u;
    FAIL("no unknown " << name);
    return -1;
  };
  std::vector<double> x(static_cast<std::size_t>(n) + 1, 0.0), dx(x.size(), 0.0);
  const auto at = [](int u) { return static_cast<std::size_t>(u); };
  x[at(sys.unknownOfNode(a))] = 1000.0;
  x[at(index("D1.j"))] = 999.9;
  x[at(sys.unknownOfNode(m))] = 999.2;
  x[at(index("D2.j"))] = 999.1;
  x[at(sys.unknownOfNode(k))] = 998.45;
  // The update that led there: D1's junction moved by 2 mV, D2's by 5 mV.
  dx[at(index("D1.j"))] = 0.003;
  dx[at(sys.unknownOfNode(m))] = 0.001;
  dx[at(index("D2.j"))] = 0.004;
  dx[at(sys.unknownOfNode(k))] = -0.001;
  EvalContext ctx;
  ctx.x = x.data();
  ctx.reltol = 1e-3;
  ctx.vabstol = 1e-6;
  const auto measure = [&](double v, double dv) {
    return std::abs(dv) / (1e-3 * std::max(std::abs(v), std::abs(v - dv)) + 1e-6);
  };
  const double d1 = measure(999.9 - 999.2, 0.002), d2 = measure(999.1 - 998.45, 0.005);
  double step = 0.0, remainder = 0.0;
  sys.junctionMeasures(ctx, dx.data(), step, remainder);
  CHECK(step == Approx(std::max(d1, d2)).epsilon(1e-12));
  // The second-order remainder of the larger movement, dv^2 / (2 n kT/q) in tolerances, with
  // the scale the diode declares: n kT/q at three quarters of its temperature (the circuit's
  // ambient here).
  const double nvt = d.ideality * constants::thermalVoltage(0.75 * c.ambient());
  CHECK(remainder == Approx(d2 * 0.005 / (2 * nvt)).epsilon(1e-9));
  CHECK(d2 > d1);
}

TEST_CASE("An exact Newton step with a second-order remainder within tolerance ends the solve",
          "[engine][newton]") {
  // After a step with the Jacobian evaluated at the iterate, Newton's error is of second order
  // in the update (quadratic convergence; e.g. J. Stoer and R. Bulirsch, Introduction to
  // Numerical Analysis, section on Newton's method, from memory). At tight tolerances the
  // predictor leaves updates that small, so most time steps need one iteration, not two, and
  // the answer must be as accurate as if the step had been confirmed: the mean output over the
  // last cycle agrees with a run a thousand times tighter to within 2e-5 (6.9e-6 both with a
  // confirming iteration on every step and with the shortcut).
  auto run = [](double reltol) {
    Circuit c = reference::build("shockley-bridge");
    TransientOptions o;
    o.stop = 0.1;
    o.method = Method::Trapezoidal;
    o.start = Start::Cold;
    o.tol.reltol = reltol;
    o.record = {"v:out"};
    const Result r = transient(c, o);
    return std::make_pair(measure::mean(r.time(), r["v:out"], 0.08, 0.1), r.stats());
  };
  const auto [mean, stats] = run(1e-6);
  const auto [reference, unused] = run(1e-9);
  (void)unused;
  const double attempts = static_cast<double>(stats.acceptedSteps + stats.rejectedSteps);
  CHECK(static_cast<double>(stats.newtonIterations) < 1.3 * attempts);
  CHECK(mean == Approx(reference).epsilon(2e-5));
}
