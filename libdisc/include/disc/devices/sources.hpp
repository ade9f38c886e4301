// Independent sources: voltage (with optional series R and L: mains, battery) and current.
#pragma once

#include <limits>

#include "disc/device.hpp"
#include "disc/waveform.hpp"

namespace disc {

/// Voltage source V(t) between p (+) and n with series resistance R (ohm) and inductance L (H).
/// With R and L it models a mains supply's source impedance or a battery's internal resistance.
/// Its branch current (an unknown) is the current delivered out of p into the circuit; the "i"
/// probe reports the opposite (p -> n through the source) like every other device.
class VoltageSource : public DeviceBase<VoltageSource> {
 public:
  VoltageSource(std::string name, NodeId p, NodeId n, Waveform w, double resistance = 0.0,
                double inductance = 0.0);
  std::string_view kind() const override { return "voltage source"; }
  const Waveform& waveform() const { return w_; }
  void setWaveform(Waveform w) {
    w_ = std::move(w);
    memoTime_ = std::numeric_limits<double>::quiet_NaN();
  }
  double resistance() const { return r_; }
  double inductance() const { return l_; }
  void setImpedance(double ohm, double henry);
  int branch() const { return br_; }
  /// rms, amplitude and frequency of a sine; dc (alias emf, for batteries) is the DC value or
  /// the sine's offset; resistance and inductance of the source impedance.
  const std::vector<DeviceParameter>& parameterTable() const override;

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  /// The source inductance's flux only: no waveform evaluation.
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override {
    s.q[br_] += l_ * ctx.x[br_];
  }
  bool definesVoltage() const override { return r_ == 0.0 && l_ == 0.0; }
  void breakpoints(double from, double to, std::vector<double>& out) const override {
    w_.breakpoints(from, to, out);
  }
  double stepHint() const override { return w_.naturalStep(); }
  double probe(int k, const EvalContext& ctx) const override;

 private:
  Waveform w_;
  double r_, l_;
  // The waveform at the last times asked: every Newton iteration of a step asks the same ones.
  // Per run: an analysis evaluates its own copy of the device, and bind() empties the memo.
  mutable double memoTime_ = std::numeric_limits<double>::quiet_NaN(),
                 memoSlow_ = std::numeric_limits<double>::quiet_NaN(), memoValue_ = 0.0;
  int p_ = 0, n_ = 0, br_ = 0;
  int spb_ = 0, snb_ = 0, sbp_ = 0, sbn_ = 0, sbb_ = 0;
};

/// A battery: EMF (V) behind its internal resistance (ohm).
VoltageSource makeBattery(std::string name, NodeId p, NodeId n, double emf, double resistance);
/// Mains: rms voltage (V) at frequency (Hz), switched on at `on` (s), with source R and L.
VoltageSource makeMains(std::string name, NodeId p, NodeId n, double rms, double frequency,
                        double resistance, double inductance, double on = 0.0);

/// Current source I(t) flowing from p through the source to n.
class CurrentSource : public DeviceBase<CurrentSource> {
 public:
  CurrentSource(std::string name, NodeId p, NodeId n, Waveform w);
  std::string_view kind() const override { return "current source"; }
  const Waveform& waveform() const { return w_; }
  void setWaveform(Waveform w) { w_ = std::move(w); }
  const std::vector<DeviceParameter>& parameterTable() const override;

  void bind(const Binding& b) override;
  void declare(PatternBuilder&) override {}
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext&, Stamp&) const override {}  // no charge
  std::vector<std::pair<int, int>> dcPaths() const override { return {}; }
  void breakpoints(double from, double to, std::vector<double>& out) const override {
    w_.breakpoints(from, to, out);
  }
  double stepHint() const override { return w_.naturalStep(); }
  double probe(int k, const EvalContext& ctx) const override;

 private:
  Waveform w_;
  int p_ = 0, n_ = 0;
};

}  // namespace disc
