// Solver robustness: step counts independent of chain length, IDA from a hard cold start.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

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
