// NTC surge thermistor: the B-parameter law, self-heated through its own thermal state.
#include "disc/devices/thermistor.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "check.hpp"
#include "disc/circuit.hpp"

namespace disc {
namespace {

// The law's temperature range: exp(B / T) stays finite for any B the check admits, and a
// thermistor outside it has long failed.
constexpr double kLowestLawTemp = 100.0, kHighestLawTemp = 1000.0;

}  // namespace

void ThermistorParams::validate() const {
  detail::requirePositive("thermistor", "resistance", resistance, "ohm");
  if (!(bConstant >= 100.0 && bConstant <= 2.0e4))
    throw InputError(fmt::format(
        "thermistor: the B constant must lie in 100-20000 K (surge thermistors: 2500-4500 K), "
        "got {} K",
        bConstant));
  if (!(referenceTemp >= kLowestLawTemp && referenceTemp <= kHighestLawTemp))
    throw InputError(fmt::format(
        "thermistor: the reference temperature must lie in 100-1000 K (datasheets: 298.15 K, "
        "25 degC), got {} K",
        referenceTemp));
  detail::requirePositive("thermistor", "dissipation constant", dissipation, "W/K");
  detail::requirePositive("thermistor", "thermal time constant", timeConstant, "s");
  detail::requireNonNegative("thermistor", "rated current", maxCurrent, "A");
}

Thermistor::Thermistor(std::string name, NodeId a, NodeId b, const ThermistorParams& params)
    : DeviceBase(std::move(name), {a, b}) {
  setParams(params);
}

const std::vector<DeviceParameter>& Thermistor::parameterTable() const {
  // The one list of the thermistor's netlist names (parser, setParameter, Python), with units.
  constexpr auto field = paramsField<Thermistor, ThermistorParams>;
  static const std::vector<DeviceParameter> t = {
      field("resistance", &ThermistorParams::resistance, "ohm", {}).within(1e-3, 1e9),
      field("b-constant", &ThermistorParams::bConstant, "K", {}).within(100.0, 2e4),
      field("reference-temp", &ThermistorParams::referenceTemp, "K", {})
          .within(kLowestLawTemp, kHighestLawTemp),
      field("dissipation", &ThermistorParams::dissipation, "W/K", {}).within(1e-5, 100.0),
      field("time-constant", &ThermistorParams::timeConstant, "s", {}).within(1e-3, 1e4),
      field("max-current", &ThermistorParams::maxCurrent, "A", {}).within(0.0, 1e3)};
  return t;
}

void Thermistor::setParams(const ThermistorParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
}

void Thermistor::prepare(const Circuit& c) {
  ambient_ = c.ambient();
}

double Thermistor::resistanceAt(double kelvin) const {
  return p_.resistance * std::exp(p_.bConstant * (1.0 / kelvin - 1.0 / p_.referenceTemp));
}

double Thermistor::lawTemperature(double rise) const {
  return std::clamp(ambient_ + rise, kLowestLawTemp, kHighestLawTemp);
}

std::vector<UnknownSpec> Thermistor::internalUnknowns() const {
  // Slow: the body's time constant is tens of seconds, its ripple over a mains cycle tiny.
  return {{"temp", UnknownKind::Temperature, /*slow=*/true}};
}

void Thermistor::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
  th_ = b.internals[0];
}

void Thermistor::declare(PatternBuilder& pb) {
  sv_.declare(pb, a_, b_);
  pb.entry(a_, th_, sAT_);
  pb.entry(b_, th_, sBT_);
  pb.entry(th_, a_, sTA_);
  pb.entry(th_, b_, sTB_);
  pb.entry(th_, th_, sTT_);
}

void Thermistor::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double rise = ctx.x[th_], t = lawTemperature(rise);
  const double inside = t == ambient_ + rise ? 1.0 : 0.0;  // clamped: no slope
  const double v = ctx.x[a_] - ctx.x[b_];
  const double g = 1.0 / resistanceAt(t);
  const double i = g * v, pel = i * v;
  s.i[a_] += i;
  s.i[b_] -= i;
  // Heat balance: cth d(rise)/dt = v^2 / R(T) - dissipation rise.
  const double cth = heatCapacity();
  s.i[th_] += p_.dissipation * rise - pel;
  s.q[th_] += cth * rise;
  if (!s.jacobian) return;
  const double dgdT = g * p_.bConstant / (t * t) * inside;  // d(1/R)/dT > 0: NTC
  sv_.add(s.G, g);
  s.G[sAT_] += dgdT * v;
  s.G[sBT_] -= dgdT * v;
  s.G[sTA_] -= 2.0 * i;
  s.G[sTB_] += 2.0 * i;
  s.G[sTT_] += p_.dissipation - dgdT * v * v;
  s.C[sTT_] += cth;
}

std::string Thermistor::probeUnit(int k) const {
  static const char* const u[] = {"A", "W", "K", "ohm"};
  return k >= 0 && k < 4 ? u[k] : "";
}

double Thermistor::probe(int k, const EvalContext& ctx) const {
  if (k == 2) return ambient_ + ctx.x[th_];
  const double r = resistanceAt(lawTemperature(ctx.x[th_]));
  if (k == 3) return r;
  const double v = ctx.x[a_] - ctx.x[b_];
  return k == 0 ? v / r : v * v / r;
}

}  // namespace disc
