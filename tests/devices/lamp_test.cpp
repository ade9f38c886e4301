// The series lamp: its rating, its cold and hot resistance, its inrush and its filament's
// thermal time constant, against Ohm's law, the rating's definition and closed forms.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "disc/disc.hpp"

using namespace disc;

namespace {

/// A 60 W 230 V lamp (the defaults) across a source; returns the result of the analysis.
Result lampAcross(Waveform w, double stop, Start start, std::vector<std::string> record,
                  double reltol = 1e-5) {
  Circuit c;
  c.emplace<VoltageSource>("V1", c.node("a"), kGround, std::move(w));
  c.emplace<Lamp>("L1", c.node("a"), kGround, LampParams{});
  if (stop == 0.0) {
    OperatingPointOptions o;
    o.tol.reltol = 1e-9;
    o.record = std::move(record);
    return operatingPoint(c, o);
  }
  TransientOptions o;
  o.stop = stop;
  o.start = start;
  o.tol.reltol = reltol;
  o.tol.temperature = 1e-6;
  o.record = std::move(record);
  return transient(c, o);
}

}  // namespace

TEST_CASE("At its rated voltage a lamp draws its rated power at its rated temperature",
          "[devices][lamp]") {
  // The rating printed on a bulb: 60 W at 230 V, so R_hot = V^2 / P = 881.7 ohm.
  const Result r = lampAcross(Waveform::dc(230.0), 0.0, Start::Cold, {"p:L1", "temp:L1", "r:L1"});
  CHECK(r["p:L1"][0] == Approx(60.0).epsilon(1e-6));
  CHECK(r["temp:L1"][0] == Approx(2700.0).epsilon(1e-6));
  CHECK(r["r:L1"][0] == Approx(230.0 * 230.0 / 60.0).epsilon(1e-6));
}

TEST_CASE("A lamp's cold resistance is a tenth to a fifteenth of its hot", "[devices][lamp]") {
  // Measured as a meter would: at 0.1 V the filament stays at the ambient.
  const Result cold = lampAcross(Waveform::dc(0.1), 0.0, Start::Cold, {"i:L1", "temp:L1"});
  const Result hot = lampAcross(Waveform::dc(230.0), 0.0, Start::Cold, {"i:L1"});
  CHECK(cold["temp:L1"][0] == Approx(298.15).margin(0.1));
  const double ratio = (230.0 / hot["i:L1"][0]) / (0.1 / cold["i:L1"][0]);
  // Hot to cold 10-15 for tungsten lamps (common practice).
  CHECK(ratio > 10.0);
  CHECK(ratio < 15.0);
}

TEST_CASE("On AC a lamp draws the power of the DC of the same rms value", "[devices][lamp]") {
  // The rms value is by definition the DC voltage of the same heating; the filament's time
  // constant (tens of ms) smooths the 100 Hz heating to a ripple of about 1 % in resistance.
  const Result r =
      lampAcross(Waveform::sineRms(230.0, 50.0), 1.0, Start::Cold, {"p:L1", "temp:L1"});
  const double p = measure::mean(r.time(), r["p:L1"], 0.8, 1.0);
  CHECK(p == Approx(60.0).epsilon(0.01));
  CHECK(measure::mean(r.time(), r["temp:L1"], 0.8, 1.0) == Approx(2700.0).epsilon(0.005));
}

TEST_CASE("Switched on at the crest, a cold lamp's inrush is the crest over its cold resistance",
          "[devices][lamp]") {
  Waveform w = Waveform::sineRms(230.0, 50.0, std::numbers::pi / 2.0);
  w.gate(0.0);
  const Result r = lampAcross(w, 0.2, Start::Cold, {"i:L1"});
  Lamp lamp("L", 0, kGround, LampParams{});
  const double crest = std::numbers::sqrt2 * 230.0;
  const double inrush = measure::maximum(r.time(), r["i:L1"], 0.0, 2e-3);
  // Ohm's law at the first instant, before the filament has warmed.
  CHECK(inrush == Approx(crest / lamp.resistanceAt(298.15)).epsilon(0.02));
  // Running peak: the crest over the hot resistance (Ohm's law at the rated temperature).
  const double running = measure::maximum(r.time(), r["i:L1"], 0.15, 0.2);
  CHECK(running == Approx(crest / lamp.hotResistance()).epsilon(0.02));
}

TEST_CASE("A lamp's filament settles with its linearised thermal time constant",
          "[devices][lamp]") {
  // Around the rated point the heat balance C dT/dt = V^2/R(T) - k (T^4 - Ta^4) - g (T - Ta)
  // is linear to first order: dT relaxes as exp(-t / tau_eff) with
  // tau_eff = C / (4 k Th^3 + g + exponent P / Th) (the electrical power falls as R rises).
  // C is defined by the lamp's time constant: C = tau (4 k Th^3 + g).
  const LampParams lp;
  const double ta = 298.15, th = lp.filamentTemp, p = lp.ratedPower;
  const double k = (1.0 - lp.conduction) * p / (std::pow(th, 4) - std::pow(ta, 4));
  const double g = lp.conduction * p / (th - ta);
  const double slope = 4.0 * k * th * th * th + g;
  const double tauEff = lp.timeConstant * slope / (slope + lp.exponent * p / th);
  // A 0.2 % step of the voltage from the rated point (a small signal).
  const Result r = lampAcross(Waveform::points({{0.0, 230.0}, {1e-6, 230.46}}), 12.0 * tauEff,
                              Start::OperatingPoint, {"temp:L1"}, 1e-8);
  const auto& t = r.time();
  const auto& temp = r["temp:L1"];
  const double t0 = temp.front(), tEnd = temp.back();
  REQUIRE(tEnd - t0 > 1.0);  // the step moves the filament
  // The remaining fraction at tau_eff and at 2 tau_eff: e^-1 and e^-2.
  for (double n : {1.0, 2.0}) {
    std::size_t j = 0;
    while (t[j] < n * tauEff) ++j;
    const double f = (t[j] - n * tauEff) / (t[j] - t[j - 1]);
    const double at = temp[j] - f * (temp[j] - temp[j - 1]);
    CHECK((tEnd - at) / (tEnd - t0) == Approx(std::exp(-n)).epsilon(0.01));
  }
}
