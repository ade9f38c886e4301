// Independent voltage and current sources.
#include "disc/devices/sources.hpp"

#include <numbers>

#include "check.hpp"
#include "disc/error.hpp"

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

const std::vector<DeviceParameter>& VoltageSource::parameterTable() const {
  // Each setter changes a copy of the waveform, so a rejected value leaves the source as it was.
  auto wave = [](const char* name, const char* unit, double (*get)(const Waveform&),
                 void (*set)(Waveform&, double)) {
    return DeviceParameter{
        name,
        [get](const Device& d) { return get(static_cast<const VoltageSource&>(d).waveform()); },
        [set](Device& d, double v) {
          auto& s = static_cast<VoltageSource&>(d);
          Waveform w = s.waveform();
          detail::namedChecks(s.name(), [&] { set(w, v); });
          s.setWaveform(std::move(w));
        },
        unit,
        {}};
  };
  static const std::vector<DeviceParameter> t = {
      wave(
          "rms", "V",
          [](const Waveform& w) {
            if (!w.isSine()) throw InputError("only a sine source has an rms value");
            return w.amplitude() / std::numbers::sqrt2;
          },
          [](Waveform& w, double v) { w.setAmplitude(std::numbers::sqrt2 * v); }),
      wave(
          "amplitude", "V",
          [](const Waveform& w) {
            if (!w.isSine()) throw InputError("only a sine source has an amplitude");
            return w.amplitude();
          },
          [](Waveform& w, double v) { w.setAmplitude(v); }),
      wave(
          "frequency", "Hz",
          [](const Waveform& w) {
            if (!w.isSine()) throw InputError("only a sine source has a frequency");
            return w.frequency();
          },
          [](Waveform& w, double v) { w.setFrequency(v); }),
      wave(
          "dc", "V", [](const Waveform& w) { return w.offset(); },
          [](Waveform& w, double v) { w.setOffset(v); }),
      wave(
          "emf", "V", [](const Waveform& w) { return w.offset(); },
          [](Waveform& w, double v) { w.setOffset(v); }),
      {"resistance",
       [](const Device& d) { return static_cast<const VoltageSource&>(d).resistance(); },
       [](Device& d, double v) {
         auto& s = static_cast<VoltageSource&>(d);
         s.setImpedance(v, s.inductance());
       },
       "ohm",
       {}},
      {"inductance",
       [](const Device& d) { return static_cast<const VoltageSource&>(d).inductance(); },
       [](Device& d, double v) {
         auto& s = static_cast<VoltageSource&>(d);
         s.setImpedance(s.resistance(), v);
       },
       "H",
       {}}};
  return t;
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
