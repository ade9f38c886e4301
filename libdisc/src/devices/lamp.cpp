// Incandescent lamp: a tungsten filament whose resistance rises with its temperature, heated by
// its own current and cooled by radiation and conduction.
#include "disc/devices/lamp.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "check.hpp"
#include "disc/circuit.hpp"

namespace disc {
namespace {

// The law's temperature is kept in this range so wild Newton iterates stay finite; a filament
// between them is physical (tungsten melts at 3695 K).
constexpr double kLowestLawTemp = 20.0, kHighestLawTemp = 2.0e4;

}  // namespace

void LampParams::validate() const {
  detail::requirePositive("lamp", "rated power", ratedPower, "W");
  detail::requirePositive("lamp", "rated voltage", ratedVoltage, "V");
  detail::requirePositive("lamp", "filament temperature", filamentTemp, "K");
  if (filamentTemp > 3600.0)
    throw InputError(
        fmt::format("lamp: filament temperature {} K is beyond tungsten's melting point (3695 K); "
                    "incandescent lamps run at 2400-3200 K",
                    filamentTemp));
  if (!(exponent >= 0.5 && exponent <= 2.0))
    throw InputError(fmt::format(
        "lamp: the resistance exponent must lie in 0.5-2 (tungsten: 1.2), got {}", exponent));
  detail::requirePositive("lamp", "time constant", timeConstant, "s");
  if (!(conduction >= 0.0 && conduction < 1.0))
    throw InputError(
        fmt::format("lamp: the conduction fraction must lie in [0, 1) (a part of the power must be "
                    "radiated), got {}",
                    conduction));
}

Lamp::Lamp(std::string name, NodeId a, NodeId b, const LampParams& params)
    : DeviceBase(std::move(name), {a, b}) {
  setParams(params);
}

const std::vector<DeviceParameter>& Lamp::parameterTable() const {
  // The one list of the lamp's netlist names (parser, setParameter, Python), with units.
  constexpr auto field = paramsField<Lamp, LampParams>;
  static const std::vector<DeviceParameter> t = {
      field("rated-power", &LampParams::ratedPower, "W", {}).within(1e-3, 1e5),
      field("rated-voltage", &LampParams::ratedVoltage, "V", {}).within(0.1, 1e4),
      field("filament-temp", &LampParams::filamentTemp, "K", {}).within(500.0, 3600.0),
      field("exponent", &LampParams::exponent, "", {}).within(0.5, 2.0),
      field("time-constant", &LampParams::timeConstant, "s", {}).within(1e-4, 100.0),
      field("conduction", &LampParams::conduction, "", {}).within(0.0, 0.99)};
  return t;
}

void Lamp::setParams(const LampParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  const LampParams old = p_;
  p_ = params;
  try {
    derive();
  } catch (const InputError&) {
    p_ = old;
    derive();
    throw;
  }
}

void Lamp::prepare(const Circuit& c) {
  ambient_ = c.ambient();
  derive();
}

void Lamp::derive() {
  const double th = p_.filamentTemp, ta = ambient_;
  if (!(th > ta + 100.0))
    throw InputError(fmt::format(
        "{}: the filament's rated temperature {} K must lie well above the ambient {} K", name_, th,
        ta));
  rHot_ = p_.ratedVoltage * p_.ratedVoltage / p_.ratedPower;
  // The rated point is an equilibrium: both losses together take the rated power at Th.
  kRad_ = (1.0 - p_.conduction) * p_.ratedPower / (std::pow(th, 4) - std::pow(ta, 4));
  gCond_ = p_.conduction * p_.ratedPower / (th - ta);
  cth_ = p_.timeConstant * (4.0 * kRad_ * th * th * th + gCond_);
}

double Lamp::resistanceAt(double kelvin) const {
  return rHot_ * std::pow(kelvin / p_.filamentTemp, p_.exponent);
}

double Lamp::lawTemperature(double rise) const {
  return std::clamp(ambient_ + rise, kLowestLawTemp, kHighestLawTemp);
}

std::vector<UnknownSpec> Lamp::internalUnknowns() const {
  // Fast: the filament follows the mains cycle's heating within tens of ms.
  return {{"temp", UnknownKind::Temperature, false}};
}

void Lamp::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
  th_ = b.internals[0];
}

void Lamp::declare(PatternBuilder& pb) {
  sv_.declare(pb, a_, b_);
  pb.entry(a_, th_, sAT_);
  pb.entry(b_, th_, sBT_);
  pb.entry(th_, a_, sTA_);
  pb.entry(th_, b_, sTB_);
  pb.entry(th_, th_, sTT_);
}

void Lamp::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double rise = ctx.x[th_], t = lawTemperature(rise);
  const double inside = t == ambient_ + rise ? 1.0 : 0.0;  // clamped: no slope
  const double v = ctx.x[a_] - ctx.x[b_];
  const double g = 1.0 / resistanceAt(t);
  const double i = g * v, pel = g * v * v;
  s.i[a_] += i;
  s.i[b_] -= i;
  // Heat balance: C dT/dt = v^2/R(T) - k (T^4 - Ta^4) - g_c (T - Ta).
  const double t3 = t * t * t;
  s.i[th_] += kRad_ * (t3 * t - std::pow(ambient_, 4)) + gCond_ * rise - pel;
  s.q[th_] += cth_ * rise;
  if (!s.jacobian) return;
  const double dgdT = -g * p_.exponent / t * inside;  // d(1/R)/dT
  sv_.add(s.G, g);
  s.G[sAT_] += dgdT * v;
  s.G[sBT_] -= dgdT * v;
  s.G[sTA_] -= 2.0 * i;
  s.G[sTB_] += 2.0 * i;
  s.G[sTT_] += 4.0 * kRad_ * t3 * inside + gCond_ - dgdT * v * v;
  s.C[sTT_] += cth_;
}

double Lamp::probe(int k, const EvalContext& ctx) const {
  const double t = lawTemperature(ctx.x[th_]);
  if (k == 2) return ambient_ + ctx.x[th_];
  const double r = resistanceAt(t);
  if (k == 3) return r;
  const double v = ctx.x[a_] - ctx.x[b_];
  return k == 0 ? v / r : v * v / r;
}

}  // namespace disc
