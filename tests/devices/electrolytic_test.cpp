// The electrolytic capacitor: leakage of a stored capacitor decaying under voltage with its
// forming time constant, its energy balance, its slow forming state in the periodic steady
// state and the warm-up envelope, and the netlist.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"

using namespace disc;

namespace {

ElectrolyticParams storedCan() {
  ElectrolyticParams p;
  p.capacitance = 32e-6;
  p.esr = 2.0;
  p.ratedVoltage = 350.0;
  p.deformedLeakFactor = 100.0;
  p.formingTime = 20.0;
  p.storedYears = 20.0;  // forming state exp(-20 / 5) = 0.018 at the start
  return p;
}

}  // namespace

TEST_CASE("Electrolytic leakage: the trade's limit and the stored state",
          "[devices][electrolytic]") {
  ElectrolyticParams p = storedCan();
  const Electrolytic e("C1", 0, 1, p);
  // 0.01 C V (uF, V -> uA) or 3 uA, whichever is larger (common practice): 0.01 x 32 x 350 uA.
  CHECK(e.ratedLeakage() == Approx(112e-6).epsilon(1e-12));
  p.capacitance = 1e-6;
  p.ratedVoltage = 25.0;
  CHECK(Electrolytic("C2", 0, 1, p).ratedLeakage() == Approx(3e-6).epsilon(1e-12));
  CHECK(e.initialForming() == Approx(std::exp(-4.0)).epsilon(1e-12));
  CHECK(e.leakageConductance(1.0) == Approx(112e-6 / 350.0).epsilon(1e-12));
  CHECK(e.leakageConductance(0.0) == Approx(100.0 * 112e-6 / 350.0).epsilon(1e-12));
}

TEST_CASE("Electrolytic leakage decays under voltage with its forming time constant",
          "[devices][electrolytic]") {
  // At a constant voltage v on the oxide, formingTime dF/dt = (1 - F) v / Vr has the solution
  // 1 - F = (1 - F0) exp(-t v / (Vr formingTime)) (a first-order linear ODE), and the leakage
  // g0 v (1 + (k - 1)(1 - F)) decays to g0 v with the time constant Vr formingTime / v.
  const ElectrolyticParams p = storedCan();
  for (double volts : {350.0, 175.0}) {
    Circuit c;
    c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(volts));
    c.emplace<Electrolytic>("C1", c.node("a"), kGround, p);
    TransientOptions o;
    o.stop = 6.0 * p.formingTime * p.ratedVoltage / volts;
    o.tol.reltol = 1e-6;
    o.tol.state = 1e-9;
    o.record = {"leak:C1", "form:C1", "vcap:C1"};
    const Result r = transient(c, o);
    const Electrolytic& e = dynamic_cast<const Electrolytic&>(*c.find("C1"));
    const double f0 = e.initialForming(), g0 = e.ratedLeakage() / p.ratedVoltage;
    const double tau = p.formingTime * p.ratedVoltage / volts;
    const auto& t = r.time();
    double worst = 0.0;
    for (std::size_t k = 0; k < t.size(); ++k) {
      const double excess = (1.0 - f0) * std::exp(-t[k] / tau);
      const double exact = g0 * volts * (1.0 + (p.deformedLeakFactor - 1.0) * excess);
      worst = std::max(worst, std::abs(r["leak:C1"][k] / exact - 1.0));
    }
    INFO(volts << " V: worst relative leakage error " << worst);
    // The ESR drops the oxide's voltage by ESR x leakage (2 ohm x 11 mA = 22 mV at the start,
    // 6e-5 of 350 V); the forming state's local errors (reltol 1e-6) accumulate over some
    // hundred steps and are magnified by k - 1 = 99 in the leakage: 1e-3 covers both.
    CHECK(worst < 1e-3);
    CHECK(r["form:C1"].back() > 0.99);
    CHECK(r["leak:C1"].front() > 50.0 * r["leak:C1"].back());  // high after storage
  }
}

TEST_CASE("Electrolytic energy balance: energy in = ESR and leakage losses + stored energy",
          "[devices][electrolytic]") {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sine(300.0, 50.0, 0.0, 100.0));
  c.emplace<Resistor>("R1", c.node("a"), c.node("b"), 50.0);
  c.emplace<Electrolytic>("C1", c.node("b"), kGround, storedCan());
  TransientOptions o;
  o.stop = 0.3;
  o.start = Start::Cold;
  o.tol.reltol = 1e-7;
  o.maxStep = 2e-5;
  o.record = {"p:C1", "i:C1", "leak:C1", "vcap:C1", "energy:C1"};
  const Result r = transient(c, o);
  const auto& t = r.time();
  double in = 0.0, lost = 0.0;
  auto loss = [&](std::size_t k) {
    const double i = r["i:C1"][k];
    return i * i * 2.0 + r["leak:C1"][k] * r["vcap:C1"][k];
  };
  for (std::size_t k = 1; k < t.size(); ++k) {
    const double h = t[k] - t[k - 1];
    in += 0.5 * h * (r["p:C1"][k] + r["p:C1"][k - 1]);
    lost += 0.5 * h * (loss(k) + loss(k - 1));
  }
  const double stored = r["energy:C1"].back() - r["energy:C1"].front();
  INFO("in " << in << " J, lost " << lost << " J, stored " << stored << " J");
  REQUIRE(lost > 1e-3 * in);  // the losses are a visible part of the balance
  // Trapezoidal sums over steps of at most 20 us of smooth waveforms: their error is below
  // (h^2 / 12) |p''| T, about 1e-5 of the energy at 50 Hz.
  CHECK(in == Approx(lost + stored).epsilon(1e-4));
}

TEST_CASE("Electrolytic forming in the periodic steady state and the warm-up envelope",
          "[devices][electrolytic][periodic][envelope]") {
  // A half-wave rectifier (a silicon diode) charging the stored can through a resistor, with a
  // resistive load: the forming state is slow, held by the periodic steady state and
  // integrated by the envelope.
  ElectrolyticParams p = storedCan();
  p.formingTime = 30.0;
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sineRms(240.0, 50.0));
  c.emplace<Diode>("D1", c.node("a"), c.node("b"));
  c.emplace<Resistor>("R1", c.node("b"), c.node("c"), 100.0);
  c.emplace<Electrolytic>("C1", c.node("c"), kGround, p);
  c.emplace<Resistor>("RL", c.node("c"), kGround, 10e3);
  const double f0 = std::exp(-4.0);

  PeriodicOptions po;
  po.record = {"form:C1", "vcap:C1"};
  const PeriodicResult pr = periodicSteadyState(c, po);
  for (double f : pr.waveforms["form:C1"]) CHECK(f == Approx(f0).epsilon(1e-9));

  EnvelopeOptions eo;
  eo.duration = 300.0;
  eo.record = {"form:C1", "vcap:C1"};
  const EnvelopeResult er = warmUp(c, eo);
  const auto& t = er.series.time();
  const auto& f = er.series["form:C1"];
  const auto& v = er.series["vcap:C1"];
  REQUIRE(t.size() >= 5);
  // Between slow steps dF/dt = (1 - F) <max(v, 0)> / (Vr formingTime), and the oxide's voltage
  // is positive throughout: ln(1 - F) falls by the integral of <v> / (Vr formingTime). The
  // trapezoidal integral of the recorded period means against the forming state:
  double integral = 0.0, worst = 0.0;
  for (std::size_t k = 1; k < t.size(); ++k) {
    integral += 0.5 * (t[k] - t[k - 1]) * (v[k] + v[k - 1]) / (p.ratedVoltage * p.formingTime);
    const double exact = 1.0 - (1.0 - f0) * std::exp(-integral);
    worst = std::max(worst, std::abs(f[k] - exact));
  }
  INFO("slow steps " << er.stats.slowSteps << ", worst forming error " << worst);
  CHECK(f.back() > 0.99);
  // The envelope's state tolerance is 1e-4 absolute; the trapezoidal integral of the period
  // means over its steps adds its own error (the mean voltage moves little once charged).
  CHECK(worst < 2e-3);
}

TEST_CASE("Electrolytic from the netlist language", "[devices][electrolytic][netlist]") {
  Netlist nl = parseNetlist(
      "voltage V1 a gnd dc=10V\n"
      "electrolytic C1 a gnd capacitance=50uF rated-voltage=450V esr=3ohm ripple-current=0.2A "
      "stored-years=15\n");
  const auto& e = dynamic_cast<const Electrolytic&>(*nl.circuit.find("C1"));
  CHECK(e.params().capacitance == Approx(50e-6));
  CHECK(e.params().esr == 3.0);
  CHECK(e.initialForming() == Approx(std::exp(-3.0)));
  CHECK_THROWS_AS(parseNetlist("electrolytic C1 a gnd capacitance=50uF\n"), InputError);
  CHECK_THROWS_AS(
      parseNetlist("electrolytic C1 a gnd capacitance=50uF rated-voltage=450V forming=2\n"),
      InputError);
}

TEST_CASE("The supply report judges an electrolytic's voltage and ripple current",
          "[devices][electrolytic][report]") {
  // A half-wave rectifier on a 160 V-rated reservoir at 120 V rms: the crest, about 169 V less
  // the diode's drop, exceeds the rating; the ripple current of a 2 kohm load on 50 uF is tens
  // of mA rms against a 1 A rating.
  Netlist nl = parseNetlist(
      "voltage V1 a gnd rms=120V frequency=60Hz resistance=1ohm\n"
      "diode D1 a b\n"
      "electrolytic C1 b gnd capacitance=50uF rated-voltage=160V ripple-current=1A esr=1ohm\n"
      "resistor RL b gnd 2kohm\n"
      "output b gnd load=RL\n");
  TransientOptions o;
  o.stop = 0.5;
  o.record = reportSignals(nl);
  const SupplyReport rep = makeSupplyReport(nl, transient(nl.circuit, o));
  REQUIRE(rep.parts.size() == 1);
  const auto& v = rep.parts[0].verdicts;
  REQUIRE(v.size() == 2);
  CHECK(v[0].figure == "peak voltage");
  CHECK(v[0].value > 160.0);
  CHECK(v[0].value < 120.0 * std::sqrt(2.0));
  CHECK(v[0].level == "exceeds");
  CHECK(v[1].level == "ok");
  CHECK(rep.worst == "exceeds");
}
