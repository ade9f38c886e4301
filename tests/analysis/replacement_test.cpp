// Silicon replacement design: the dropping resistor found with the transient engine in the
// loop, against the worked example of docs/sources.md (silicon replacement: derived from
// Schade's large-capacitor limit) and against the netlist's own output.
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <iterator>

#include "disc/devices/diode.hpp"
#include "disc/netlist.hpp"
#include "disc/preferred_values.hpp"
#include "disc/replacement.hpp"
#include "disc/session.hpp"

namespace {

// The worked example (docs/sources.md, silicon replacement): half-wave, 117 V rms, R_L = 1500 ohm,
// 10 ohm surge resistor, 5 plates of 0.5 V threshold and 2 ohm slope, silicon 0.8 V, large C. The
// plates are given a sharp knee (n = 1) whose drop is 0.5 V near the conduction current, 2 ohm of
// bulk resistance, and no leakage, charge or temperature dependence; the silicon diode likewise
// drops 0.8 V there.
const char* const kWorkedExample = R"(title "dropping-resistor worked example"
ambient 26.85degC
plate-type knee05 base=se-25mm-square ideality=1 js0_A_per_cm2=3.5e-10 rs_ohm_cm2=10 \
    gsh_S_per_cm2=1e-12 c0_F_per_cm2=0 trap_c_F_per_cm2=0 rs_activation_eV=0 breakdown_V=400
voltage MAINS line gnd mains rms=117V frequency=60Hz
resistor RSURGE line a 10ohm
stack SR1 a out type=knee05 plates=5
capacitor C1 out gnd 4700uF
resistor RL out gnd 1500ohm
output out gnd load=RL
run transient stop=6s
)";

bool inSeries(double value, disc::ESeries series) {
  const double decade = std::pow(10.0, std::floor(std::log10(value) + 1e-12));
  for (double v : disc::seriesDecade(series))
    if (std::abs(v * decade - value) <= 1e-9 * value) return true;
  return false;
}

}  // namespace

TEST_CASE("replace: the worked dropping-resistor example", "[analysis][replace]") {
  disc::ReplaceOptions o;
  o.stacks = {"SR1"};
  o.diode =
      "saturation-current=1.5e-14 ideality=1 series-resistance=0 junction-capacitance=0";  // 0.8 V
                                                                                           // near
                                                                                           // 0.5 A
  o.loadFractions = {1.0};
  const auto d = disc::designReplacement(kWorkedExample, "worked-example.disc", o);
  // Selenium 144.2 V, silicon 152.3 V (derived, docs/sources.md).
  CHECK(d.target == Approx(144.2).epsilon(0.01));
  // +8.14 V without the resistor, 12.67 ohm with it (derived); within 5 %.
  CHECK(d.siliconAlone - d.target == Approx(8.14).epsilon(0.05));
  CHECK(d.resistorExact == Approx(12.67).epsilon(0.05));
  // The resistor reproduces the original output within 0.5 % (the issue's requirement).
  CHECK(std::abs(d.outputExact / d.target - 1.0) <= 0.005);
  // Hand check from average drops during conduction (rule of thumb, common practice): within
  // 20 % of the simulated choice. The naive dV / I_dc over-corrects about 7 times (derived).
  CHECK(d.handEstimate == Approx(d.resistorExact).epsilon(0.20));
  const double naive = (d.siliconAlone - d.target) / (d.target / 1500.0);
  CHECK(naive > 4.0 * d.resistorExact);
}

TEST_CASE("replace: a table radio's stack, with the comparison table and a runnable netlist",
          "[analysis][replace]") {
  disc::ReplaceOptions o;
  o.stacks = {"SR1"};
  const auto d =
      disc::designReplacementFile(std::string(DISC_NETLIST_DIR) + "/table-radio-half-wave.disc", o);
  CHECK(d.siliconAlone > d.target + 2.0);  // silicon's low drop raises the HT (common practice)
  CHECK(std::abs(d.outputExact / d.target - 1.0) <= 0.005);
  // IEC 60063 values, exactly, and each the nearest on its series.
  CHECK(inSeries(d.e12, disc::ESeries::E12));
  CHECK(inSeries(d.e24, disc::ESeries::E24));
  CHECK(d.e24 == disc::nearestPreferred(d.resistorExact, disc::ESeries::E24));
  // Dissipation rating with the 2x margin; a reverse rating with the 2x factor.
  CHECK(d.resistorRating >= 2.0 * d.resistorPower);
  CHECK(d.pivRequired == Approx(2.0 * d.peakReverse));
  // Half-wave capacitor input: the diode sees about 2 sqrt(2) V_rms in reverse (common
  // practice; docs/sources.md, rectifier circuits): 120 V rms mains here, less the drops.
  CHECK(d.peakReverse == Approx(2.0 * std::sqrt(2.0) * 120.0).epsilon(0.1));
  REQUIRE(d.rows.size() == 3);
  CHECK(d.rows[0].loadFraction == 0.5);
  CHECK(d.rows[0].outputOriginal > d.rows[1].outputOriginal);  // lighter load, higher output
  CHECK(d.rows[2].outputReplacement < d.rows[1].outputReplacement);
  // The written netlist runs: its report's output is the E24 output (the design's runs use a
  // tighter tolerance and a settled extrapolation, so allow 1 %).
  disc::Netlist nl = disc::parseNetlist(d.netlist, std::string(DISC_NETLIST_DIR) + "/x.disc");
  CHECK(nl.circuit.find("SR1") == nullptr);
  CHECK(nl.circuit.find("SR1_SI") != nullptr);
  const auto run = disc::runNetlist(nl);
  REQUIRE(run.hasReport);
  CHECK(run.report.output.mean == Approx(d.outputE24).epsilon(0.01));
  const auto text = disc::replacementText(d);
  CHECK_THAT(text, Catch::Contains("nearest E24 (IEC 60063)"));
  CHECK_THAT(text, Catch::Contains("toxic fumes"));
}

TEST_CASE("replace: a battery charger's bridge is matched on its charging current",
          "[analysis][replace]") {
  disc::ReplaceOptions o;
  o.stacks = {"SR1", "SR2", "SR3", "SR4"};
  const auto d =
      disc::designReplacementFile(std::string(DISC_NETLIST_DIR) + "/battery-charger-6v.disc", o);
  CHECK(d.quantity == "load current");
  CHECK(d.unit == "A");
  CHECK(d.siliconAlone > 1.1 * d.target);  // silicon would overcharge
  CHECK(std::abs(d.outputExact / d.target - 1.0) <= 0.005);
  REQUIRE(d.rows.size() == 1);  // a battery load cannot be scaled
  CHECK(d.rows[0].currentOriginal == Approx(d.target).epsilon(1e-9));
}

namespace {

/// The table radio's netlist with its stack's statement given extra words.
std::string radioWith(const std::string& words) {
  std::ifstream in(std::string(DISC_NETLIST_DIR) + "/table-radio-half-wave.disc");
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const std::string stack = "type=se-25mm-36v plates=8";
  text.replace(text.find(stack), stack.size(), stack + " " + words);
  return text;
}

}  // namespace

TEST_CASE("replace: the target is the formed stack's output unless told otherwise",
          "[analysis][replace]") {
  disc::ReplaceOptions o;
  o.stacks = {"SR1"};
  o.loadFractions = {1.0};
  const std::string deformed = radioWith("forming=0.6");
  const auto formed = disc::designReplacement(deformed, DISC_NETLIST_DIR "/deformed.disc", o);
  CHECK(formed.targetKind == "formed");
  // The same stack written fully formed, aimed at as described: the same runs, the same value.
  o.target = "present";
  const auto asNew =
      disc::designReplacement(radioWith("forming=1"), DISC_NETLIST_DIR "/formed.disc", o);
  CHECK(formed.target == Approx(asNew.target).epsilon(1e-9));
  // A deformed stack leaks in reverse, so it gives less than re-formed (common practice).
  CHECK(formed.present < formed.target);
  CHECK(std::abs(formed.outputExact / formed.target - 1.0) <= 0.005);
  const auto present = disc::designReplacement(deformed, DISC_NETLIST_DIR "/deformed.disc", o);
  CHECK(present.target == Approx(formed.present).epsilon(1e-9));
  // A value: matched within the design's 0.5 %.
  o.target = "105V";
  const auto value = disc::designReplacement(deformed, DISC_NETLIST_DIR "/deformed.disc", o);
  CHECK(value.targetKind == "value");
  CHECK(value.target == 105.0);
  CHECK(std::abs(value.outputExact / 105.0 - 1.0) <= 0.005);
  o.target = "105A";  // the radio is matched on voltage
  CHECK_THROWS_WITH(disc::designReplacement(deformed, "x.disc", o),
                    Catch::Contains("formed, design, present or a value in V"));
  o.target = "reformed";
  CHECK_THROWS_AS(disc::designReplacement(deformed, "x.disc", o), disc::InputError);

  // The silicon parts' verdicts, at the chosen resistor.
  REQUIRE(formed.verdicts.size() == 4);
  CHECK(formed.verdicts[0].figure == "diode reverse voltage");
  CHECK(formed.verdicts[0].value == Approx(formed.pivRequired));
  CHECK(formed.verdicts[0].limit == disc::DiodeParams{}.breakdownVoltage);
  // Half-wave: the diode carries the whole load current on average (Kirchhoff's current law;
  // the reservoir's net charge over the settled window is small): within 2 %.
  CHECK(formed.diodeCurrent == Approx(formed.rows[0].currentReplacement).epsilon(0.02));
  CHECK(formed.verdicts[1].limit == 1.0);
  CHECK(formed.verdicts[2].value == Approx(formed.surgeRequired));
  CHECK(formed.verdicts[3].value == Approx(formed.resistorPower));
  for (const auto& v : formed.verdicts) CHECK(v.level == "ok");
  // A diode rated below the load current is judged to exceed.
  o.target = "formed";
  o.diodeCurrentRating = 0.02;
  const auto small = disc::designReplacement(deformed, DISC_NETLIST_DIR "/deformed.disc", o);
  CHECK(small.verdicts[1].level == "exceeds");
  CHECK_THAT(disc::replacementText(small), Catch::Contains("[exceeds ] diode average forward"));
}

TEST_CASE("replace: inputs it cannot use are refused with a reason", "[analysis][replace]") {
  disc::ReplaceOptions o;
  o.stacks = {"SR9"};
  CHECK_THROWS_WITH(disc::designReplacement(kWorkedExample, "x.disc", o),
                    Catch::Contains("no stack named 'SR9'"));
  o.stacks = {"SR1"};
  std::string noOutput = kWorkedExample;
  noOutput.erase(noOutput.find("output out"), std::string("output out gnd load=RL\n").size());
  CHECK_THROWS_WITH(disc::designReplacement(noOutput, "x.disc", o),
                    Catch::Contains("names no output"));
  o.stacks.clear();
  CHECK_THROWS_AS(disc::designReplacement(kWorkedExample, "x.disc", o), disc::InputError);
  o.stacks = {"SR1", "SR1"};
  CHECK_THROWS_WITH(disc::designReplacement(kWorkedExample, "x.disc", o),
                    Catch::Contains("named twice"));
  CHECK(disc::resistorRatingFor(0.3) == 0.5);
  CHECK_THROWS_AS(disc::resistorRatingFor(80.0), disc::InputError);
}

TEST_CASE("replace: the silicon variant runs across dropping resistors and tolerances",
          "[analysis][replace][robustness]") {
  // A diode without series resistance or capacitance behind a 10 ohm surge resistor, into
  // 4700 uF: each conduction starts with a steep current edge. Two Newton weaknesses met on
  // this circuit (an iterate accepted by the rate test after a wild limited update, and a wild
  // update from factors kept across a switching) made single runs fail with "time step too
  // small"; every combination here must finish with the output between the silicon-alone and
  // the half-wave peak-rectified bounds (common practice: the output of a capacitor-input
  // half-wave supply lies below the peak, 117 V * sqrt(2) = 165.5 V).
  std::string text = kWorkedExample;
  const std::string stack = "stack SR1 a out type=knee05 plates=5\n";
  text.replace(text.find(stack), stack.size(),
               "diode D1 a x saturation-current=1.5e-14 ideality=1 series-resistance=0 "
               "junction-capacitance=0\nresistor RD x out {R}\n");
  text.replace(text.find("run transient stop=6s"), 21, "run transient stop=2s reltol={T}");
  for (const char* r : {"0.1ohm", "5ohm", "12.67ohm", "20ohm"}) {
    for (const char* tol : {"1e-3", "3e-4", "1e-5"}) {
      std::string t = text;
      t.replace(t.find("{R}"), 3, r);
      t.replace(t.find("{T}"), 3, tol);
      INFO("R = " << r << ", reltol " << tol);
      disc::Netlist nl = disc::parseNetlist(t, "silicon-sweep.disc");
      disc::RunOutcome run;
      REQUIRE_NOTHROW(run = disc::runNetlist(nl));
      REQUIRE(run.hasReport);
      CHECK(run.report.output.mean > 100.0);
      CHECK(run.report.output.mean < 165.5);
    }
  }
}
