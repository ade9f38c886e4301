// Ageing as a state of each plate: it accumulates in every time-domain run, weighted by the
// plate's own temperature, and its calibration against the trade's figure.
#include <catch2/catch.hpp>
#include <cmath>

#include <vector>

#include "disc/disc.hpp"

using namespace disc;

namespace {

/// A radio HT supply with its stack at rated load (an invented example): 120 V rms, 60 Hz,
/// half-wave, 10 ohm surge resistor, ten 26 V plates (capacitive rating 13 V rms each: 120 V
/// needs ten), 40 uF reservoir, and a load drawing about the plates' rated 150 mA.
Circuit radioHt(double hours, double ageKelvin) {
  Circuit c;
  c.setAmbient(308.15);  // the 35 degC ambient of the plates' full rating
  c.emplace<VoltageSource>("V1", c.node("line"), kGround,
                           Waveform::sine(120.0 * std::sqrt(2.0), 60.0));
  c.emplace<Resistor>("RS", c.node("line"), c.node("a"), 10.0);
  StackOptions o;
  o.plates = 10;
  o.mode = StackMode::Lumped;
  o.ageHours = hours;
  o.ageTemperature = ageKelvin;
  c.emplace<Stack>("SR1", c.node("a"), c.node("b"), PlateLibrary::builtIn().at("se-25mm-square"),
                   o);
  c.emplace<Capacitor>("C1", c.node("b"), kGround, 40e-6);
  c.emplace<Resistor>("RL", c.node("b"), kGround, 900.0);
  return c;
}

/// The Arrhenius weight of an hour at plate temperature `kelvin` (docs/plate-model.md, law 9),
/// written here again.
double weight(const PlateType& t, double kelvin) {
  return std::exp(t.history.ageActivationEv / constants::kBoltzmannEv *
                  (1.0 / t.physics.t0 - 1.0 / kelvin));
}

/// Trapezoidal integral of the weight over a temperature series, in hours.
double weightedHours(const PlateType& t, const std::vector<double>& time,
                     const std::vector<double>& kelvin) {
  double h = 0.0;
  for (std::size_t k = 1; k < time.size(); ++k)
    h += 0.5 * (weight(t, kelvin[k - 1]) + weight(t, kelvin[k])) * (time[k] - time[k - 1]);
  return h / 3600.0;
}

}  // namespace

TEST_CASE("Ageing accumulates in a transient, weighted at the plate's own temperature",
          "[plate][ageing]") {
  // A plate heated by a constant forward current: its hours weighted to t0 are the integral of
  // exp((Eage/k)(1/t0 - 1/T(t))) over its own temperature (law 9). The test integrates the
  // recorded temperature by the trapezoidal rule, as the engine's trapezoidal steps do: the
  // two agree to the tolerance of the temperature (1e-4 relative allows for it).
  const PlateType& t = PlateLibrary::builtIn().at("se-25mm-square");
  Circuit c;
  c.setAmbient(300.0);
  c.emplace<CurrentSource>("I1", kGround, c.node("a"), Waveform::dc(0.3));
  c.emplace<Stack>("SR1", c.node("a"), kGround, t, StackOptions{});
  TransientOptions o;
  o.stop = 600.0;
  o.start = Start::Cold;
  o.record = {"temp:SR1", "hours:SR1", "age:SR1"};
  const Result r = transient(c, o);
  const double hours = r["hours:SR1"].back();
  const double expected = weightedHours(t, r.time(), r["temp:SR1"]);
  INFO("hours " << hours << " against " << expected << "; plate at " << r["temp:SR1"].back()
                << " K");
  CHECK(hours == Approx(expected).epsilon(1e-4));
  // Hot hours count for more: the plate warms by about 20 K, so well over its 1/6 h.
  CHECK(r["temp:SR1"].back() > 315.0);
  CHECK(hours > 1.5 * o.stop / 3600.0);
  // The Rs factor follows from the hours: 1 + a ln(1 + H/H0).
  CHECK(r["age:SR1"].back() ==
        Approx(1.0 + t.history.ageCoefficient * std::log1p(hours / t.history.ageHoursScale))
            .epsilon(1e-12));
}

TEST_CASE("Ageing accumulates in a warm-up, and a starting age is kept", "[plate][ageing]") {
  // The warm-up integrates the same state on period averages: its hours over 3 h of the radio
  // HT supply against the trapezoidal integral of the weight over its own temperature rows.
  // The rows are coarse while the plates warm (the first 0.3 h of 3 h, 25 K), so 1 % holds.
  const PlateType& t = PlateLibrary::builtIn().at("se-25mm-square");
  EnvelopeOptions eo;
  eo.duration = 3 * 3600.0;
  eo.record = {"temp:SR1", "hours:SR1"};
  const EnvelopeResult er = warmUp(radioHt(0.0, 0.0), eo);
  const auto& r = er.series;
  CHECK(r["hours:SR1"].back() == Approx(weightedHours(t, r.time(), r["temp:SR1"])).epsilon(1e-2));
  // A starting age: 15 000 h at 45 degC is H w(318.15 K) hours at t0, and grows from there.
  const EnvelopeResult aged = warmUp(radioHt(15000.0, 318.15), eo);
  const double start = 15000.0 * weight(t, 318.15);
  CHECK(aged.series["hours:SR1"].front() == Approx(start).epsilon(1e-9));
  CHECK(aged.series["hours:SR1"].back() - start ==
        Approx(weightedHours(t, aged.series.time(), aged.series["temp:SR1"])).epsilon(1e-2));
}

TEST_CASE("A radio HT stack at rated load loses 5-10 % of its output over a rated life",
          "[plate][ageing]") {
  // The calibration statement of the ageing law (from memory: output falls about 5-10 % over
  // life; selenium life 60 000-100 000 h, from memory): the supply new, warmed up for 3 h, and
  // the same supply with 75 000 h run at the plates' own warm temperature, warmed up alike.
  EnvelopeOptions eo;
  eo.duration = 3 * 3600.0;
  eo.record = {"v:b", "temp:SR1", "i:SR1"};
  const EnvelopeResult fresh = warmUp(radioHt(0.0, 0.0), eo);
  const double warm = fresh.series["temp:SR1"].back();
  const EnvelopeResult old = warmUp(radioHt(75000.0, warm), eo);
  const double loss = 1.0 - old.series["v:b"].back() / fresh.series["v:b"].back();
  INFO("new " << fresh.series["v:b"].back() << " V at " << fresh.series["i:SR1"].back()
              << " A, plates at " << warm - 273.15 << " degC; aged " << old.series["v:b"].back()
              << " V: loss " << 100 * loss << " %");
  // At rated load: the DC current within 10 % of the plates' rated 150 mA.
  CHECK(fresh.series["i:SR1"].back() == Approx(0.15).epsilon(0.1));
  CHECK(loss > 0.05);
  CHECK(loss < 0.10);
}
