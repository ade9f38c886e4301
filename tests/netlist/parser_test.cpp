// The netlist parser: every error class reported with its location and an actionable message.
#include <catch2/catch.hpp>
#include <filesystem>

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
                   "capacitor C1 a gnd 2.2uF\ncapacitor C2 a gnd 10nF\n"
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
  CHECK(d.size() >= 3);  // and the node left dangling by the rejected elements
  // The message carries the line and a caret under the fault.
  const std::string text = d.front().format();
  CHECK_THAT(text, Contains("t.disc:2:19: error:"));
  CHECK_THAT(text, Contains("resistor R1 a gnd 1q\n"));
  CHECK_THAT(text, Contains("^"));
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
                                 "thermal-resistance", "heat-capacity", "temperature"});
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
