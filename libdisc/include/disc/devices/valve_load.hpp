// The HT load of a set of valves, whose current grows as their cathodes warm up.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Valve load parameters (SI units).
struct ValveLoadParams {
  double ratedCurrent = 0.06;   ///< A drawn by the warm valves at the rated HT voltage
  double ratedVoltage = 250.0;  ///< V, the HT voltage of that rating
  /// i ~ v^exponent: 1.5 is the space-charge law of a vacuum diode (C. D. Child, Phys. Rev.
  /// 32, 492, 1911; I. Langmuir, Phys. Rev. 2, 450, 1913), which valves under space-charge
  /// limitation follow; 1 makes the warm load a resistor.
  double exponent = 1.5;
  /// s, time constant of the heaters' and cathodes' warm-up: indirectly heated cathodes draw
  /// their full current after 10-30 s (common practice), about three time constants.
  double warmUp = 8.0;
  double on = 0.0;      ///< s, heaters switched on (slow clock)
  double warmth = 0.0;  ///< warm-up state at the start: 0 cold, 1 fully warm
  void validate() const;
};

/// A valve load from HT+ (first terminal) to HT- (second). Its warm-up state w (an unknown,
/// slow) follows warmUp dw/dt = h - w, with h = 1 once the heaters are on and 0 before: the
/// charge-oriented form i + dq/dt = 0 with i = w - h and q = warmUp w. The anode current is
/// w (ratedCurrent) (v / ratedVoltage)^exponent for v > 0, none reversed: cold valves draw
/// nothing, so the reservoir capacitor charges to the unloaded peak until they warm.
class ValveLoad : public DeviceBase<ValveLoad> {
 public:
  ValveLoad(std::string name, NodeId plus, NodeId minus, const ValveLoadParams& params = {});
  std::string_view kind() const override { return "valve load"; }
  const ValveLoadParams& params() const { return p_; }
  void setParams(const ValveLoadParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;

  /// The warm-up state's target at slow time t: 1 with the heaters on, 0 before.
  double heaters(double slow) const { return slow >= p_.on ? 1.0 : 0.0; }
  /// Anode current (A) and its derivative in v at warm-up state w and HT voltage v.
  void law(double v, double w, double& i, double& didv) const;

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override {
    s.q[w_] += p_.warmUp * ctx.x[w_];
  }
  void breakpoints(double from, double to, std::vector<double>& out) const override {
    if (p_.on > from && p_.on <= to) out.push_back(p_.on);
  }
  std::vector<std::string> probes() const override { return {"i", "p", "warm"}; }
  double probe(int k, const EvalContext& ctx) const override;
  void initialState(double* x) const override { x[w_] = p_.warmth; }

 private:
  ValveLoadParams p_;
  double k_ = 0.0;  // A / V^exponent
  int a_ = 0, b_ = 0, w_ = 0;
  PairSlots sv_;
  int sAW_ = 0, sBW_ = 0, sWW_ = 0;
};

}  // namespace disc
