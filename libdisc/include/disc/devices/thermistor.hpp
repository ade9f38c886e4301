// NTC surge thermistor: the inrush limiter of AC/DC sets, heated by its own current.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Thermistor parameters (SI units), as a datasheet gives them.
struct ThermistorParams {
  double resistance = 10.0;       ///< ohm at referenceTemp (the datasheet's R25)
  double bConstant = 3000.0;      ///< K, the B constant of R = R25 exp(B (1/T - 1/T25))
  double referenceTemp = 298.15;  ///< K, the temperature of `resistance` (25 degC)
  double dissipation = 0.015;     ///< W/K, the dissipation constant (heat loss per kelvin)
  double timeConstant = 60.0;     ///< s, the thermal time constant (heat capacity / dissipation)
  double maxCurrent = 0.0;        ///< A, rated steady-state current (0: no rating to judge)
  void validate() const;
};

/// An NTC thermistor between two nodes. Its body's rise above ambient is an unknown of its own
/// (slow: surge thermistors take tens of seconds to heat), heated by v^2 / R(T) and cooled by
/// dissipation (T - Ta), with heat capacity dissipation x timeConstant. The law's temperature
/// is clamped to 100-1000 K so wild Newton iterates stay finite.
class Thermistor : public DeviceBase<Thermistor> {
 public:
  Thermistor(std::string name, NodeId a, NodeId b, const ThermistorParams& params = {});
  std::string_view kind() const override { return "thermistor"; }
  const ThermistorParams& params() const { return p_; }
  void setParams(const ThermistorParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;
  void prepare(const Circuit& c) override;

  /// Resistance at body temperature `kelvin` (ohm): the B-parameter law.
  double resistanceAt(double kelvin) const;
  double heatCapacity() const { return p_.dissipation * p_.timeConstant; }

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override {
    s.q[th_] += heatCapacity() * ctx.x[th_];
  }
  std::vector<std::string> probes() const override { return {"i", "p", "temp", "r"}; }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  ThermistorParams p_;
  double ambient_ = 298.15;
  int a_ = 0, b_ = 0, th_ = 0;
  PairSlots sv_;
  int sAT_ = 0, sBT_ = 0, sTA_ = 0, sTB_ = 0, sTT_ = 0;
  double lawTemperature(double rise) const;
};

}  // namespace disc
