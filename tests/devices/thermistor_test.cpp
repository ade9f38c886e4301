// The NTC surge thermistor: its B-parameter law against the formula and a datasheet-style
// table, its self-heating steady state against Lambert's W and an independent root, its energy
// balance, and its slow temperature in the periodic steady state and the warm-up envelope.
#include <boost/math/special_functions/lambert_w.hpp>
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "disc/disc.hpp"

using namespace disc;

namespace {

/// The root of a heat balance f(T) (net cooling, W) that changes sign from negative to positive
/// once in [lo, hi], by bisection: an evaluation independent of the library's Newton.
template <class Balance>
double rootByBisection(Balance f, double lo, double hi) {
  for (int k = 0; k < 200; ++k) {
    const double mid = 0.5 * (lo + hi);
    (f(mid) > 0.0 ? hi : lo) = mid;
  }
  return 0.5 * (lo + hi);
}

/// The steady body temperature (K) of a thermistor carrying a constant current `amps`: the root
/// of dissipation (T - Ta) - I^2 R(T), which grows strictly with T (R falls).
double bisectSteady(const ThermistorParams& p, double ambient, double amps) {
  auto f = [&](double t) {
    const double r = p.resistance * std::exp(p.bConstant * (1.0 / t - 1.0 / p.referenceTemp));
    return p.dissipation * (t - ambient) - amps * amps * r;
  };
  return rootByBisection(f, ambient, ambient + 700.0);
}

double operatingTemperature(const ThermistorParams& p, double ambient, double amps) {
  Circuit c;
  c.setAmbient(ambient);
  c.emplace<CurrentSource>("I1", kGround, c.node("a"), Waveform::dc(amps));
  c.emplace<Thermistor>("TH1", c.node("a"), kGround, p);
  OperatingPointOptions o;
  o.tol.reltol = 1e-11;
  o.tol.temperature = 1e-10;
  o.record = {"temp:TH1", "r:TH1"};
  return operatingPoint(c, o)["temp:TH1"].front();
}

}  // namespace

TEST_CASE("Thermistor law: the B-parameter formula and a datasheet-style table",
          "[devices][thermistor]") {
  ThermistorParams p;
  p.resistance = 5.0;
  p.bConstant = 2800.0;
  const Thermistor th("TH1", 0, 1, p);
  // R = R25 exp(B (1/T - 1/T25)), the standard datasheet form (EPCOS/TDK NTC application notes;
  // IEC 60539-1 defines the B value the same way (from memory)).
  for (double t = 220.0; t <= 480.0; t += 13.0)
    CHECK(th.resistanceAt(t) ==
          Approx(5.0 * std::exp(2800.0 * (1.0 / t - 1.0 / 298.15))).epsilon(1e-12));
  // A datasheet's resistance-temperature table for R25 = 5 ohm and B = 2800 K, the values
  // computed from the B law with Python's decimal module at 30 digits (an evaluation
  // independent of this library's arithmetic): degC, ohm.
  const std::pair<double, double> table[] = {
      {-25, 33.1714570810989766}, {0, 11.8102743016163245},  {25, 5.0},
      {50, 2.41789829053419661},  {85, 1.03680644912874121}, {100, 0.757203483288603365},
      {150, 0.311994652866475471}};
  for (auto [celsius, ohm] : table) {
    INFO(celsius << " degC");
    CHECK(std::abs(th.resistanceAt(celsius + 273.15) / ohm - 1.0) < 1e-9);
  }
  // The datasheet's B25/85: ln(R25 / R85) / (1/T25 - 1/T85) returns B.
  const double b2585 =
      std::log(th.resistanceAt(298.15) / th.resistanceAt(358.15)) / (1.0 / 298.15 - 1.0 / 358.15);
  CHECK(b2585 == Approx(2800.0).epsilon(1e-9));
}

TEST_CASE("Thermistor self-heating: Lambert-W steady state and an independent root",
          "[devices][thermistor]") {
  ThermistorParams p;
  p.resistance = 10.0;
  p.bConstant = 3000.0;
  p.dissipation = 0.01;
  SECTION("heat sink at (nearly) absolute zero: exact Lambert W") {
    // With the heat sink at Ta -> 0 the balance dissipation T = I^2 Rinf exp(B/T), Rinf =
    // R25 exp(-B/T25), gives (B/T) exp(B/T) = B dissipation / (I^2 Rinf), so
    // T = B / W0(B dissipation / (I^2 Rinf)) (Lambert's W, Corless et al., Adv. Comput. Math.
    // 5, 329, 1996; Boost.Math's lambert_w0). An ambient of 1e-9 K moves T by about 1e-9 K.
    for (double amps : {0.5, 1.0, 2.0}) {
      const double rinf = 10.0 * std::exp(-3000.0 / 298.15);
      const double exact = 3000.0 / boost::math::lambert_w0(3000.0 * 0.01 / (amps * amps * rinf));
      INFO(amps << " A: exact " << exact << " K");
      CHECK(operatingTemperature(p, 1e-9, amps) == Approx(exact).epsilon(1e-9));
    }
  }
  SECTION("room ambient: the bisection root of the balance") {
    for (double amps : {0.2, 1.0, 3.0}) {
      const double exact = bisectSteady(p, 298.15, amps);
      INFO(amps << " A: exact " << exact << " K");
      CHECK(operatingTemperature(p, 298.15, amps) == Approx(exact).epsilon(1e-9));
    }
  }
}

TEST_CASE("Thermistor energy balance: electrical energy in = heat lost + heat stored",
          "[devices][thermistor]") {
  ThermistorParams p;
  p.resistance = 20.0;
  p.bConstant = 3500.0;
  p.dissipation = 0.02;
  p.timeConstant = 2.0;
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::dc(30.0).gate(0.0));
  c.emplace<Thermistor>("TH1", c.node("a"), c.node("b"), p);
  c.emplace<Resistor>("RL", c.node("b"), kGround, 15.0);
  TransientOptions o;
  o.stop = 6.0;
  o.start = Start::Cold;
  o.tol.reltol = 1e-7;
  o.record = {"p:TH1", "temp:TH1"};
  const Result r = transient(c, o);
  const auto& t = r.time();
  double in = 0.0, lost = 0.0;
  for (std::size_t k = 1; k < t.size(); ++k) {
    const double h = t[k] - t[k - 1];
    in += 0.5 * h * (r["p:TH1"][k] + r["p:TH1"][k - 1]);
    lost += 0.5 * h * p.dissipation * (r["temp:TH1"][k] + r["temp:TH1"][k - 1] - 2.0 * c.ambient());
  }
  const double stored = p.dissipation * p.timeConstant * (r["temp:TH1"].back() - c.ambient());
  INFO("in " << in << " J, lost " << lost << " J, stored " << stored << " J");
  REQUIRE(stored > 1.0);  // the body did heat
  // The trapezoidal sums of the recorded steps are the integrator's own rule; their error is
  // of the order of the local tolerance (1e-7 relative) times the steps.
  CHECK(in == Approx(lost + stored).epsilon(1e-4));
}

namespace {

/// A mains source feeding a resistor through a surge thermistor.
Circuit mainsThroughThermistor(const ThermistorParams& p, double vrms, double load) {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, Waveform::sineRms(vrms, 50.0));
  c.emplace<Thermistor>("TH1", c.node("a"), c.node("b"), p);
  c.emplace<Resistor>("RL", c.node("b"), kGround, load);
  return c;
}

}  // namespace

TEST_CASE("Thermistor in the periodic steady state and the warm-up envelope",
          "[devices][thermistor][periodic][envelope]") {
  ThermistorParams p;
  p.resistance = 20.0;
  p.bConstant = 3000.0;
  p.dissipation = 0.01;
  p.timeConstant = 30.0;
  const double vrms = 50.0, load = 100.0, ta = 298.15;
  const Circuit c = mainsThroughThermistor(p, vrms, load);

  // Periodic steady state: the body temperature is held at its start (cold, R = R25 at the
  // 25 degC ambient), so the current is the sine V sqrt 2 / (R25 + RL).
  PeriodicOptions po;
  po.record = {"i:TH1", "temp:TH1"};
  const PeriodicResult pr = periodicSteadyState(c, po);
  double peak = 0.0;
  for (double i : pr.waveforms["i:TH1"]) peak = std::max(peak, std::abs(i));
  CHECK(peak == Approx(vrms * std::numbers::sqrt2 / (20.0 + load)).epsilon(1e-3));
  CHECK(pr.waveforms["temp:TH1"].front() == Approx(ta).epsilon(1e-12));

  // Warm-up: the body settles where its period-average heating V^2 R / (R + RL)^2 (a resistive
  // divider's mean power) equals dissipation (T - Ta); bisection on that balance.
  auto balance = [&](double t) {
    const double r = 20.0 * std::exp(3000.0 * (1.0 / t - 1.0 / 298.15));
    return p.dissipation * (t - ta) - vrms * vrms * r / ((r + load) * (r + load));
  };
  const double steady = rootByBisection(balance, ta, ta + 500.0);
  EnvelopeOptions eo;
  eo.duration = 10.0 * p.timeConstant;  // the loop's own time constant is shorter (NTC feedback)
  eo.record = {"temp:TH1"};
  const EnvelopeResult er = warmUp(c, eo);
  const auto& temp = er.series["temp:TH1"];
  INFO("steady " << steady << " K, envelope end " << temp.back() << " K, slow steps "
                 << er.stats.slowSteps);
  REQUIRE(steady - ta > 20.0);  // a real self-heating case
  // The envelope's slow tolerance: reltol 1e-3 of the rise plus 0.02 K; after ten time
  // constants the remaining transient is below exp(-10) of the rise.
  CHECK(std::abs(temp.back() - steady) < 1e-3 * (steady - ta) + 0.05);
  CHECK(temp.front() == Approx(ta).epsilon(1e-9));
}

TEST_CASE("Thermistor from the netlist language", "[devices][thermistor][netlist]") {
  Netlist nl = parseNetlist(
      "voltage V1 a gnd dc=10V\n"
      "thermistor TH1 a b resistance=5ohm b-constant=2800K dissipation=15m time-constant=60s\n"
      "resistor R1 b gnd 100ohm\n");
  const auto& th = dynamic_cast<const Thermistor&>(*nl.circuit.find("TH1"));
  CHECK(th.params().resistance == 5.0);
  CHECK(th.params().dissipation == Approx(0.015));
  CHECK_THROWS_AS(parseNetlist("thermistor TH1 a gnd b-constant=2800K\n"), InputError);
  CHECK_THROWS_AS(parseNetlist("thermistor TH1 a gnd resistance=5 b-constant=20K\n"), InputError);
}
