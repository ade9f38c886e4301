// An instrument output: a rectifier moving-coil meter's reading against the true rms.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "disc/disc.hpp"

using namespace disc;

namespace {

const MeterPoint& atFrequency(const MeterFigures& m, double f) {
  const auto it = std::find_if(m.frequencies.begin(), m.frequencies.end(),
                               [&](const MeterPoint& p) { return p.frequency == f; });
  REQUIRE(it != m.frequencies.end());
  return *it;
}

Netlist example() {
  return loadNetlist(std::string(DISC_NETLIST_DIR) + "/meter-rectifier-cuox.disc");
}

}  // namespace

TEST_CASE("A mean-responding meter on a near-ideal bridge reads the rms of a sine", "[meter]") {
  // A 1000 V range through 1 MOhm: the diodes' 0.6 V drops are 1e-3 of the 1414 V peak. The
  // full-wave rectified mean is 2 Vm / pi = 0.9003 Vrms (Hart, Power Electronics, ch. 4), so a
  // full-scale current of 0.9003 x range / R makes an ideal meter read the rms itself (the form
  // factor of a sine, pi / (2 sqrt 2) = 1.1107). The drops cost about 2 Vd / Vm: 2e-3 allowed.
  const double r = 1e6, range = 1000.0;
  const double fullScale = 2 * std::numbers::sqrt2 / std::numbers::pi * range / r;
  Netlist nl = parseNetlist(
      fmt::format("voltage VIN in gnd sine rms=1000V frequency=50Hz\n"
                  "resistor RMULT in p 999.9k\n"
                  "diode D1 p plus\ndiode D2 gnd plus\ndiode D3 minus p\ndiode D4 minus gnd\n"
                  "resistor RMETER plus minus 100ohm\n"
                  "output plus minus load=RMETER kind=resistive full-scale={}A range=1000V\n"
                  "run periodic\n",
                  fullScale));
  const RunOutcome out = runNetlist(nl);
  REQUIRE(out.report.meter);
  const MeterFigures& m = *out.report.meter;
  // The rms of the sampled period, to the report's 1e-3 (the trapezoidal rule on its steps).
  CHECK(m.atInput.rms == Approx(1000.0).epsilon(1e-3));
  CHECK(m.atInput.reading == Approx(m.atInput.rms).epsilon(2e-3));
  CHECK(m.atInput.reading < m.atInput.rms);  // the drops only lower it
  CHECK(m.atInput.error == Approx((m.atInput.reading - m.atInput.rms) / range));
  // The reading is the definition: range x mean movement current / full-scale current.
  CHECK(m.atInput.reading ==
        Approx(range * std::abs(out.report.output.loadCurrent) / fullScale).epsilon(1e-12));
  // Within class 2.5 (the default): the input verdict is ok.
  const auto part = std::find_if(out.report.parts.begin(), out.report.parts.end(),
                                 [](const PartFigures& p) { return p.kind == "meter"; });
  REQUIRE(part != out.report.parts.end());
  CHECK(part->name == "RMETER");
  CHECK(part->verdicts.front().level == "ok");
  CHECK(part->verdicts.front().limit == Approx(0.025 * range));
}

TEST_CASE("The copper-oxide meter reads low at high frequency and at the bottom of its scale",
          "[meter]") {
  const RunOutcome out = runNetlist(example());
  REQUIRE(out.report.meter);
  const MeterFigures& m = *out.report.meter;
  REQUIRE(m.levels.size() == MeterSweepOptions{}.levels.size());
  REQUIRE(m.frequencies.size() == MeterSweepOptions{}.frequencies.size());
  // Calibrated at full scale at 50 Hz: within its class there.
  CHECK(std::abs(atFrequency(m, 50.0).error) < m.accuracyClass / 100.0);
  const double at50 = atFrequency(m, 50.0).reading;
  // Over the mains and low audio frequencies the discs' capacitance draws about omega C R ~ 1e-3
  // of the current (4 nF per disc against a few hundred ohms), a second-order 1e-6 of the
  // reading; the slow trap branch adds up to about 1e-3 at 25 Hz: 2e-3 allowed.
  for (double f : {25.0, 100.0, 200.0})
    CHECK(atFrequency(m, f).reading == Approx(at50).epsilon(2e-3));
  // Above that the capacitance bypasses the rectification: the reading falls steadily. The
  // trade's figure for copper-oxide instruments is about 0.5 % of reading per kHz (from
  // memory), 5 % at 10 kHz: a factor of 2 either way.
  double last = at50;
  for (double f : {500.0, 1e3, 2e3, 5e3, 1e4, 2e4}) {
    CHECK(atFrequency(m, f).reading < last);
    last = atFrequency(m, f).reading;
  }
  const double drop10k = 1.0 - atFrequency(m, 1e4).reading / at50;
  CHECK(drop10k > 0.025);
  CHECK(drop10k < 0.10);
  // The bottom of a rectifier instrument's scale is cramped: the discs' knee takes a larger
  // share of a small voltage, so the reading falls short there (common practice).
  const MeterPoint& bottom = m.levels.front();
  CHECK(bottom.rms == Approx(0.1 * m.range).epsilon(1e-3));
  CHECK(bottom.reading < bottom.rms);
  CHECK(bottom.error < m.levels.back().error);
  for (std::size_t k = 1; k < m.levels.size(); ++k)
    CHECK(m.levels[k].reading > m.levels[k - 1].reading);
  // The sweep's worst point is judged, and the report names the band within class.
  const auto part = std::find_if(out.report.parts.begin(), out.report.parts.end(),
                                 [](const PartFigures& p) { return p.kind == "meter"; });
  REQUIRE(part != out.report.parts.end());
  REQUIRE(part->verdicts.size() == 2);
  CHECK(part->verdicts[1].figure.starts_with("largest reading error over the range"));
  const std::string text = reportText(out.report);
  CHECK_THAT(text, Catch::Contains("METER"));
  CHECK_THAT(text, Catch::Contains("within class 2.5 from 25.00 Hz to"));
  const std::string json = reportJson(out.report);
  CHECK_THAT(json, Catch::Contains("\"error_of_range\""));
  CHECK_THAT(json, Catch::Contains("\"movement\": \"RMETER\""));
}

TEST_CASE("A meter output is stated whole, with values in range", "[meter][netlist]") {
  const std::string head =
      "voltage VIN in gnd sine rms=10V frequency=50Hz\nresistor R1 in p 10k\n"
      "diode D1 p gnd\nresistor RM p gnd 100\n";
  auto fails = [&](const std::string& output, const std::string& words) {
    INFO(output);
    try {
      parseNetlist(head + output + "run transient stop=0.1s\n");
      FAIL("accepted");
    } catch (const InputError& e) {
      CHECK_THAT(e.what(), Catch::Contains(words));
    }
  };
  fails("output p gnd load=RM full-scale=1mA\n", "needs both full-scale=");
  fails("output p gnd load=RM range=10V\n", "needs both full-scale=");
  fails("output p gnd load=RM full-scale=-1mA range=10V\n", "full-scale must be positive");
  fails("output p gnd load=RM full-scale=1V range=10V\n", "");
  fails("output p gnd load=RM full-scale=1mA range=10V class=50\n", "accuracy class");
  fails("output p gnd load=RM scale=1mA\n", "full-scale=, range= and class=");
  const Netlist ok =
      parseNetlist(head + "output p gnd load=RM full-scale=1mA range=10V class=1.5\n");
  CHECK(ok.output.meter());
  CHECK(ok.output.fullScale == Approx(1e-3));
  CHECK(ok.output.range == Approx(10.0));
  CHECK(ok.output.accuracyClass == Approx(1.5));
  // A plain output is no meter, and a sweep of it is refused.
  const Netlist plain = parseNetlist(head + "output p gnd load=RM\nrun transient stop=0.1s\n");
  CHECK_FALSE(plain.output.meter());
  SupplyReport none;
  CHECK_THROWS_AS(sweepMeter(plain, none), InputError);
}
