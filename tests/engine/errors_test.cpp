// Failures are typed and name what the user must fix.
#include <catch2/catch.hpp>

#include "disc/disc.hpp"

using namespace disc;
using Catch::Matchers::Contains;

TEST_CASE("A node with no DC path names the node", "[engine][errors]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("in"), kGround, Waveform::dc(1.0));
  c.emplace<Capacitor>("C1", c.node("in"), c.node("island"), 1e-6);
  c.emplace<Capacitor>("C2", c.node("island"), kGround, 1e-6);
  REQUIRE_THROWS_AS(operatingPoint(c), SingularCircuitError);
  REQUIRE_THROWS_WITH(operatingPoint(c), Contains("island"));
  // Started cold, the capacitive divider is well posed.
  TransientOptions o;
  o.stop = 1e-3;
  o.start = Start::Cold;
  CHECK_NOTHROW(transient(c, o));
}

TEST_CASE("A loop of voltage sources names the closing source", "[engine][errors]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(1.0));
  c.emplace<VoltageSource>("V2", c.node("a"), kGround, Waveform::dc(2.0));
  REQUIRE_THROWS_AS(operatingPoint(c), SingularCircuitError);
  REQUIRE_THROWS_WITH(operatingPoint(c), Contains("V2"));
  TransientOptions o;
  o.stop = 1e-3;
  o.start = Start::Cold;
  REQUIRE_THROWS_AS(transient(c, o), SingularCircuitError);
}

TEST_CASE("Bad values are refused with the device and unit named", "[engine][errors]") {
  Circuit c;
  REQUIRE_THROWS_WITH(c.emplace<Resistor>("R1", c.node("a"), kGround, -5.0),
                      Contains("R1") && Contains("ohm"));
  REQUIRE_THROWS_AS(c.emplace<Capacitor>("C1", c.node("a"), kGround, 0.0), InputError);
  c.emplace<Resistor>("R2", c.node("a"), kGround, 5.0);
  REQUIRE_THROWS_WITH(c.emplace<Resistor>("R2", c.node("a"), kGround, 5.0),
                      Contains("already exists"));
  REQUIRE_THROWS_AS(Waveform::sine(1.0, -50.0), InputError);
  REQUIRE_THROWS_AS(Waveform::points({{0, 0}, {0, 1}}), InputError);
  REQUIRE_THROWS_AS(parseMethod("euler"), InputError);
  TransientOptions o;
  REQUIRE_THROWS_WITH(transient(c, o), Contains("stop time"));
}

TEST_CASE("Unknown signals list what exists", "[engine][errors]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(1.0));
  c.emplace<Resistor>("R1", c.node("a"), kGround, 5.0);
  OperatingPointOptions o;
  o.record = {"v:nowhere"};
  REQUIRE_THROWS_WITH(operatingPoint(c, o), Contains("nowhere"));
  o.record = {"temp:R1"};
  REQUIRE_THROWS_WITH(operatingPoint(c, o), Contains("it has: i, p"));
  o.record = {"i:R1"};
  const Result r = operatingPoint(c, o);
  REQUIRE_THROWS_WITH(r["v:a"], Contains("i:R1"));
  CHECK(r.unit("i:R1") == "A");
}

TEST_CASE("A progress callback can cancel a run", "[engine][errors]") {
  Circuit c = reference::halfWaveRc();
  TransientOptions o;
  o.stop = 0.1;
  o.progress = [](double t, double) { return t < 0.01; };
  REQUIRE_THROWS_AS(transient(c, o), Cancelled);
}

TEST_CASE("Cloned circuits run independently", "[engine][clone]") {
  Circuit a = reference::halfWaveRc();
  Circuit b = a;
  static_cast<Capacitor&>(b.at("C1")).setCapacitance(3300e-6);
  TransientOptions o;
  o.stop = 0.1;
  o.record = {"v:out"};
  const Result ra = transient(a, o), rb = transient(b, o);
  const auto fa = measure::outputFigures(ra.time(), ra["v:out"], 60.0);
  const auto fb = measure::outputFigures(rb.time(), rb["v:out"], 60.0);
  CHECK(fb.ripplePeakToPeak < 0.1 * fa.ripplePeakToPeak);
  CHECK(static_cast<Capacitor&>(a.at("C1")).capacitance() == 100e-6);
}

TEST_CASE("Device parameters by netlist name, checked like the constructors",
          "[engine][parameters]") {
  Netlist nl = parseNetlist(
      "voltage V1 a gnd sine rms=20V frequency=50Hz\nstack S1 a b type=se-25mm-square plates=2\n"
      "resistor RL b gnd 100\ncapacitor C1 b gnd 10u\n");
  Device& s = nl.circuit.at("S1");
  CHECK(s.parameter("plates") == 2.0);
  s.setParameter("plates", 5);
  CHECK(static_cast<Stack&>(s).plateCount() == 5);
  REQUIRE_THROWS_WITH(s.setParameter("plates", 0), Contains("at least one plate"));
  REQUIRE_THROWS_WITH(s.setParameter("plates", 2.5), Contains("whole number"));
  REQUIRE_THROWS_WITH(s.parameter("plate"), Contains("did you mean 'plates'"));
  nl.circuit.at("RL").setParameter("resistance", 220.0);
  CHECK(static_cast<Resistor&>(nl.circuit.at("RL")).resistance() == 220.0);
  REQUIRE_THROWS_WITH(nl.circuit.at("RL").setParameter("resistance", -1), Contains("positive"));
  // Elements added through the element API meet the same checks and messages as the language.
  REQUIRE_THROWS_WITH(addElement(nl, "capacitor", "C2", {"b", "gnd"}, {{"capacitance", "-1u"}}),
                      Contains("must be positive"));
  addElement(nl, "capacitor", "C2", {"b", "gnd"}, {{"capacitance", "22u"}});
  CHECK(nl.circuit.find("C2") != nullptr);
}
