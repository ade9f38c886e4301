// Electrolytic capacitor with ESR, leakage and the forming state of its oxide.
#include "disc/devices/electrolytic.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "check.hpp"

namespace disc {

void ElectrolyticParams::validate() const {
  detail::requirePositive("electrolytic", "capacitance", capacitance, "F");
  // The ESR carries the internal node; every real electrolytic has some.
  detail::requirePositive("electrolytic", "ESR", esr, "ohm");
  detail::requirePositive("electrolytic", "rated voltage", ratedVoltage, "V");
  detail::requireNonNegative("electrolytic", "rated ripple current", rippleCurrent, "A");
  detail::requireNonNegative("electrolytic", "rated leakage", leakage, "A");
  if (!(deformedLeakFactor >= 1.0 && deformedLeakFactor <= 1e5))
    throw InputError(fmt::format(
        "electrolytic: the deformed leakage factor must lie in 1-1e5 (typical 10-1000), got {}",
        deformedLeakFactor));
  detail::requirePositive("electrolytic", "forming time constant", formingTime, "s");
  if (!(forming >= 0.0 && forming <= 1.0))
    throw InputError(fmt::format(
        "electrolytic: the forming state must lie in 0 (deformed) to 1 (formed), got {}", forming));
  detail::requireNonNegative("electrolytic", "stored years", storedYears, "years");
  detail::requirePositive("electrolytic", "storage time constant", storageTimeYears, "years");
}

Electrolytic::Electrolytic(std::string name, NodeId plus, NodeId minus,
                           const ElectrolyticParams& params)
    : DeviceBase(std::move(name), {plus, minus}) {
  setParams(params);
}

const std::vector<DeviceParameter>& Electrolytic::parameterTable() const {
  // The one list of the electrolytic's netlist names (parser, setParameter, Python), with units.
  constexpr auto field = paramsField<Electrolytic, ElectrolyticParams>;
  static const std::vector<DeviceParameter> t = {
      field("capacitance", &ElectrolyticParams::capacitance, "F", {}).within(1e-8, 10.0),
      field("esr", &ElectrolyticParams::esr, "ohm", {}).within(1e-4, 1e4),
      field("rated-voltage", &ElectrolyticParams::ratedVoltage, "V", {}).within(1.0, 1e4),
      field("ripple-current", &ElectrolyticParams::rippleCurrent, "A", {}).within(0.0, 1e3),
      field("leakage", &ElectrolyticParams::leakage, "A", {}).within(0.0, 10.0),
      field("deformed-leakage", &ElectrolyticParams::deformedLeakFactor, "", {}).within(1.0, 1e5),
      field("forming-time", &ElectrolyticParams::formingTime, "s", {}).within(1.0, 1e7),
      field("forming", &ElectrolyticParams::forming, "", {}).within(0.0, 1.0),
      field("stored-years", &ElectrolyticParams::storedYears, "", {}).within(0.0, 200.0),
      field("storage-years", &ElectrolyticParams::storageTimeYears, "", {}).within(0.01, 1e3)};
  return t;
}

void Electrolytic::setParams(const ElectrolyticParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
}

double Electrolytic::ratedLeakage() const {
  if (p_.leakage > 0.0) return p_.leakage;
  // 0.01 C[uF] V[V] uA = 0.01 C[F] V[V] A.
  return std::max(0.01 * p_.capacitance * p_.ratedVoltage, 3e-6);
}

double Electrolytic::leakageConductance(double f) const {
  return ratedLeakage() / p_.ratedVoltage * (1.0 + (p_.deformedLeakFactor - 1.0) * (1.0 - f));
}

double Electrolytic::initialForming() const {
  return p_.forming * std::exp(-p_.storedYears / p_.storageTimeYears);
}

std::vector<UnknownSpec> Electrolytic::internalUnknowns() const {
  return {{"cap", UnknownKind::Voltage}, {"form", UnknownKind::State, /*slow=*/true}};
}

void Electrolytic::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
  m_ = b.internals[0];
  f_ = b.internals[1];
}

void Electrolytic::declare(PatternBuilder& pb) {
  esr_.declare(pb, a_, m_);
  cap_.declare(pb, m_, b_);
  pb.entry(m_, f_, sMF_);
  pb.entry(b_, f_, sBF_);
  pb.entry(f_, m_, sFM_);
  pb.entry(f_, b_, sFB_);
  pb.entry(f_, f_, sFF_);
}

void Electrolytic::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double* x = ctx.x;
  const double ge = 1.0 / p_.esr, ie = ge * (x[a_] - x[m_]);
  s.i[a_] += ie;
  s.i[m_] -= ie;
  const double v = x[m_] - x[b_], f = x[f_];
  const double gl = leakageConductance(f), il = gl * v;
  s.i[m_] += il;
  s.i[b_] -= il;
  const double q = p_.capacitance * v;
  s.q[m_] += q;
  s.q[b_] -= q;
  // formingTime dF/dt = (1 - F) max(v, 0) / ratedVoltage, held in DC.
  const double drive = std::max(v, 0.0) / (p_.ratedVoltage * p_.formingTime);
  s.i[f_] += ctx.dc ? f - initialForming() : -(1.0 - f) * drive;
  s.q[f_] += f;
  if (!s.jacobian) return;
  esr_.add(s.G, ge);
  cap_.add(s.G, gl);
  cap_.add(s.C, p_.capacitance);
  const double dgdf = -ratedLeakage() / p_.ratedVoltage * (p_.deformedLeakFactor - 1.0);
  s.G[sMF_] += dgdf * v;
  s.G[sBF_] -= dgdf * v;
  if (ctx.dc) {
    s.G[sFF_] += 1.0;
  } else {
    const double ddv = v > 0.0 ? -(1.0 - f) / (p_.ratedVoltage * p_.formingTime) : 0.0;
    s.G[sFM_] += ddv;
    s.G[sFB_] -= ddv;
    s.G[sFF_] += drive;
  }
  s.C[sFF_] += 1.0;
}

void Electrolytic::evaluateCharges(const EvalContext& ctx, Stamp& s) const {
  const double q = p_.capacitance * (ctx.x[m_] - ctx.x[b_]);
  s.q[m_] += q;
  s.q[b_] -= q;
  s.q[f_] += ctx.x[f_];
}

std::string Electrolytic::probeUnit(int k) const {
  static const char* const u[] = {"A", "W", "J", "V", "A", ""};
  return k >= 0 && k < 6 ? u[k] : "";
}

double Electrolytic::probe(int k, const EvalContext& ctx) const {
  const double* x = ctx.x;
  const double v = x[m_] - x[b_];
  switch (k) {
    case 0:
      return (x[a_] - x[m_]) / p_.esr;
    case 1:
      return (x[a_] - x[b_]) * (x[a_] - x[m_]) / p_.esr;
    case 2:
      return 0.5 * p_.capacitance * v * v;
    case 3:
      return v;
    case 4:
      return leakageConductance(x[f_]) * v;
    default:
      return x[f_];
  }
}

}  // namespace disc
