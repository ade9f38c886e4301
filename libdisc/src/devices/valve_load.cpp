// Valve load with a first-order warm-up of its cathodes.
#include "disc/devices/valve_load.hpp"

#include <fmt/format.h>
#include <cmath>

#include "check.hpp"

namespace disc {
namespace {

// Conductance across the load: keeps the HT node determined while the valves are cold.
constexpr double kLoadGmin = 1e-12;

}  // namespace

void ValveLoadParams::validate() const {
  detail::requirePositive("valve load", "rated current", ratedCurrent, "A");
  detail::requirePositive("valve load", "rated voltage", ratedVoltage, "V");
  // Below 1 the slope at zero volts is infinite, which Newton cannot follow.
  if (!(exponent >= 1.0 && exponent <= 2.5))
    throw InputError(fmt::format(
        "valve load: the exponent must lie in 1-2.5 (space-charge law: 1.5; resistor: 1), got {}",
        exponent));
  detail::requirePositive("valve load", "warm-up time constant", warmUp, "s");
  if (!std::isfinite(on))
    throw InputError("valve load: the heaters' switch-on time must be finite");
  if (!(warmth >= 0.0 && warmth <= 1.0))
    throw InputError(fmt::format(
        "valve load: the starting warm-up state must lie in 0 (cold) to 1 (warm), got {}", warmth));
}

ValveLoad::ValveLoad(std::string name, NodeId plus, NodeId minus, const ValveLoadParams& params)
    : DeviceBase(std::move(name), {plus, minus}) {
  setParams(params);
}

const std::vector<DeviceParameter>& ValveLoad::parameterTable() const {
  // The one list of the valve load's netlist names (parser, setParameter, Python), with units.
  constexpr auto field = paramsField<ValveLoad, ValveLoadParams>;
  static const std::vector<DeviceParameter> t = {
      field("rated-current", &ValveLoadParams::ratedCurrent, "A", {}).within(1e-6, 100.0),
      field("rated-voltage", &ValveLoadParams::ratedVoltage, "V", {}).within(1.0, 1e5),
      field("exponent", &ValveLoadParams::exponent, "", {}).within(1.0, 2.5),
      field("warm-up", &ValveLoadParams::warmUp, "s", {}).within(1e-3, 3600.0),
      field("on", &ValveLoadParams::on, "s", {}).within(0.0, 1e7),
      field("warmth", &ValveLoadParams::warmth, "", {}).within(0.0, 1.0)};
  return t;
}

void ValveLoad::setParams(const ValveLoadParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
  k_ = p_.ratedCurrent / std::pow(p_.ratedVoltage, p_.exponent);
}

void ValveLoad::law(double v, double w, double& i, double& didv) const {
  i = kLoadGmin * v;
  didv = kLoadGmin;
  if (v <= 0.0) return;
  const double full = k_ * std::pow(v, p_.exponent);
  i += w * full;
  didv += w * p_.exponent * full / v;
}

std::vector<UnknownSpec> ValveLoad::internalUnknowns() const {
  return {{"warm", UnknownKind::State, /*slow=*/true}};
}

void ValveLoad::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
  w_ = b.internals[0];
}

void ValveLoad::declare(PatternBuilder& pb) {
  sv_.declare(pb, a_, b_);
  pb.entry(a_, w_, sAW_);
  pb.entry(b_, w_, sBW_);
  pb.entry(w_, w_, sWW_);
}

void ValveLoad::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double v = ctx.x[a_] - ctx.x[b_], w = ctx.x[w_];
  double i, didv;
  law(v, w, i, didv);
  s.i[a_] += i;
  s.i[b_] -= i;
  // warmUp dw/dt = h - w. In DC (no dw/dt) this is the warm-up's equilibrium w = h.
  s.i[w_] += w - heaters(ctx.slowClock());
  s.q[w_] += p_.warmUp * w;
  if (!s.jacobian) return;
  sv_.add(s.G, didv);
  const double didw = v > 0.0 ? k_ * std::pow(v, p_.exponent) : 0.0;
  s.G[sAW_] += didw;
  s.G[sBW_] -= didw;
  s.G[sWW_] += 1.0;
  s.C[sWW_] += p_.warmUp;
}

double ValveLoad::probe(int k, const EvalContext& ctx) const {
  const double v = ctx.x[a_] - ctx.x[b_];
  if (k == 2) return ctx.x[w_];
  double i, didv;
  law(v, ctx.x[w_], i, didv);
  return k == 0 ? i : v * i;
}

}  // namespace disc
