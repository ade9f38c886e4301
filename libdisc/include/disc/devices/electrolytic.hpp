// Aluminium electrolytic capacitor: ESR, working-voltage and ripple ratings, and a leakage that
// depends on the forming state of its oxide.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Electrolytic capacitor parameters (SI units).
struct ElectrolyticParams {
  double capacitance = 50e-6;   ///< F
  double esr = 1.0;             ///< ohm, equivalent series resistance
  double ratedVoltage = 450.0;  ///< V, DC working voltage
  /// A rms, rated ripple current at the mains ripple frequency (0: no rating to judge).
  double rippleCurrent = 0.0;
  /// A, leakage of the formed capacitor at its rated voltage; 0 takes the trade's limit
  /// 0.01 C V (C in uF, V in V, giving uA) or 3 uA, whichever is larger (common practice).
  double leakage = 0.0;
  /// Leakage multiplier of a fully deformed oxide (forming state 0): an electrolytic stored
  /// for years draws tens to hundreds of times its rated leakage at first (from memory).
  double deformedLeakFactor = 100.0;
  /// s, re-forming time constant at the rated voltage: re-forming at rated voltage through a
  /// limiting resistor takes tens of minutes (common practice).
  double formingTime = 600.0;
  double forming = 1.0;           ///< forming state at the start: 0 deformed, 1 formed
  double storedYears = 0.0;       ///< years stored unpowered before the run
  double storageTimeYears = 5.0;  ///< years, decay time of the forming state when unpowered
  void validate() const;
};

/// An electrolytic from + (first terminal) to - (second). The ESR leads from + to an internal
/// node; from there the capacitance and the leakage conductance g(F) = g0 (1 + (k - 1)(1 - F))
/// go to -, with g0 = leakage / ratedVoltage and k = deformedLeakFactor. The forming state F
/// (slow) grows under forward voltage v on the oxide:
///   formingTime dF/dt = (1 - F) max(v, 0) / ratedVoltage,
/// so at a constant voltage the excess leakage decays as exp(-t v / (ratedVoltage
/// formingTime)). Storage before the run leaves F = forming exp(-storedYears /
/// storageTimeYears). The operating point holds F at its start value.
class Electrolytic : public DeviceBase<Electrolytic> {
 public:
  Electrolytic(std::string name, NodeId plus, NodeId minus, const ElectrolyticParams& params = {});
  std::string_view kind() const override { return "electrolytic"; }
  const ElectrolyticParams& params() const { return p_; }
  void setParams(const ElectrolyticParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;

  /// A, the formed leakage at the rated voltage (the given value or the trade's limit).
  double ratedLeakage() const;
  /// S, the leakage conductance at forming state f.
  double leakageConductance(double f) const;
  /// The forming state at the start of a run (after storage).
  double initialForming() const;

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override;
  void initialState(double* x) const override { x[f_] = initialForming(); }
  std::vector<std::string> probes() const override {
    return {"i", "p", "energy", "vcap", "leak", "form"};
  }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  ElectrolyticParams p_;
  int a_ = 0, b_ = 0, m_ = 0, f_ = 0;
  PairSlots esr_, cap_;
  int sMF_ = 0, sBF_ = 0, sFM_ = 0, sFB_ = 0, sFF_ = 0;
};

}  // namespace disc
