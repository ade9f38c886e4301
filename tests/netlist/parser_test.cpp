// The netlist parser: every error class reported with its location and an actionable message.
#include <fmt/format.h>
#include <algorithm>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>

#include "disc/disc.hpp"

using namespace disc;
using Catch::Matchers::Contains;

namespace {

/// The diagnostics of a netlist that must fail.
std::vector<Diagnostic> errorsOf(const std::string& text) {
  try {
    parseNetlist(text, "t.disc");
  } catch (const NetlistError& e) {
    return e.diagnostics();
  }
  FAIL("the netlist was accepted:\n" << text);
  return {};
}

/// Exactly one diagnostic at (line, column) containing `words`.
void expectError(const std::string& text, int line, int column, const std::string& words) {
  const auto d = errorsOf(text);
  INFO(text);
  REQUIRE(!d.empty());
  INFO(d.front().format());
  CHECK(d.front().where.line == line);
  CHECK(d.front().where.column == column);
  CHECK_THAT(d.front().message, Contains(words));
}

const std::string kOk = "voltage V1 a gnd dc=10V\nresistor R1 a gnd 1k\n";

}  // namespace

TEST_CASE("A valid netlist parses into a circuit", "[netlist][parser]") {
  const Netlist nl = parseNetlist(
      "title \"divider\"  # a comment\nvoltage V1 in gnd dc=12V\n"
      "resistor R1 in mid \\\n   4.7k\nresistor R2 mid gnd resistance=4.7kohm\n"
      "output mid gnd load=R2\nrecord v:mid i:R1\nrun operating-point\n",
      "ok.disc");
  CHECK(nl.title == "divider");
  CHECK(nl.circuit.devices().size() == 3);
  CHECK(static_cast<const Resistor&>(*nl.circuit.find("R1")).resistance() == Approx(4700.0));
  CHECK(nl.analyses.size() == 1);
  CHECK(nl.record == std::vector<std::string>{"v:mid", "i:R1"});
}

TEST_CASE("Numbers take SI prefixes and checked units", "[netlist][parser]") {
  const Netlist nl =
      parseNetlist(kOk +
                   "capacitor C1 b gnd 2.2uF\ncapacitor C2 b gnd 10nF\n"
                   "inductor L1 a b 3mH\nresistor R2 b gnd 1.5Mohm\nambient 30degC\n");
  CHECK(static_cast<const Capacitor&>(*nl.circuit.find("C1")).capacitance() == Approx(2.2e-6));
  CHECK(static_cast<const Capacitor&>(*nl.circuit.find("C2")).capacitance() == Approx(10e-9));
  CHECK(static_cast<const Inductor&>(*nl.circuit.find("L1")).inductance() == Approx(3e-3));
  CHECK(static_cast<const Resistor&>(*nl.circuit.find("R2")).resistance() == Approx(1.5e6));
  CHECK(nl.circuit.ambient() == Approx(303.15));
}

TEST_CASE("Each error class is located and explained", "[netlist][parser]") {
  expectError(kOk + "resistr R2 a gnd 1k\n", 3, 1, "did you mean 'resistor'");
  expectError(kOk + ".tran 1m\n", 3, 1, "do not start with a dot");
  expectError(kOk + "resistor R2 a\n", 3, 13, "needs 2 nodes");
  expectError(kOk + "resistor R2 a gnd 1k b\n", 3, 22, "extra");
  expectError(kOk + "resistor R1 a gnd 2k\n", 3, 10, "duplicate name 'R1'");
  expectError(kOk + "capacitor C1 a gnd capacitence=1u\n", 3, 20, "did you mean 'capacitance'");
  expectError(kOk + "resistor R2 a gnd 1x5\n", 3, 19, "neither an SI prefix nor a unit");
  expectError(kOk + "voltage V2 b gnd sine rms=120A frequency=60Hz\nresistor R3 b gnd 1k\n", 3, 27,
              "is a current, but this parameter is a voltage");
  expectError(kOk + "resistor R2 a gnd -5\n", 3, 19, "must be positive");
  expectError(kOk + "capacitor C1 a gnd 0F\n", 3, 20, "must be positive");
  expectError(kOk + "stack S1 a gnd type=se-25mm-square plates=0\n", 3, 36, "from 1 to 1000");
  expectError(kOk + "stack S1 a gnd type=se-25mm-sqare\n", 3, 16, "did you mean 'se-25mm-square'");
  expectError(kOk + "include \"missing.disc\"\n", 3, 9, "not found");
  expectError(kOk + "resistor R2 a danglng 1k\n", 3, 15, "connected only once");
  expectError(kOk + "resistor R2 p q 1k\nresistor R3 p q 2k\n", 3, 13, "no path to gnd");
  expectError(kOk + "voltage V2 a gnd dc=5V\n", 3, 9, "closes a loop");
  expectError(kOk + "run transient max-step=1ms\n", 3, 1, "needs stop=");
  expectError(kOk + "record v:nowhere\n", 3, 8, "no node named 'nowhere'");
  expectError(kOk + "title \"unterminated\n", 3, 7, "unterminated");
}

TEST_CASE("Several errors are reported in one pass, nothing is built", "[netlist][parser]") {
  const auto d =
      errorsOf("voltage V1 a gnd dc=10V\nresistor R1 a gnd 1q\ncapacitor C1 a gnd -1u\nfoo bar\n");
  // One each: the nodes and names of the rejected elements are not reported again.
  CHECK(d.size() == 3);
  // The message carries the line and a caret under the fault.
  const std::string text = d.front().format();
  CHECK_THAT(text, Contains("t.disc:2:19: error:"));
  CHECK_THAT(text, Contains("resistor R1 a gnd 1q\n"));
  CHECK_THAT(text, Contains("^"));
}

TEST_CASE("One error per cause: a statement that failed does not cascade",
          "[netlist][parser][mistakes]") {
  // A bad value (1.25K read as kelvin) rejects RLOAD: the output naming it and the node only
  // it joined are not reported again.
  auto d = errorsOf(
      "voltage V1 line gnd mains rms=120V frequency=60Hz\nstack SR1 line top "
      "type=se-25mm-36v plates=8\nresistor RLOAD top out 1.25K\nresistor RB out gnd 10\n"
      "output top gnd load=RLOAD\nrecord i:RLOAD p:RLOAD\nvary RLOAD resistance 1k 2k\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("did you mean 1.25k (kilo is a lower-case k)"));
  // A misspelt plate type: one error, not the stack's signals and dangling node as well.
  d = errorsOf(
      "voltage V1 line gnd mains rms=120V frequency=60Hz\nstack SR1 line top "
      "type=se-25mm-63v plates=8\nresistor RL top gnd 1k\noutput top gnd load=RL\n"
      "record i:SR1 temp:SR1#2\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("unknown plate type 'se-25mm-63v'"));
  // A bad stop time: its own error, not "needs stop=" as well.
  d = errorsOf(kOk + "run transient stop=3sec\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("did you mean 3s?"));
}

TEST_CASE("Hints for the slips people make", "[netlist][parser][mistakes]") {
  // Unit look-alikes: period and everyday spellings, and units in the wrong case.
  for (auto [text, hint] :
       {std::pair{"ambient 40C\n", "did you mean 40degC?"},
        std::pair{"capacitor C1 a gnd 100mfd\n", "did you mean 100uF?"},
        std::pair{"capacitor C1 a gnd 500mmfd\n", "did you mean 500pF?"},
        std::pair{"capacitor C1 a gnd 8uf\n", "did you mean 8uF?"},
        std::pair{"resistor R2 a gnd 47ohms\n", "did you mean 47ohm?"},
        std::pair{"voltage V2 b gnd sine rms=6volts frequency=50Hz\nresistor R3 b gnd 1k\n",
                  "did you mean 6V?"},
        std::pair{"voltage V2 b gnd sine rms=6V frequency=50cps\nresistor R3 b gnd 1k\n",
                  "did you mean 50Hz?"},
        std::pair{"run transient stop=2sec\n", "did you mean 2s?"}}) {
    INFO(text);
    const auto d = errorsOf(kOk + text);
    REQUIRE(d.size() == 1);
    CHECK_THAT(d[0].message, Contains(hint));
  }
  // No guess where none fits: 1x5 is no look-alike.
  CHECK_THAT(errorsOf(kOk + "resistor R2 a gnd 1x5\n")[0].message, !Contains("did you mean"));
  // 0 and GND as ground: each named once, no dangling or no-path errors on top.
  auto d = errorsOf("voltage V1 line 0 dc=10V\nresistor R1 line top 1k\nresistor R2 top GND 1k\n");
  REQUIRE(d.size() == 2);
  CHECK_THAT(d[0].message, Contains("node '0' is an ordinary node, not ground"));
  CHECK_THAT(d[1].message, Contains("node 'GND'"));
  CHECK_THAT(d[1].message, Contains("written gnd"));
  // A capacitor named as the load, with the element across the output suggested.
  d = errorsOf(
      "voltage V1 a gnd dc=10V resistance=1ohm\nresistor R1 a gnd 1k\ncapacitor C1 a gnd 10uF\n"
      "output a gnd load=C1\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("'C1' is a capacitor"));
  CHECK_THAT(d[0].message, Contains("did you mean load=R1"));
}

TEST_CASE("A reversed stack is named in the report's warnings", "[netlist][mistakes]") {
  // The stack written cathode first: the output goes negative (a half-wave rectifier the other
  // way round), and the report asks whether a stack is reversed.
  Netlist nl = parseNetlist(
      "voltage V1 line gnd mains rms=120V frequency=60Hz resistance=1ohm\n"
      "stack SR1 top line type=se-25mm-36v plates=8\ncapacitor C1 top gnd 50uF\n"
      "resistor RL top gnd 2k\noutput top gnd load=RL\nrun transient stop=0.2s\n",
      "reversed.disc");
  const RunOutcome out = runNetlist(nl);
  REQUIRE(out.hasReport);
  CHECK(out.report.output.mean < 0.0);
  CHECK(std::any_of(
      out.report.warnings.begin(), out.report.warnings.end(),
      [](const std::string& w) { return w.find("is a stack reversed?") != std::string::npos; }));
  // The same stack the right way round: no such warning.
  nl = parseNetlist(
      "voltage V1 line gnd mains rms=120V frequency=60Hz resistance=1ohm\n"
      "stack SR1 line top type=se-25mm-36v plates=8\ncapacitor C1 top gnd 50uF\n"
      "resistor RL top gnd 2k\noutput top gnd load=RL\nrun transient stop=0.2s\n",
      "forward.disc");
  const RunOutcome good = runNetlist(nl);
  CHECK(good.report.output.mean > 0.0);
  CHECK(std::none_of(good.report.warnings.begin(), good.report.warnings.end(),
                     [](const std::string& w) { return w.find("reversed") != std::string::npos; }));
}

TEST_CASE("Includes resolve relative to the including file and cycles are caught",
          "[netlist][parser]") {
  const std::string dir = std::string(DISC_TEST_OUT_DIR) + "/inc";
  std::filesystem::create_directories(dir + "/sub");
  writeFileAtomically(dir + "/main.disc", "include \"sub/part.disc\"\nresistor R1 a gnd 1k\n");
  writeFileAtomically(dir + "/sub/part.disc", "voltage V1 a gnd dc=1V\n");
  CHECK(loadNetlist(dir + "/main.disc").circuit.devices().size() == 2);
  writeFileAtomically(dir + "/a.disc", "include \"b.disc\"\n");
  writeFileAtomically(dir + "/b.disc", "include \"a.disc\"\n");
  try {
    loadNetlist(dir + "/a.disc");
    FAIL("cycle not detected");
  } catch (const NetlistError& e) {
    CHECK_THAT(e.what(), Contains("include cycle"));
  }
}

TEST_CASE("Derived and used plate types", "[netlist][parser]") {
  const std::string dir = std::string(DISC_TEST_OUT_DIR) + "/types";
  std::filesystem::create_directories(dir);
  PlateType t = PlateLibrary::derive(PlateLibrary::builtIn().at("se-25mm-square"), "my-plate",
                                     {{"rs_ohm_cm2", 14.0}});
  PlateLibrary::save(t, dir + "/my-plate.json");
  writeFileAtomically(
      dir + "/n.disc",
      "use \"my-plate.json\"\nplate-type worn base=my-plate gsh_S_per_cm2=1e-4\n"
      "voltage V1 a gnd dc=1V\nstack S1 a gnd type=worn\nstack S2 a gnd type=my-plate\n");
  const Netlist nl = loadNetlist(dir + "/n.disc");
  CHECK(static_cast<const Stack&>(*nl.circuit.find("S1")).type().physics.gshArea == Approx(1e-4));
  CHECK(static_cast<const Stack&>(*nl.circuit.find("S1")).type().physics.rsArea == Approx(14.0));
  expectError(
      "plate-type x base=se-25mm-square rs_ohm_cm=3\nvoltage V1 a gnd dc=1V\nresistor R a gnd 1\n",
      1, 34, "did you mean 'rs_ohm_cm2'");
}

TEST_CASE("run transient takes an absolute tolerance", "[netlist][parser]") {
  const Netlist nl = parseNetlist(kOk + "run transient stop=1ms reltol=1e-6 abstol=1e-9\n");
  REQUIRE(nl.analyses.size() == 1);
  CHECK(nl.analyses[0].transient.tol.reltol == 1e-6);
  CHECK(nl.analyses[0].transient.tol.voltage == 1e-9);
  CHECK(nl.analyses[0].transient.tol.current == 1e-9);
  expectError(kOk + "run transient stop=1ms abstol=0\n", 3, 31, "abstol must lie above 0");
}

TEST_CASE("The silicon diode's parameters have descriptive names", "[netlist][parser][diode]") {
  // Each name with a value in its unit (values chosen to differ from the defaults).
  const Netlist nl = parseNetlist(
      kOk +
      "diode D1 a k saturation-current=5nA ideality=1.8 series-resistance=50mohm "
      "junction-capacitance=33pF built-in-potential=0.65V grading-exponent=0.33 "
      "transit-time=2us breakdown-voltage=600V breakdown-current=10uA thermal-resistance=50 "
      "heat-capacity=0.2 temperature=40degC\nresistor RK k gnd 1k\n");
  const auto& d = static_cast<const Diode&>(*nl.circuit.find("D1"));
  const DiodeParams& p = d.params();
  CHECK(p.saturationCurrent == Approx(5e-9));
  CHECK(p.ideality == Approx(1.8));
  CHECK(p.seriesResistance == Approx(0.05));
  CHECK(p.junctionCapacitance == Approx(33e-12));
  CHECK(p.builtInPotential == Approx(0.65));
  CHECK(p.gradingExponent == Approx(0.33));
  CHECK(p.transitTime == Approx(2e-6));
  CHECK(p.breakdownVoltage == Approx(600.0));
  CHECK(p.breakdownCurrent == Approx(10e-6));
  CHECK(p.thermalResistance == Approx(50.0));
  CHECK(p.heatCapacity == Approx(0.2));
  CHECK(p.temperature == Approx(313.15));
  // The parser's names are the parameter table's: each reads back what the statement set.
  CHECK(d.parameterNames() ==
        std::vector<std::string>{"saturation-current", "ideality", "series-resistance",
                                 "junction-capacitance", "built-in-potential", "grading-exponent",
                                 "transit-time", "breakdown-voltage", "breakdown-current",
                                 "thermal-resistance", "heat-capacity", "temperature",
                                 "reference-temp"});
  CHECK(d.parameter("series-resistance") == Approx(0.05));

  // Units are checked against each parameter's own unit; ranges by the device.
  expectError(kOk + "diode D1 a gnd saturation-current=5nV\n", 3, 35,
              "is a voltage, but this parameter is a current");
  expectError(kOk + "diode D1 a gnd grading-exponent=1.5\n", 3, 16, "grading exponent");
  expectError(kOk + "diode D1 a gnd saturaton-current=5n\n", 3, 16,
              "did you mean 'saturation-current'");
}

TEST_CASE("The diode's retired short names are errors naming the new word",
          "[netlist][parser][diode]") {
  const std::vector<std::pair<std::string, std::string>> retired = {
      {"is", "saturation-current"}, {"n", "ideality"},
      {"rs", "series-resistance"},  {"cj0", "junction-capacitance"},
      {"vj", "built-in-potential"}, {"m", "grading-exponent"},
      {"tt", "transit-time"},       {"bv", "breakdown-voltage"},
      {"ibv", "breakdown-current"}, {"rth", "thermal-resistance"},
      {"cth", "heat-capacity"}};
  for (const auto& [old, now] : retired) {
    const std::string hint = "'" + old + "' is now called '" + now + "'";
    expectError(kOk + "diode D1 a gnd " + old + "=1\n", 3, 16, hint);
    // The same hint from the parameter table, for sweeps (and the Python module's attributes).
    Diode d("D9", 0, kGround);
    CHECK_THROWS_WITH(d.setParameter(old, 1.0), Contains(hint));
    CHECK_THROWS_WITH(d.parameter(old), Contains(hint));
  }
}

TEST_CASE("run transient takes a temperature tolerance of its own", "[netlist][parser]") {
  const Netlist nl = parseNetlist(kOk + "run transient stop=1ms temperature-abstol=1e-7\n");
  REQUIRE(nl.analyses.size() == 1);
  CHECK(nl.analyses[0].transient.tol.temperature == 1e-7);
  CHECK(nl.analyses[0].transient.tol.voltage == TransientOptions{}.tol.voltage);
  expectError(kOk + "run transient stop=1ms temperature-abstol=2\n", 3, 43,
              "temperature-abstol (K) must lie above 0");
}

TEST_CASE("A diode's reference temperature is a parameter, 300.15 K unless given",
          "[netlist][parser]") {
  const Netlist nl = parseNetlist(
      "current I1 gnd a dc=1mA\ndiode D1 a gnd saturation-current=1e-6 temperature=300K\n"
      "diode D2 a gnd saturation-current=1e-6 temperature=300K reference-temp=300K\n");
  CHECK(static_cast<const Diode&>(*nl.circuit.find("D1")).params().referenceTemperature == 300.15);
  CHECK(static_cast<const Diode&>(*nl.circuit.find("D2")).params().referenceTemperature ==
        Approx(300.0));
  CHECK(nl.circuit.find("D2")->parameter("reference-temp") == Approx(300.0));
}

TEST_CASE("The names of the naming pass, and each old spelling an error naming the new one",
          "[netlist][parser][names]") {
  // on-resistance and off-resistance: a closed switch of 2 ohm into 2 ohm halves 1 V; opened,
  // 1 Mohm into 2 ohm leaves 2 uV (Ohm's law).
  for (const auto& [when, expected] : std::vector<std::pair<std::string, double>>{
           {"open=1s", 0.5}, {"close=1s", 2.0 / (1e6 + 2.0)}}) {
    const Netlist nl = parseNetlist("voltage V1 a gnd dc=1V\nswitch S1 a b " + when +
                                    " on-resistance=2ohm off-resistance=1Mohm\n"
                                    "resistor R1 b gnd 2ohm\nrun operating-point\n");
    OperatingPointOptions o;
    o.record = {"v:b"};
    INFO(when);
    CHECK(operatingPoint(nl.circuit, o)["v:b"].front() == Approx(expected).epsilon(1e-9));
  }
  expectError(kOk + "switch S1 a gnd open=1s ron=1\n", 3, 25,
              "'ron' is now called 'on-resistance' (in ohm)");
  expectError(kOk + "switch S1 a gnd open=1s roff=1G\n", 3, 25,
              "'roff' is now called 'off-resistance' (in ohm)");
  expectError(kOk + "run warm-up duration=1h temperature-tolerance=0.01\n", 3, 25,
              "'temperature-tolerance' is now called 'temperature-abstol' (in K)");
  expectError(kOk + "switch S1 a gnd open=1s on-resistence=1\n", 3, 25,
              "did you mean 'on-resistance'");

  // method=trapezoidal, the trapezoidal rule's name; trap is the old spelling.
  const Netlist nl = parseNetlist(kOk + "run transient stop=1ms method=trapezoidal\n");
  REQUIRE(nl.analyses.size() == 1);
  CHECK(nl.analyses[0].transient.method == Method::Trapezoidal);
  CHECK(std::string(methodName(Method::Trapezoidal)) == "trapezoidal");
  expectError(kOk + "run transient stop=1ms method=trap\n", 3, 31,
              "method 'trap' is now called 'trapezoidal'");
  expectError(kOk + "run transient stop=1ms method=euler\n", 3, 31,
              "use trapezoidal, bdf2, tr-bdf2 or ida");
  CHECK_THROWS_WITH(parseMethod("trap"), Contains("now called 'trapezoidal'"));

  // reference-temp on the diode, as on the thermistor; nominal-temperature is the old name.
  expectError(kOk + "diode D1 a gnd nominal-temperature=300K\n", 3, 16,
              "'nominal-temperature' is now called 'reference-temp' (in K)");
  Diode d("D9", 0, kGround);
  CHECK_THROWS_WITH(d.setParameter("nominal-temperature", 300.0), Contains("'reference-temp'"));

  // A signal as a function of its node, v(b), is written kind:target.
  expectError(kOk + "record v(a)\n", 3, 8, "signal 'v(a)' is written v:a (kind:target)");
  expectError(kOk + "record i(R1)\n", 3, 8, "is written i:R1");
}

TEST_CASE("Lamps, valve loads and level schedules in the language", "[netlist][parser]") {
  const Netlist nl = parseNetlist(
      "voltage MAINS line gnd mains rms=230V frequency=50Hz \\\n"
      "    schedule=\"0 60V, 2min 60V, 3min 115V, 1h 230V\"\n"
      "lamp LAMP line a rated-power=60W rated-voltage=230V time-constant=40ms\n"
      "resistor R1 a ht 100ohm\n"
      "valve-load VALVES ht gnd rated-current=60mA rated-voltage=250V warm-up=12s on=1s\n");
  const auto& src = static_cast<const VoltageSource&>(*nl.circuit.find("MAINS"));
  // Levels in volts rms of a source given by rms=; min and h are minutes and hours.
  CHECK(src.waveform().level(60.0) == Approx(60.0 / 230.0));
  CHECK(src.waveform().level(150.0) == Approx((60.0 + 55.0 / 2.0) / 230.0));
  CHECK(src.waveform().level(3600.0) == Approx(1.0));
  const auto& lamp = static_cast<const Lamp&>(*nl.circuit.find("LAMP"));
  CHECK(lamp.params().ratedPower == 60.0);
  CHECK(lamp.params().timeConstant == Approx(0.04));
  const auto& valves = static_cast<const ValveLoad&>(*nl.circuit.find("VALVES"));
  CHECK(valves.params().ratedCurrent == Approx(0.06));
  CHECK(valves.params().warmUp == 12.0);
  CHECK(valves.params().on == 1.0);
  // Every name of the devices' parameter tables is a parameter of their statements.
  for (const Device* d : {static_cast<const Device*>(&lamp), static_cast<const Device*>(&valves)}) {
    std::string text =
        fmt::format("voltage V1 a gnd dc=100V\n{} X a gnd", d == &lamp ? "lamp" : "valve-load");
    for (const auto& name : d->parameterNames())
      text += fmt::format(" {}={}", name, d->parameter(name));
    INFO(text);
    const Netlist one = parseNetlist(text + "\n");
    for (const auto& name : d->parameterNames())
      CHECK(one.circuit.find("X")->parameter(name) == Approx(d->parameter(name)));
  }
}

TEST_CASE("Lamp, valve load and schedule errors are located and explained", "[netlist][parser]") {
  expectError(kOk + "valve-load VL a gnd rated-current=60mA rated-voltage=250V exponent=0.5\n", 3,
              59, "exponent must lie in 1-2.5");
  expectError(kOk + "lamp L1 a gnd rated-voltage=230V\n", 3, 6, "needs rated-power=");
  expectError(kOk + "lamp L1 a gnd rated-power=60W rated-voltage=230V filament-temp=4000K\n", 3, 50,
              "melting point");
  expectError("voltage V1 a gnd points=\"0 0, 1ms 5V\" schedule=\"0 1V\"\nresistor R1 a gnd 1k\n",
              1, 39, "not points=");
  expectError("voltage V1 a gnd dc=10V schedule=\"0 1V, 1min -2V\"\nresistor R1 a gnd 1k\n", 1, 25,
              "negative factor");
  expectError("voltage V1 a gnd dc=10V schedule=\"0 1V, 2mins 2V\"\nresistor R1 a gnd 1k\n", 1, 25,
              "neither an SI prefix nor a unit");
}

TEST_CASE("run periodic and run warm-up in the language", "[netlist][parser][periodic]") {
  const Netlist nl = parseNetlist(kOk +
                                  "run periodic reltol=1e-6 at=2min warm-up-periods=5 "
                                  "temperature-abstol=1e-3 start=cold\n"
                                  "run warm-up duration=2h reltol=1e-4 temperature-abstol=0.01 "
                                  "periodic-reltol=1e-5 max-step=10min\n");
  REQUIRE(nl.analyses.size() == 2);
  const auto& p = nl.analyses[0];
  CHECK(p.kind == AnalysisRequest::Kind::Periodic);
  CHECK(p.periodic.tol.reltol == 1e-6);
  CHECK(p.periodic.slowTime == Approx(120.0));
  CHECK(p.periodic.warmupPeriods == 5);
  CHECK(p.periodic.tol.temperature == 1e-3);
  CHECK(p.periodic.start == Start::Cold);
  const auto& w = nl.analyses[1];
  CHECK(w.kind == AnalysisRequest::Kind::WarmUp);
  CHECK(w.warmUp.duration == Approx(7200.0));
  CHECK(w.warmUp.reltol == 1e-4);
  CHECK(w.warmUp.temperatureTol == 0.01);
  CHECK(w.warmUp.periodic.tol.reltol == 1e-5);
  CHECK(w.warmUp.maxStep == Approx(600.0));
  CHECK(std::string(analysisWord(w.kind)) == "warm-up");

  expectError(kOk + "run warm-up\n", 3, 1, "run warm-up needs duration=TIME");
  expectError(kOk + "run warm-up duration=-1h\n", 3, 22, "duration must be positive");
  expectError(kOk + "run warm-up duration=1h reltool=1e-3\n", 3, 25, "did you mean 'reltol'");
  expectError(kOk + "run periodic stop=1s\n", 3, 14, "run periodic has no parameter 'stop'");
  expectError(kOk + "run periodic warm-up-periods=2.5\n", 3, 30, "whole number");
  expectError(kOk + "run perodic\n", 3, 5, "did you mean 'periodic'");
}

TEST_CASE("Mistakes in output and record are refused at their place", "[netlist][parser]") {
  const std::string stack =
      "voltage V1 line gnd mains rms=120V frequency=60Hz resistance=1ohm\n"
      "stack SR1 line top type=se-25mm-36v plates=8\ncapacitor C1 top gnd 50uF\n"
      "resistor RL top gnd 2k\n";
  // An output across one node reads 0 V: refused at its second node.
  expectError(kOk + "output a a load=R1\n", 3, 10, "across one node, 'a'");
  // A voltage across one node always reads 0 V.
  expectError(kOk + "record v:a,a\n", 3, 8, "across one node, 'a'");
  // A plate index past the stack's plates, or on a quantity that is not numbered.
  expectError(stack + "record temp:SR1#9\n", 5, 8, "SR1 has 8 of them, numbered from 1 to 8");
  expectError(stack + "record temp:SR1#0\n", 5, 8, "a number from 1");
  expectError(kOk + "record i:R1#2\n", 3, 8, "'i' of a resistor is not numbered; write i:R1");
  // The recorder's own wording reaches the parser: the quantities that exist are listed.
  expectError(kOk + "record temp:R1\n", 3, 8, "a resistor has no quantity 'temp' (it has: ");
  // A plate index within range is accepted.
  CHECK_NOTHROW(parseNetlist(stack + "record temp:SR1#8\n", "t.disc"));
  // A source as the load: a current source, or the alternating input itself.
  auto d = errorsOf(kOk + "current I1 a gnd dc=1mA\noutput a gnd load=I1\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("'I1' is a current source"));
  d = errorsOf(stack + "output top gnd load=V1\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("'V1' is an alternating source (60 Hz)"));
  // The input (a source) named as the load too.
  d = errorsOf(stack +
               "voltage VB top gnd dc=90V resistance=1ohm\noutput top gnd load=VB input=VB\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("'VB' is named both as the load and as the input"));
  // A DC voltage source stays a valid load: a battery on charge (common practice).
  CHECK_NOTHROW(parseNetlist(
      stack + "voltage VB top gnd dc=90V resistance=1ohm\noutput top gnd load=VB\n", "t.disc"));
}

TEST_CASE("Cut sets of current sources and inductors are refused at their source",
          "[netlist][parser][topology]") {
  // Kirchhoff's current law around a set of nodes fixes the sum of the currents of the
  // branches that leave it; when those are all current sources nothing fixes the set's
  // voltage, and with inductors the source forces the inductors' currents (Chua and Lin,
  // Computer-Aided Analysis of Electronic Circuits, 1975; docs/sources.md, circuit topology).
  expectError(kOk + "current I1 a b dc=1mA\ncurrent I2 b gnd dc=1mA\n", 3, 9,
              "node 'b' connects to the rest of the circuit only through current sources (I1, "
              "I2): nothing fixes its voltage; add a resistor from 'b' to gnd");
  // A current source feeding a choke alone: the node between them is forced.
  expectError(kOk + "current I1 gnd b dc=1A\ninductor L1 b gnd 1H\n", 3, 9,
              "only through current sources and inductors (I1, L1): 'I1' forces the current of the "
              "inductors");
  // A set of nodes joined by a resistor, left through a source and a choke: named as a set.
  auto d = errorsOf(kOk + "current I1 gnd b dc=1A\nresistor R2 b c 10\ninductor L1 c gnd 1H\n");
  REQUIRE(d.size() == 1);
  CHECK(d[0].where.line == 3);
  CHECK_THAT(d[0].message, Contains("nodes b, c connect"));
  CHECK_THAT(d[0].message, Contains("add a resistor from 'b' to gnd or across 'I1'"));
  // A voltage source behind a series inductance carries an inductor's current too.
  expectError(kOk + "voltage V2 b gnd dc=1V inductance=1mH\ncurrent I1 b gnd dc=1A\n", 4, 9,
              "only through current sources and inductors (V2, I1)");
  // Accepted: a resistor across the source, a capacitor at the node (it takes the difference),
  // and inductors in series (their currents agree from zero).
  CHECK_NOTHROW(parseNetlist(
      kOk + "current I1 gnd b dc=1A\nresistor R2 b gnd 1k\ninductor L1 b gnd 1H\n", "t.disc"));
  CHECK_NOTHROW(parseNetlist(
      kOk + "current I1 gnd b dc=1A\ncapacitor C1 b gnd 1uF\ninductor L1 b gnd 1H\n", "t.disc"));
  CHECK_NOTHROW(parseNetlist(kOk + "resistor R2 a b 10\ninductor L1 b c 1H\ninductor L2 c gnd 1H\n",
                             "t.disc"));
  // A current source across a resistor's node pair is no cut set of its own.
  CHECK_NOTHROW(parseNetlist(kOk + "current I1 a gnd dc=1mA\n", "t.disc"));
}

TEST_CASE("Loops of ideal voltage sources and capacitors are refused at their source",
          "[netlist][parser][topology]") {
  // The dual of the cut set: an ideal source across capacitors forces their voltage.
  expectError(kOk + "capacitor C1 a gnd 1uF\n", 1, 9,
              "'V1' closes a loop of ideal voltage sources and capacitors (V1, C1): it forces "
              "the voltage of C1");
  // Two capacitors in series across it: both named.
  auto d = errorsOf(kOk + "capacitor C1 a b 1uF\ncapacitor C2 b gnd 1uF\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("(V1, C2, C1)"));
  // With its internal resistance, or with capacitors alone in a loop, it is accepted.
  CHECK_NOTHROW(parseNetlist(
      "voltage V1 a gnd dc=10V resistance=0.1ohm\nresistor R1 a gnd 1k\ncapacitor C1 a gnd 1uF\n",
      "t.disc"));
  CHECK_NOTHROW(parseNetlist(
      kOk + "resistor R2 a b 1k\ncapacitor C1 b gnd 1uF\ncapacitor C2 b gnd 1uF\n", "t.disc"));
  // A loop of sources alone stays the voltage-loop check's, reported once.
  d = errorsOf(kOk + "voltage V2 a gnd dc=5V\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("'V2' closes a loop of voltage sources and inductors"));
}

TEST_CASE("A transient shorter than its report needs is refused at its run statement",
          "[netlist][parser]") {
  const std::string supply =
      "voltage V1 line gnd mains rms=120V frequency=60Hz resistance=1ohm\n"
      "stack SR1 line top type=se-25mm-36v plates=8\ncapacitor C1 top gnd 50uF\n"
      "resistor RL top gnd 2k\noutput top gnd load=RL\n";
  // The report compares the means of whole cycles at the run's end: at 60 Hz two cycles are
  // 33.3 ms.
  expectError(supply + "run transient stop=25ms\n", 6, 1,
              "stop=0.025 s covers 1.5 cycles of 'V1' (60 Hz), and the supply report needs at "
              "least 2");
  auto d = errorsOf(supply + "run transient stop=10ms\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("give stop=0.0333333 s or more"));
  // Two whole cycles are enough; without an output there is no report to make.
  CHECK_NOTHROW(parseNetlist(supply + "run transient stop=33.34ms\n", "t.disc"));
  CHECK_NOTHROW(parseNetlist(
      "voltage V1 a gnd sine rms=1V frequency=50Hz resistance=1ohm\nresistor R1 a gnd 1k\n"
      "run transient stop=5ms\n",
      "t.disc"));
  // Only the analysis the report is made from: a short transient before a periodic run is fine.
  CHECK_NOTHROW(parseNetlist(supply + "run transient stop=5ms\nrun periodic\n", "t.disc"));
  // The report sees the recorded rows only: a long run recorded from near its end is short.
  d = errorsOf(supply + "run transient stop=1s record-from=0.99s\n");
  REQUIRE(d.size() == 1);
  CHECK_THAT(d[0].message, Contains("stop=1 s with record-from=0.99 s records 0.6 cycles"));
  CHECK_THAT(d[0].message, Contains("give stop=1.02333 s or more"));
  // So is the default 1 s run given a record-from from outside the file.
  const auto path = std::filesystem::temp_directory_path() / "disc-report-length-test.disc";
  {
    std::ofstream f(path);
    f << supply;
  }
  TransientOverrides late;
  late.recordFrom = 0.99;
  try {
    (void)loadNetlist(path.string(), IncludePolicy::Trusted, late);
    FAIL("a default run recorded from 0.99 s was accepted");
  } catch (const NetlistError& e) {
    CHECK_THAT(std::string(e.what()), Contains("records 0.6 cycles"));
  }
  late.recordFrom = 0.9;
  CHECK_NOTHROW(loadNetlist(path.string(), IncludePolicy::Trusted, late));
  std::filesystem::remove(path);
}

TEST_CASE("Values outside their range of physical sense are refused at their place",
          "[netlist][parser][ranges]") {
  // The ranges sit in each device's parameter table (docs/netlist.md "Ranges of physical
  // sense"); each refusal names the value and the range.
  expectError(kOk + "resistor R2 a gnd 1e-300\n", 3, 19,
              "R2: resistance 1e-300 ohm is outside 1e-06 to 1e+12 ohm, the range of physical "
              "sense for a resistor");
  expectError(kOk + "resistor R2 a gnd 1e15\n", 3, 19, "outside 1e-06 to 1e+12 ohm");
  expectError(kOk + "capacitor C1 a gnd 100F\n", 3, 20, "outside 1e-15 to 10 F");
  expectError(kOk + "inductor L1 a gnd 20kH\n", 3, 19, "outside 1e-12 to 10000 H");
  expectError(kOk + "voltage V2 b gnd sine rms=1V frequency=10MHz resistance=1ohm\n", 3, 30,
              "frequency 1e+07 Hz is outside 0.01 to 1e+06 Hz");
  expectError(kOk + "voltage V2 b gnd dc=2MV resistance=1ohm\n", 3, 18,
              "dc 2e+06 V is outside -1e+06 to 1e+06 V");
  expectError(kOk + "diode D1 a gnd temperature=5K\n", 3, 16,
              "temperature 5 K is outside 150 to 600 K (or 0 for the default)");
  expectError(kOk + "stack SR1 a b type=se-25mm-36v stored-temp=1000K\nresistor R2 b gnd 1k\n", 3,
              32, "stored-temp 1000 K is outside 200 to 450 K (or 0 for the default)");
  expectError(kOk + "transformer T1 a gnd b gnd ratio=1e5\nresistor R2 b gnd 1k\n", 3, 28,
              "ratio 100000 is outside 0.001 to 1000");
  // A vary value outside the range is refused at its statement, before any variant runs.
  expectError(kOk + "vary R1 resistance 1k 1e-9\n", 3, 1, "resistance 1e-09 ohm is outside");
  // The edges of a range, and 0 where it stands for a default, are accepted.
  CHECK_NOTHROW(parseNetlist(kOk + "resistor R2 a gnd 1e12\ndiode D1 a gnd temperature=0K\n"
                                   "capacitor C1 b gnd 10F\nresistor R3 a b 1e-6\n",
                             "t.disc"));
}

TEST_CASE("setParameter refuses a value outside the table's range", "[devices][ranges]") {
  // The same table serves setParameter (the Python module's set_parameter and campaigns).
  Resistor r("R1", 0, kGround, 1000.0);
  CHECK_THROWS_WITH(r.setParameter("resistance", 1e-300),
                    Contains("R1: resistance 1e-300 ohm is outside 1e-06 to 1e+12 ohm"));
  CHECK(r.resistance() == 1000.0);
  CHECK_NOTHROW(r.setParameter("resistance", 1e-6));
  VoltageSource v("V1", 0, kGround, Waveform::sineRms(230.0, 50.0));
  CHECK_THROWS_WITH(v.setParameter("frequency", 1e9), Contains("outside 0.01 to 1e+06 Hz"));
  CHECK(v.waveform().frequency() == 50.0);
}

TEST_CASE("Every kind's table refuses a value outside its range, at the value",
          "[netlist][parser][ranges]") {
  // One statement per kind that had no range before (docs/netlist.md "Ranges of physical
  // sense"): the diagnostic sits at the parameter and names the value and the range.
  struct Case {
    std::string line, key, range;
  };
  const std::vector<Case> cases = {
      {"current I1 a gnd dc=1MA", "dc=", "dc 1e+06 A is outside -10000 to 10000 A"},
      {"current I1 a gnd sine amplitude=1mA frequency=1GHz",
       "frequency=", "frequency 1e+09 Hz is outside 0.01 to 1e+06 Hz"},
      {"lamp LP1 a gnd rated-power=1MW rated-voltage=230V",
       "rated-power=", "rated-power 1e+06 W is outside 0.001 to 100000 W"},
      {"lamp LP1 a gnd rated-power=60W rated-voltage=230V filament-temp=400K",
       "filament-temp=", "filament-temp 400 K is outside 500 to 3600 K"},
      {"valve-load VL1 a gnd rated-current=1kA rated-voltage=250V",
       "rated-current=", "rated-current 1000 A is outside 1e-06 to 100 A"},
      {"valve-load VL1 a gnd rated-current=60mA rated-voltage=250V warm-up=1e6s",
       "warm-up=", "warm-up 1e+06 s is outside 0.001 to 3600 s"},
      {"electrolytic C9 a gnd capacitance=100F rated-voltage=450V",
       "capacitance=", "capacitance 100 F is outside 1e-08 to 10 F"},
      {"electrolytic C9 a gnd capacitance=50uF rated-voltage=450V esr=1e-9ohm",
       "esr=", "esr 1e-09 ohm is outside 0.0001 to 10000 ohm"},
      {"switch S1 a b close=1s on-resistance=1e-9ohm",
       "on-resistance=", "on-resistance 1e-09 ohm is outside 1e-06 to 1e+12 ohm"},
      {"switch S1 a b close=1s off-resistance=1e15ohm",
       "off-resistance=", "off-resistance 1e+15 ohm is outside 1e-06 to 1e+12 ohm"},
      {"thermistor TH1 a b resistance=1e12ohm b-constant=3000K",
       "resistance=", "resistance 1e+12 ohm is outside 0.001 to 1e+09 ohm"},
      {"diode D1 a gnd saturation-current=10A",
       "saturation-current=", "saturation-current 10 A is outside 1e-30 to 1 A"},
      {"stack SR1 a b type=se-25mm-36v cooling=1e7",
       "cooling=", "cooling 1e+07 is outside 0.01 to 1e+06"},
  };
  for (const Case& c : cases) {
    const int column = static_cast<int>(c.line.find(c.key)) + 1;
    expectError(kOk + c.line + "\nresistor R2 b gnd 1k\n", 3, column, c.range);
  }
  // The heat network's tables too.
  expectError(kOk + "heat-node HS1 capacity=1e12J/K to-ambient=1K/W\n", 3, 15,
              "capacity 1e+12 J/K is outside 0.001 to 1e+08 J/K");
  expectError(kOk +
                  "heat-node HS1 capacity=100J/K to-ambient=1K/W\nheat-path HP1 HS1 ambient "
                  "1e-9K/W\n",
              4, 27, "resistance 1e-09 K/W is outside 0.0001 to 10000 K/W");
  // A switch's resistances stay checked together, by the table's setter as by the parser.
  Switch s("S1", 0, kGround, false, {1.0});
  CHECK_THROWS_WITH(s.setParameter("off-resistance", 1e-4),
                    Contains("open resistance must exceed closed resistance"));
  CHECK(s.offResistance() == 1e9);
  s.setParameter("on-resistance", 0.5);
  CHECK(s.onResistance() == 0.5);
  // A current source's waveform through its table.
  CurrentSource i("I1", 0, kGround, Waveform::sineRms(1.0, 50.0));
  CHECK_THROWS_WITH(i.setParameter("rms", 1e5), Contains("rms 100000 A is outside"));
  i.setParameter("frequency", 60.0);
  CHECK(i.waveform().frequency() == 60.0);
}
