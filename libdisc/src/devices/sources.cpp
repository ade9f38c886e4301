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

namespace {

/// The waveform entries of a source's table: a sine's rms, amplitude and frequency, and a DC
/// level under each name in `levels`, in `unit` within +-`limit`. Each setter changes a copy of
/// the waveform, so a rejected value leaves the source as it was.
template <class Source>
std::vector<DeviceParameter> waveParameters(const char* unit, double limit,
                                            std::initializer_list<const char*> levels) {
  auto wave = [](const char* name, const char* u, double (*get)(const Waveform&),
                 void (*set)(Waveform&, double)) {
    return DeviceParameter{
        name,
        [get](const Device& d) { return get(static_cast<const Source&>(d).waveform()); },
        [set](Device& d, double v) {
          auto& s = static_cast<Source&>(d);
          Waveform w = s.waveform();
          detail::namedChecks(s.name(), [&] { set(w, v); });
          s.setWaveform(std::move(w));
        },
        u,
        {}};
  };
  std::vector<DeviceParameter> t;
  t.push_back(wave(
                  "rms", unit,
                  [](const Waveform& w) {
                    if (!w.isSine()) throw InputError("only a sine source has an rms value");
                    return w.amplitude() / std::numbers::sqrt2;
                  },
                  [](Waveform& w, double v) { w.setAmplitude(std::numbers::sqrt2 * v); })
                  .within(-limit, limit));
  t.push_back(wave(
                  "amplitude", unit,
                  [](const Waveform& w) {
                    if (!w.isSine()) throw InputError("only a sine source has an amplitude");
                    return w.amplitude();
                  },
                  [](Waveform& w, double v) { w.setAmplitude(v); })
                  .within(-limit, limit));
  // Above 1 MHz no rectifier plate responds, and the step budget is spent on the carrier.
  t.push_back(wave(
                  "frequency", "Hz",
                  [](const Waveform& w) {
                    if (!w.isSine()) throw InputError("only a sine source has a frequency");
                    return w.frequency();
                  },
                  [](Waveform& w, double v) { w.setFrequency(v); })
                  .within(0.01, 1e6));
  for (const char* level : levels)
    t.push_back(wave(
                    level, unit, [](const Waveform& w) { return w.offset(); },
                    [](Waveform& w, double v) { w.setOffset(v); })
                    .within(-limit, limit));
  return t;
}

}  // namespace

const std::vector<DeviceParameter>& VoltageSource::parameterTable() const {
  static const std::vector<DeviceParameter> t = [] {
    std::vector<DeviceParameter> w = waveParameters<VoltageSource>("V", 1e6, {"dc", "emf"});
    w.push_back({"resistance",
                 [](const Device& d) { return static_cast<const VoltageSource&>(d).resistance(); },
                 [](Device& d, double v) {
                   auto& s = static_cast<VoltageSource&>(d);
                   s.setImpedance(v, s.inductance());
                 },
                 "ohm",
                 {},
                 0.0,
                 1e9});
    w.push_back({"inductance",
                 [](const Device& d) { return static_cast<const VoltageSource&>(d).inductance(); },
                 [](Device& d, double v) {
                   auto& s = static_cast<VoltageSource&>(d);
                   s.setImpedance(s.resistance(), v);
                 },
                 "H",
                 {},
                 0.0,
                 1e3});
    return w;
  }();
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

const std::vector<DeviceParameter>& CurrentSource::parameterTable() const {
  // 10 kA: beyond any supply this library models (a welding set's secondary).
  static const std::vector<DeviceParameter> t = waveParameters<CurrentSource>("A", 1e4, {"dc"});
  return t;
}

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
