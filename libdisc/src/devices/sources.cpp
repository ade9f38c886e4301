// Independent voltage and current sources.
#include "disc/devices/sources.hpp"

#include "check.hpp"

namespace disc {

VoltageSource::VoltageSource(std::string name, NodeId p, NodeId n, Waveform w, double resistance,
                             double inductance)
    : DeviceBase(std::move(name), {p, n}), w_(std::move(w)) {
  setImpedance(resistance, inductance);
}

void VoltageSource::setImpedance(double ohm, double henry) {
  detail::requireNonNegative(name_, "source resistance", ohm, "ohm");
  detail::requireNonNegative(name_, "source inductance", henry, "H");
  r_ = ohm;
  l_ = henry;
}

std::vector<UnknownSpec> VoltageSource::internalUnknowns() const {
  return {{"i", UnknownKind::Current}};
}

void VoltageSource::bind(const Binding& b) {
  p_ = b.terminals[0];
  n_ = b.terminals[1];
  br_ = b.internals[0];
  memoTime_ = std::numeric_limits<double>::quiet_NaN();  // each run starts without a memo
}

void VoltageSource::declare(PatternBuilder& pb) {
  pb.entry(p_, br_, spb_);
  pb.entry(n_, br_, snb_);
  pb.entry(br_, p_, sbp_);
  pb.entry(br_, n_, sbn_);
  pb.entry(br_, br_, sbb_);
}

void VoltageSource::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double i = ctx.x[br_];  // delivered out of p
  s.i[p_] -= i;
  s.i[n_] += i;
  // v_p - v_n = V(t) - R i - L di/dt.
  const double slow = ctx.slowClock();
  if (ctx.time != memoTime_ || slow != memoSlow_) {
    memoValue_ = w_.value(ctx.time, slow);
    memoTime_ = ctx.time;
    memoSlow_ = slow;
  }
  s.i[br_] += ctx.x[p_] - ctx.x[n_] - ctx.sourceScale * memoValue_ + r_ * i;
  s.q[br_] += l_ * i;
  if (!s.jacobian) return;
  s.G[spb_] -= 1.0;
  s.G[snb_] += 1.0;
  s.G[sbp_] += 1.0;
  s.G[sbn_] -= 1.0;
  s.G[sbb_] += r_;
  s.C[sbb_] += l_;
}

double VoltageSource::probe(int k, const EvalContext& ctx) const {
  const double i = -ctx.x[br_];
  return k == 0 ? i : (ctx.x[p_] - ctx.x[n_]) * i;
}

VoltageSource makeBattery(std::string name, NodeId p, NodeId n, double emf, double resistance) {
  return VoltageSource(std::move(name), p, n, Waveform::dc(emf), resistance, 0.0);
}

VoltageSource makeMains(std::string name, NodeId p, NodeId n, double rms, double frequency,
                        double resistance, double inductance, double on) {
  Waveform w = Waveform::sineRms(rms, frequency);
  w.gate(on);
  return VoltageSource(std::move(name), p, n, std::move(w), resistance, inductance);
}

CurrentSource::CurrentSource(std::string name, NodeId p, NodeId n, Waveform w)
    : DeviceBase(std::move(name), {p, n}), w_(std::move(w)) {}

void CurrentSource::bind(const Binding& b) {
  p_ = b.terminals[0];
  n_ = b.terminals[1];
}

void CurrentSource::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double i = ctx.sourceScale * w_.value(ctx.time, ctx.slowClock());
  s.i[p_] += i;
  s.i[n_] -= i;
}

double CurrentSource::probe(int k, const EvalContext& ctx) const {
  const double i = ctx.sourceScale * w_.value(ctx.time, ctx.slowClock());
  return k == 0 ? i : (ctx.x[p_] - ctx.x[n_]) * i;
}

}  // namespace disc
