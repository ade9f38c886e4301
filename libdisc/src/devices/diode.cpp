// Junction diode. Static law: Shockley with emission coefficient plus exponential breakdown;
// charge: depletion (linearised above fc*vj, the usual device-model treatment) plus diffusion.
#include "disc/devices/diode.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "check.hpp"
#include "junction_math.hpp"
#include "disc/circuit.hpp"
#include "disc/constants.hpp"

namespace disc {
namespace {

// Conductance in parallel with every junction: keeps reverse-biased nodes determined.
constexpr double kJunctionGmin = 1e-12;
// Beyond this current the exponential is continued linearly so no value overflows.
constexpr double kExpLimitCurrent = 1e6;

}  // namespace

void DiodeParams::validate() const {
  detail::requirePositive("diode", "saturation current", is, "A");
  detail::requirePositive("diode", "emission coefficient", n, "");
  detail::requireNonNegative("diode", "series resistance", rs, "ohm");
  detail::requireNonNegative("diode", "junction capacitance", cj0, "F");
  detail::requirePositive("diode", "junction potential", vj, "V");
  if (!(m > 0.0 && m < 1.0)) throw InputError("diode: grading coefficient must lie in (0, 1)");
  if (!(fc > 0.0 && fc < 1.0)) throw InputError("diode: fc must lie in (0, 1)");
  detail::requireNonNegative("diode", "transit time", tt, "s");
  detail::requireNonNegative("diode", "breakdown voltage", bv, "V");
  detail::requirePositive("diode", "breakdown current", ibv, "A");
  detail::requirePositive("diode", "band gap", eg, "eV");
  detail::requirePositive("diode", "reference temperature", tnom, "K");
  detail::requireNonNegative("diode", "temperature", temperature, "K");
}

Diode::Diode(std::string name, NodeId anode, NodeId cathode, const DiodeParams& params)
    : DeviceBase(std::move(name), {anode, cathode}) {
  setParams(params);
}

void Diode::setParams(const DiodeParams& params) {
  try {
    params.validate();
  } catch (const InputError& e) {
    throw InputError(name_ + ": " + e.what());
  }
  p_ = params;
  derive();
}

void Diode::prepare(const Circuit& c) {
  ambient_ = c.ambient();
  derive();
}

void Diode::derive() {
  const double t = p_.temperature > 0.0 ? p_.temperature : ambient_;
  const double vt = constants::thermalVoltage(t);
  nvt_ = p_.n * vt;
  const double ratio = t / p_.tnom;
  isT_ = p_.is * std::pow(ratio, p_.xti / p_.n) * std::exp((ratio - 1.0) * p_.eg / nvt_);
  vcrit_ = nvt_ * std::log(nvt_ / (std::numbers::sqrt2 * isT_));
  vexp_ = nvt_ * std::log(kExpLimitCurrent / isT_ + 1.0);
}

std::vector<UnknownSpec> Diode::internalUnknowns() const {
  if (p_.rs > 0.0) return {{"j", UnknownKind::Voltage}};
  return {};
}

void Diode::bind(const Binding& b) {
  a_ = b.terminals[0];
  k_ = b.terminals[1];
  j_ = p_.rs > 0.0 ? b.internals[0] : a_;
  cell_ = b.limitCell;
}

void Diode::declare(PatternBuilder& pb) {
  sj_.declare(pb, j_, k_);
  if (p_.rs > 0.0) ss_.declare(pb, a_, j_);
}

void Diode::junction(double v, double& id, double& gd) const {
  double e, de;
  detail::limitedExp(v, nvt_, vexp_, e, de);
  id = isT_ * (e - 1.0) + kJunctionGmin * v;
  gd = isT_ * de + kJunctionGmin;
  if (p_.bv > 0.0) {
    double eb, deb;
    detail::limitedExp(-(v + p_.bv), nvt_, vexp_, eb, deb);
    id -= p_.ibv * eb;
    gd += p_.ibv * deb;
  }
}

void Diode::charge(double v, double id, double gd, double& q, double& c) const {
  q = p_.tt * id;
  c = p_.tt * gd;
  if (p_.cj0 <= 0.0) return;
  double qd, cd;
  detail::depletionCharge(v, p_.cj0, p_.vj, p_.m, p_.fc, qd, cd);
  q += qd;
  c += cd;
}

void Diode::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double vraw = ctx.x[j_] - ctx.x[k_];
  double v = vraw;
  if (ctx.limits) {
    double& last = ctx.limits[cell_];
    if (!std::isnan(last)) {
      v = detail::limitJunction(last, vraw, nvt_, vcrit_);
      if (p_.bv > 0.0) {
        // The breakdown branch is the same exponential mirrored about -bv.
        const double u = -p_.bv - v, ul = detail::limitJunction(-p_.bv - last, u, nvt_, vcrit_);
        if (ul != u) v = -p_.bv - ul;
      }
      if (v != vraw ||
          std::abs(vraw - last) > ctx.reltol * std::max(std::abs(vraw), std::abs(last)) + ctx.vabstol)
        *ctx.unsettled = true;
    }
    last = v;
  }
  double id, gd, q, c;
  junction(v, id, gd);
  charge(v, id, gd, q, c);
  // Linearised from the limited voltage: exact when nothing was limited.
  id += gd * (vraw - v);
  q += c * (vraw - v);
  s.i[j_] += id;
  s.i[k_] -= id;
  s.q[j_] += q;
  s.q[k_] -= q;
  if (s.jacobian) {
    sj_.add(s.G, gd);
    sj_.add(s.C, c);
  }
  if (p_.rs > 0.0) {
    const double gs = 1.0 / p_.rs;
    const double is = gs * (ctx.x[a_] - ctx.x[j_]);
    s.i[a_] += is;
    s.i[j_] -= is;
    if (s.jacobian) ss_.add(s.G, gs);
  }
}

std::string Diode::probeUnit(int k) const { return k == 0 ? "A" : k == 1 ? "W" : "V"; }

double Diode::probe(int k, const EvalContext& ctx) const {
  const double v = ctx.x[j_] - ctx.x[k_];
  if (k == 2) return v;
  double i;
  if (p_.rs > 0.0) {
    i = (ctx.x[a_] - ctx.x[j_]) / p_.rs;
  } else {
    double id, gd, q, c;
    junction(v, id, gd);
    charge(v, id, gd, q, c);
    i = id + c * (ctx.xdot[j_] - ctx.xdot[k_]);
  }
  return k == 0 ? i : (ctx.x[a_] - ctx.x[k_]) * i;
}

}  // namespace disc
