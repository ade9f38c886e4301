// The analyses' numeric settings: one table of ranges for the netlist and the bindings, the
// stack's seed range in the netlist, and a signal asked for twice recorded once.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include <disc/analysis_settings.hpp>
#include <disc/disc.hpp>

using namespace disc;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kInf = std::numeric_limits<double>::infinity();

}  // namespace

TEST_CASE("checkSetting refuses each setting out of its range, NaN and infinities included",
          "[settings]") {
  // Inside: returned as given.
  CHECK(checkSetting("reltol", 1e-6) == 1e-6);
  CHECK(checkSetting("abstol", 1e-3) == 1e-3);  // its upper end is allowed
  CHECK(checkSetting("temperature-abstol", 1.0) == 1.0);
  CHECK(checkSetting("temperature-abstol", 10.0, "warm-up") == 10.0);
  CHECK(checkSetting("periodic-reltol", 1e-4) == 1e-4);
  CHECK(checkSetting("max-steps", 1.0) == 1.0);
  // Outside, each with the range in the message.
  for (double v : {0.0, -1e-3, 0.1, 0.5, kNaN, kInf, -kInf}) {
    INFO(v);
    CHECK_THROWS_WITH(checkSetting("reltol", v),
                      Catch::Contains("reltol must lie between 0 and 0.1"));
    CHECK_THROWS_AS(checkSetting("periodic-reltol", v), InputError);
  }
  for (double v : {0.0, 2e-3, 1e10, kNaN, kInf})
    CHECK_THROWS_WITH(checkSetting("abstol", v),
                      Catch::Contains("abstol must lie above 0 and at most 0.001"));
  // A transient's temperature floor is at most 1 K, a warm-up's at most 10 K.
  for (double v : {0.0, 1.5, kNaN})
    CHECK_THROWS_WITH(checkSetting("temperature-abstol", v),
                      Catch::Contains("temperature-abstol (K) must lie above 0 and at most 1,"));
  for (double v : {0.0, 11.0, kNaN})
    CHECK_THROWS_WITH(checkSetting("temperature-abstol", v, "warm-up"),
                      Catch::Contains("at most 10"));
  for (double v : {0.0, -5.0, 1e12, kNaN, kInf})
    CHECK_THROWS_WITH(checkSetting("max-steps", v),
                      Catch::Contains("max-steps must lie between 1 and 1000000000"));
  // The budget is a whole number of steps, rounded up.
  CHECK(stepBudget(2.5) == 3);
  CHECK(stepBudget(1e9) == RunLimits::kMaxSteps);
  CHECK_THROWS_AS(stepBudget(kNaN), InputError);
  // A name not in the table is the program's mistake, not the user's.
  CHECK_THROWS_AS(checkSetting("no-such-setting", 1.0), Error);
  CHECK_FALSE(analysisSettings().empty());
}

TEST_CASE("The parser refuses the settings by the same table, at the value", "[settings]") {
  const std::string net = "voltage V1 a gnd dc=1V\nresistor R1 a gnd 1k\n";
  CHECK_THROWS_WITH(parseNetlist(net + "run transient stop=1ms reltol=0.2\n"),
                    Catch::Contains("reltol must lie between 0 and 0.1, got 0.2"));
  CHECK_THROWS_WITH(parseNetlist(net + "run transient stop=1ms abstol=1\n"),
                    Catch::Contains("abstol must lie above 0 and at most 0.001, got 1"));
  CHECK_THROWS_WITH(parseNetlist(net + "run transient stop=1ms temperature-abstol=2\n"),
                    Catch::Contains("at most 1, got 2"));
  CHECK_THROWS_WITH(parseNetlist(net + "run transient stop=1ms max-steps=0\n"),
                    Catch::Contains("max-steps must lie between 1 and"));
  CHECK_THROWS_WITH(parseNetlist(net + "run warm-up duration=1h temperature-abstol=20\n"),
                    Catch::Contains("at most 10, got 20"));
  CHECK_THROWS_WITH(parseNetlist(net + "run warm-up duration=1h periodic-reltol=0.1\n"),
                    Catch::Contains("periodic-reltol must lie between 0 and 0.1"));
  const Netlist ok = parseNetlist(net + "run transient stop=1ms max-steps=100.5 reltol=1e-5\n");
  CHECK(ok.analyses.back().transient.maxSteps == 101);  // rounded up
  CHECK(ok.analyses.back().transient.tol.reltol == 1e-5);
}

TEST_CASE("A stack's seed is refused past its range, never wrapped", "[settings]") {
  const std::string net =
      "voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor RL b gnd 1k\n"
      "stack SR1 a b type=cuox-3mm-instrument spread=0.1 seed=";
  CHECK_NOTHROW(parseNetlist(net + std::to_string(kMaxStackSeed) + "\n"));
  CHECK_THROWS_WITH(parseNetlist(net + std::to_string(kMaxStackSeed + 1) + "\n"),
                    Catch::Contains("seed must be a whole number from 0 to 1000000000"));
  CHECK_THROWS_WITH(parseNetlist(net + "1e20\n"), Catch::Contains("seed must be a whole number"));
  CHECK_THROWS_AS(parseNetlist(net + "2.5\n"), InputError);
}

TEST_CASE("runSignals records a signal asked for twice once, where it is first named",
          "[settings]") {
  const Netlist nl = parseNetlist(
      "voltage V1 a gnd dc=1V\nresistor R1 a b 1k\nresistor R2 b gnd 1k\nrecord v:b i:R1\n");
  const auto signals = runSignals(nl, {"v:a", "v:b", "v:a"});
  CHECK(signals == std::vector<std::string>{"v:a", "v:b", "i:R1"});
  // The run then has one column per signal, each with its own values.
  TransientOptions o;
  o.stop = 1e-3;
  o.record = signals;
  const Result r = transient(nl.circuit, o);
  CHECK(r.signals() == signals);
  CHECK(r["v:a"].back() == Approx(1.0));
  CHECK(r["v:b"].back() == Approx(0.5));
}
