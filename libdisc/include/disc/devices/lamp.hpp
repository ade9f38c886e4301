// Incandescent lamp with a tungsten filament: the restorer's series current limiter.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Lamp parameters (SI units), given by the lamp's rating as printed on its bulb.
struct LampParams {
  double ratedPower = 60.0;     ///< W drawn at the rated voltage
  double ratedVoltage = 230.0;  ///< V rms (a filament does not care for the waveform's shape)
  /// K, filament temperature at the rated voltage: general-service gas-filled lamps run near
  /// 2700 K (from memory).
  double filamentTemp = 2700.0;
  /// Tungsten's resistance R ~ T^exponent: 1.2 follows tungsten's resistivity tables (CRC
  /// Handbook of Chemistry and Physics, "Electrical resistivity of pure metals") within a few
  /// per cent from room temperature to 3000 K (from memory). With 2700 K it makes the cold
  /// resistance 1/14 of the hot.
  double exponent = 1.2;
  /// s, the filament's cooling time constant at its rated temperature (heat capacity over the
  /// slope of its losses); tens of ms for mains lamps of 25-100 W (from memory).
  double timeConstant = 0.05;
  /// Fraction of the rated power lost by conduction (the fill gas and the supports) rather
  /// than radiated; about a tenth in gas-filled lamps (from memory).
  double conduction = 0.1;
  void validate() const;
};

/// A lamp between two nodes. Its filament temperature is an unknown of its own (a fast one: it
/// follows the mains within tens of ms), heated by i^2 R and cooled by radiation (Stefan-
/// Boltzmann, ~ T^4) and conduction (~ T - Ta); the constants are set so that at the rated
/// voltage the filament sits at its rated temperature and draws exactly the rated power.
class Lamp : public DeviceBase<Lamp> {
 public:
  Lamp(std::string name, NodeId a, NodeId b, const LampParams& params = {});
  std::string_view kind() const override { return "lamp"; }
  const LampParams& params() const { return p_; }
  void setParams(const LampParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;
  /// Reads the circuit's ambient: the cold filament's temperature and the losses' reference.
  void prepare(const Circuit& c) override;

  /// Resistance at filament temperature `kelvin` (ohm).
  double resistanceAt(double kelvin) const;
  double hotResistance() const { return rHot_; }

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override {
    s.q[th_] += cth_ * ctx.x[th_];
  }
  std::vector<std::string> probes() const override { return {"i", "p", "temp", "r"}; }
  double probe(int k, const EvalContext& ctx) const override;

 private:
  LampParams p_;
  double ambient_ = 298.15;
  // Derived from the rating at the ambient: hot resistance, radiation and conduction
  // coefficients, heat capacity.
  double rHot_ = 0.0, kRad_ = 0.0, gCond_ = 0.0, cth_ = 0.0;
  int a_ = 0, b_ = 0, th_ = 0;
  PairSlots sv_;
  int sAT_ = 0, sBT_ = 0, sTA_ = 0, sTB_ = 0, sTT_ = 0;
  void derive();
  double lawTemperature(double rise) const;
};

}  // namespace disc
