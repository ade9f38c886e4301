// Junction diode. Static law: Shockley with ideality factor plus exponential breakdown;
// charge: depletion (continued linearly above depletionKnee times the built-in potential, the
// usual device-model treatment) plus diffusion.
#include "disc/devices/diode.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "check.hpp"
#include "disc/circuit.hpp"
#include "disc/constants.hpp"
#include "junction_math.hpp"

namespace disc {
namespace {

// Conductance in parallel with every junction: keeps reverse-biased nodes determined.
constexpr double kJunctionGmin = 1e-12;
// Beyond this current the exponential is continued linearly so no value overflows.
constexpr double kExpLimitCurrent = 1e6;

}  // namespace

void DiodeParams::validate() const {
  detail::requirePositive("diode", "saturation current", saturationCurrent, "A");
  detail::requirePositive("diode", "ideality", ideality, "");
  detail::requireNonNegative("diode", "series resistance", seriesResistance, "ohm");
  detail::requireNonNegative("diode", "junction capacitance", junctionCapacitance, "F");
  detail::requirePositive("diode", "built-in potential", builtInPotential, "V");
  if (!(gradingExponent > 0.0 && gradingExponent < 1.0))
    throw InputError("diode: grading exponent must lie in (0, 1)");
  if (!(depletionKnee > 0.0 && depletionKnee < 1.0))
    throw InputError("diode: depletion knee must lie in (0, 1)");
  detail::requireNonNegative("diode", "transit time", transitTime, "s");
  detail::requireNonNegative("diode", "breakdown voltage", breakdownVoltage, "V");
  detail::requirePositive("diode", "breakdown current", breakdownCurrent, "A");
  detail::requirePositive("diode", "band gap", bandGap, "eV");
  detail::requirePositive("diode", "reference temperature", referenceTemperature, "K");
  detail::requireNonNegative("diode", "thermal resistance", thermalResistance, "K/W");
  detail::requirePositive("diode", "heat capacity", heatCapacity, "J/K");
  detail::requireNonNegative("diode", "temperature", temperature, "K");
}

Diode::Diode(std::string name, NodeId anode, NodeId cathode, const DiodeParams& params)
    : DeviceBase(std::move(name), {anode, cathode}) {
  setParams(params);
}

const std::vector<DeviceParameter>& Diode::parameterTable() const {
  // The one list of the diode's netlist names: the parser, setParameter and the Python module
  // all read it. Each entry carries its unit and the short name it replaced (for the hint).
  constexpr auto field = paramsField<Diode, DiodeParams>;
  using P = DiodeParams;
  static const std::vector<DeviceParameter> t = {
      field("saturation-current", &P::saturationCurrent, "A", {"is"}).within(1e-30, 1.0),
      field("ideality", &P::ideality, "", {"n"}).within(0.5, 20.0),
      field("series-resistance", &P::seriesResistance, "ohm", {"rs"}).within(0.0, 1e6),
      field("junction-capacitance", &P::junctionCapacitance, "F", {"cj0"}).within(0.0, 1e-3),
      field("built-in-potential", &P::builtInPotential, "V", {"vj"}).within(0.1, 5.0),
      field("grading-exponent", &P::gradingExponent, "", {"m"}).within(0.01, 0.99),
      field("transit-time", &P::transitTime, "s", {"tt"}).within(0.0, 1e-2),
      field("breakdown-voltage", &P::breakdownVoltage, "V", {"bv"}).within(0.0, 1e5),
      field("breakdown-current", &P::breakdownCurrent, "A", {"ibv"}).within(1e-15, 1e3),
      field("thermal-resistance", &P::thermalResistance, "K/W", {"rth"}).within(0.0, 1e4),
      field("heat-capacity", &P::heatCapacity, "J/K", {"cth"}).within(1e-6, 1e5),
      field("temperature", &P::temperature, "K", {}).within(150.0, 600.0, true),
      field("reference-temp", &P::referenceTemperature, "K", {"nominal-temperature"})
          .within(150.0, 600.0)};
  return t;
}

void Diode::setParams(const DiodeParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
  derive();
}

void Diode::prepare(const Circuit& c) {
  ambient_ = c.ambient();
  derive();
}

void Diode::derive() {
  fixed_ = scaleAt(p_.temperature > 0.0 ? p_.temperature : ambient_);
  const detail::DepletionShape d(p_.junctionCapacitance, p_.builtInPotential, p_.gradingExponent,
                                 p_.depletionKnee);
  depF1_ = d.f1;
  depF2_ = d.f2;
  depF3_ = d.f3;
}

Diode::Scale Diode::scaleAt(double t) const {
  Scale sc;
  sc.t = t;
  sc.nvt = p_.ideality * constants::thermalVoltage(t);
  const double ratio = t / p_.referenceTemperature;
  // Is(T) = Is (T/Tref)^(X/n) exp((T/Tref - 1) Eg / (n kT/q)), X the temperature exponent.
  sc.is = p_.saturationCurrent * std::pow(ratio, p_.saturationTempExponent / p_.ideality) *
          std::exp((ratio - 1.0) * p_.bandGap / sc.nvt);
  sc.dLnIsDT = p_.saturationTempExponent / (p_.ideality * t) +
               p_.bandGap / (p_.ideality * constants::kBoltzmannEv * t * t);
  sc.vcrit = sc.nvt * std::log(sc.nvt / (std::numbers::sqrt2 * sc.is));
  sc.vexp = sc.nvt * std::log(kExpLimitCurrent / sc.is + 1.0);
  return sc;
}

std::vector<UnknownSpec> Diode::internalUnknowns() const {
  std::vector<UnknownSpec> u;
  if (p_.seriesResistance > 0.0) u.push_back({"j", UnknownKind::Voltage});
  if (p_.thermalResistance > 0.0) u.push_back({"temp", UnknownKind::Temperature, true});
  return u;
}

void Diode::bind(const Binding& b) {
  a_ = b.terminals[0];
  k_ = b.terminals[1];
  j_ = p_.seriesResistance > 0.0 ? b.internals[0] : a_;
  th_ = p_.thermalResistance > 0.0 ? b.internals.back() : b.ground;
  cell_ = b.limitCell;
}

void Diode::declare(PatternBuilder& pb) {
  sj_.declare(pb, j_, k_);
  if (p_.seriesResistance > 0.0) ss_.declare(pb, a_, j_);
  if (p_.thermalResistance > 0.0) {
    pb.entry(th_, th_, sTh_);
    pb.entry(th_, j_, sThJ_);
    pb.entry(th_, k_, sThK_);
    pb.entry(th_, a_, sThA_);
    pb.entry(j_, th_, sJTh_);
    pb.entry(k_, th_, sKTh_);
  }
}

void Diode::junction(double v, const Scale& sc, double& id, double& gd, double& dIdT) const {
  double e, de;
  detail::limitedExp(v, sc.nvt, sc.vexp, e, de);
  id = sc.is * (e - 1.0) + kJunctionGmin * v;
  gd = sc.is * de + kJunctionGmin;
  // Is grows with T; at fixed v the exponential falls as n kT/q grows.
  dIdT = sc.is * ((e - 1.0) * sc.dLnIsDT - de * v / sc.t);
  if (p_.breakdownVoltage > 0.0) {
    double eb, deb;
    // Breakdown keeps its device-temperature scale: its thermal behaviour is not modelled.
    detail::limitedExp(-(v + p_.breakdownVoltage), fixed_.nvt, fixed_.vexp, eb, deb);
    id -= p_.breakdownCurrent * eb;
    gd += p_.breakdownCurrent * deb;
  }
}

void Diode::charge(double v, double id, double gd, double& q, double& c) const {
  q = p_.transitTime * id;
  c = p_.transitTime * gd;
  if (p_.junctionCapacitance <= 0.0) return;
  double qd, cd;
  detail::DepletionShape d;
  d.cj0 = p_.junctionCapacitance;
  d.vj = p_.builtInPotential;
  d.m = p_.gradingExponent;
  d.fc = p_.depletionKnee;
  d.f1 = depF1_;
  d.f2 = depF2_;
  d.f3 = depF3_;
  detail::depletionCharge(v, d, qd, cd);
  q += qd;
  c += cd;
}

void Diode::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double vraw = ctx.x[j_] - ctx.x[k_];
  const bool thermal = p_.thermalResistance > 0.0;
  const Scale sc = thermal ? scaleAt(lawTemperature(ctx.x[th_])) : fixed_;
  const double nvt_ = sc.nvt, vcrit_ = sc.vcrit;
  double v = vraw;
  if (ctx.limits) {
    double& last = ctx.limits[cell_];
    if (!std::isnan(last)) {
      v = detail::limitJunction(last, vraw, nvt_, vcrit_);
      if (p_.breakdownVoltage > 0.0) {
        // The breakdown branch is the same exponential mirrored about -bv.
        const double u = -p_.breakdownVoltage - v,
                     ul = detail::limitJunction(-p_.breakdownVoltage - last, u, nvt_, vcrit_);
        if (ul != u) v = -p_.breakdownVoltage - ul;
      }
      ctx.reportJunction(vraw, v);
    }
    last = v;
  }
  double id, gd, dIdT, q, c;
  junction(v, sc, id, gd, dIdT);
  charge(v, id, gd, q, c);
  // Linearised from the limited voltage: exact when nothing was limited.
  id += gd * (vraw - v);
  q += c * (vraw - v);
  if (thermal && lawTemperature(ctx.x[th_]) != ambient_ + ctx.x[th_]) dIdT = 0.0;  // clamped
  if (thermal) {
    // Heat balance: cth dT/dt = P - (T - Ta)/rth, P = static junction loss + series loss.
    const double th = ctx.x[th_], gs = p_.seriesResistance > 0.0 ? 1.0 / p_.seriesResistance : 0.0;
    const double vs = ctx.x[a_] - ctx.x[j_];
    s.i[th_] += th / p_.thermalResistance - id * vraw - gs * vs * vs;
    s.q[th_] += p_.heatCapacity * th;
    if (s.jacobian) {
      s.G[sTh_] += 1.0 / p_.thermalResistance - dIdT * vraw;
      s.C[sTh_] += p_.heatCapacity;
      const double dPdv = id + gd * vraw;
      s.G[sThJ_] -= dPdv - 2.0 * gs * vs;
      s.G[sThK_] += dPdv;
      s.G[sThA_] -= 2.0 * gs * vs;
      s.G[sJTh_] += dIdT;
      s.G[sKTh_] -= dIdT;
      s.C[sJTh_] += p_.transitTime * dIdT;  // diffusion charge follows the current
      s.C[sKTh_] -= p_.transitTime * dIdT;
    }
  }
  s.i[j_] += id;
  s.i[k_] -= id;
  s.q[j_] += q;
  s.q[k_] -= q;
  if (s.jacobian) {
    sj_.add(s.G, gd);
    sj_.add(s.C, c);
  }
  if (p_.seriesResistance > 0.0) {
    const double gs = 1.0 / p_.seriesResistance;
    const double is = gs * (ctx.x[a_] - ctx.x[j_]);
    s.i[a_] += is;
    s.i[j_] -= is;
    if (s.jacobian) ss_.add(s.G, gs);
  }
}

void Diode::junctionPairs(std::vector<JunctionPair>& out) const {
  // Self-heating only raises the temperature; three quarters of the base temperature leaves a
  // margin for a cold ambient given later.
  out.push_back({j_, k_, p_.ideality * constants::thermalVoltage(0.75 * fixed_.t)});
}

void Diode::evaluateCharges(const EvalContext& ctx, Stamp& s) const {
  // A diffusion charge follows the current: then the junction law is needed after all.
  if (p_.transitTime != 0.0) {
    evaluate(ctx, s);
    return;
  }
  double q, c;
  charge(ctx.x[j_] - ctx.x[k_], 0.0, 0.0, q, c);  // depletion charge only
  s.q[j_] += q;
  s.q[k_] -= q;
  if (p_.thermalResistance > 0.0) s.q[th_] += p_.heatCapacity * ctx.x[th_];
}

std::string Diode::probeUnit(int k) const {
  static const char* units[] = {"A", "W", "V", "K"};
  return units[k];
}

double Diode::lawTemperature(double rise) const {
  // The laws hold between these temperatures; the clamp keeps runaways and iterates finite.
  return std::clamp(ambient_ + rise, 200.0, 700.0);
}

double Diode::probe(int k, const EvalContext& ctx) const {
  const double v = ctx.x[j_] - ctx.x[k_];
  if (k == 2) return v;
  if (k == 3) return p_.thermalResistance > 0.0 ? ambient_ + ctx.x[th_] : fixed_.t;
  double i;
  if (p_.seriesResistance > 0.0) {
    i = (ctx.x[a_] - ctx.x[j_]) / p_.seriesResistance;
  } else {
    double id, gd, dIdT, q, c;
    const Scale sc = p_.thermalResistance > 0.0 ? scaleAt(lawTemperature(ctx.x[th_])) : fixed_;
    junction(v, sc, id, gd, dIdT);
    charge(v, id, gd, q, c);
    i = id + c * (ctx.xdot[j_] - ctx.xdot[k_]);
  }
  return k == 0 ? i : (ctx.x[a_] - ctx.x[k_]) * i;
}

}  // namespace disc
