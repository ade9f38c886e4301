// Silicon junction diode: the modern reference part and the replacement for plate stacks.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Junction diode parameters (SI units). Defaults describe a general-purpose 1 A silicon
/// rectifier (typical datasheet-class values, from memory).
struct DiodeParams {
  double saturationCurrent = 2.5e-9;    ///< saturation current at referenceTemperature, A
  double ideality = 1.75;               ///< ideality factor of the junction law
  double seriesResistance = 0.04;       ///< series resistance, ohm (0: no internal node)
  double junctionCapacitance = 20e-12;  ///< zero-bias junction capacitance, F
  double builtInPotential = 0.7;        ///< built-in potential of the junction, V
  double gradingExponent = 0.4;         ///< grading exponent of the depletion capacitance
  /// Fraction of the built-in potential above which the depletion charge is continued
  /// linearly in forward bias (the depletion formula diverges at the built-in potential).
  double depletionKnee = 0.5;
  double transitTime = 0.0;  ///< transit time, s (reverse recovery; negligible at mains rates)
  double breakdownVoltage = 1000.0;  ///< reverse breakdown voltage (positive), V; 0 disables
  double breakdownCurrent = 1e-6;    ///< current at the breakdown voltage, A
  double bandGap = 1.11;             ///< band gap for the saturation current's temperature law, eV
  double saturationTempExponent = 3.0;   ///< temperature exponent of the saturation current
  double referenceTemperature = 300.15;  ///< temperature the parameters are given at, K
  double temperature = 0.0;              ///< device temperature, K (0: circuit ambient)
  double thermalResistance = 0.0;  ///< junction-to-ambient thermal resistance, K/W (0: isothermal)
  double heatCapacity = 0.05;      ///< heat capacity when thermalResistance > 0, J/K
  void validate() const;
};

/// Diode from anode to cathode: Shockley law with ideality factor, series resistance,
/// depletion and diffusion charge, and exponential reverse breakdown.
class Diode : public DeviceBase<Diode> {
 public:
  Diode(std::string name, NodeId anode, NodeId cathode, const DiodeParams& params = {});
  std::string_view kind() const override { return "diode"; }
  const DiodeParams& params() const { return p_; }
  void setParams(const DiodeParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;
  /// Netlist names: saturation-current, ideality, series-resistance, junction-capacitance,
  /// built-in-potential, grading-exponent, transit-time, breakdown-voltage, breakdown-current,
  /// thermal-resistance, heat-capacity, temperature (each with its unit and its retired name).
  /// Takes the circuit's ambient as the device temperature when params().temperature is 0.
  void prepare(const Circuit& c) override;

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  /// Depletion and heat charges without the junction law when there is no transit time.
  void evaluateCharges(const EvalContext& ctx, Stamp& s) const override;
  int limitCells() const override { return 1; }
  void junctionPairs(std::vector<JunctionPair>& out) const override;
  std::vector<std::string> probes() const override { return {"i", "p", "vj", "temp"}; }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

  /// Temperature-dependent scale of the junction law.
  struct Scale {
    double t = 300.0, nvt = 0, is = 0, vcrit = 0, vexp = 0, dLnIsDT = 0;
  };
  Scale scaleAt(double kelvin) const;
  /// Static junction current, its derivative in v and in temperature, at junction voltage v.
  void junction(double v, const Scale& sc, double& id, double& gd, double& dIdT) const;
  /// Junction charge and capacitance at v (C, F), diffusion charge included.
  void charge(double v, double id, double gd, double& q, double& c) const;

 private:
  DiodeParams p_;
  double ambient_ = 298.15;
  Scale fixed_;  // at the device temperature, when isothermal
  // Constants of the depletion charge's forward continuation (powers of 1 - fc), set by derive().
  double depF1_ = 0.0, depF2_ = 1.0, depF3_ = 0.0;
  int a_ = 0, k_ = 0, j_ = 0, th_ = 0, cell_ = 0;
  int sTh_ = 0, sThJ_ = 0, sThK_ = 0, sThA_ = 0, sJTh_ = 0,
      sKTh_ = 0;  // anode, cathode, junction (internal anode) unknowns
  PairSlots sj_;  // junction j-k
  PairSlots ss_;  // series resistance a-j
  void derive();
  double lawTemperature(double rise) const;
};

}  // namespace disc
