// Thermal networks: named heat nodes (a heat sink, a chassis, the air in a cabinet), heat paths
// between them and to the ambient, and fixed heat sources (a valve's or a transformer's loss).
//
// A heat node's unknown is its temperature rise above the circuit's ambient (K), a slow state
// like a plate's: its row is the heat balance  C dtheta/dt = heat in - heat out  (W), so the
// engine's currents are watts and its charges joules there. Stacks attach to a node by name
// (`Stack::setHeatNode`): their plates then lose heat to the node instead of the ambient.
#pragma once

#include <map>
#include <string>
#include <vector>

#include "disc/device.hpp"

namespace disc {

struct HeatNodeParams {
  double capacity = 0.0;   ///< J/K, heat capacity of the body the node stands for (> 0)
  double toAmbient = 0.0;  ///< K/W, thermal resistance straight to the ambient (0: none)
  void validate() const;
};

/// A named lump of metal or air at one temperature.
class HeatNode : public DeviceBase<HeatNode> {
 public:
  explicit HeatNode(std::string name, const HeatNodeParams& params = {1.0, 0.0});
  std::string_view kind() const override { return "heat node"; }
  const HeatNodeParams& params() const { return p_; }
  void setParams(const HeatNodeParams& params);
  /// capacity (J/K), to-ambient (K/W).
  const std::vector<DeviceParameter>& parameterTable() const override;

  /// Checks that heat put into this node can reach the ambient (else it has no steady state).
  void prepare(const Circuit& c) override;
  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void initialState(double* x) const override;
  /// temp (K), loss (W straight to the ambient), stored (J above the ambient).
  std::vector<std::string> probes() const override;
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

  /// The temperature-rise unknown (after bind).
  int unknown() const { return th_; }
  double ambient() const { return ambient_; }

 private:
  HeatNodeParams p_;
  double ambient_ = 298.15;
  int th_ = 0, diag_ = 0;
};

/// The heat node of `name` in `c`, or throws InputError naming `user` (the device that asked).
const HeatNode& findHeatNode(const Circuit& c, const std::string& name, const std::string& user);

/// A thermal resistance between two heat nodes, or from one to the ambient (second name
/// "ambient").
class HeatPath : public DeviceBase<HeatPath> {
 public:
  HeatPath(std::string name, std::string from, std::string to, double resistance);
  std::string_view kind() const override { return "heat path"; }
  const std::string& from() const { return from_; }
  const std::string& to() const { return to_; }
  bool toAmbient() const { return to_ == kAmbient; }
  double resistance() const { return r_; }
  void setResistance(double kelvinPerWatt);
  /// resistance (K/W).
  const std::vector<DeviceParameter>& parameterTable() const override;

  void prepare(const Circuit& c) override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  /// flow (W from the first node to the second).
  std::vector<std::string> probes() const override { return {"flow"}; }
  std::string probeUnit(int) const override { return "W"; }
  double probe(int k, const EvalContext& ctx) const override;

  /// The word that names the ambient as a path's second end.
  static constexpr const char* kAmbient = "ambient";

 private:
  std::string from_, to_;
  double r_ = 1.0;
  const HeatNode* a_ = nullptr;
  const HeatNode* b_ = nullptr;  // null: the ambient
  int ground_ = 0, ua_ = 0, ub_ = 0;
  PairSlots slots_;
};

/// A steady heat input into a heat node: a valve's or a transformer's loss, in W.
class HeatSource : public DeviceBase<HeatSource> {
 public:
  HeatSource(std::string name, std::string node, double power);
  std::string_view kind() const override { return "heat source"; }
  const std::string& node() const { return node_; }
  double power() const { return power_; }
  void setPower(double watts);
  /// power (W).
  const std::vector<DeviceParameter>& parameterTable() const override;

  void prepare(const Circuit& c) override;
  void bind(const Binding&) override {}
  void declare(PatternBuilder&) override {}
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  /// p (W into the node).
  std::vector<std::string> probes() const override { return {"p"}; }
  std::string probeUnit(int) const override { return "W"; }
  double probe(int k, const EvalContext& ctx) const override;

 private:
  std::string node_;
  double power_ = 0.0;
  const HeatNode* target_ = nullptr;
};

/// Steady temperature rise above the ambient (K) of every heat node of `c`, by name, with the
/// heat sources at their power and `heatInto` (W, by heat node name: e.g. the mean dissipation
/// of the stacks on it) added: the thermal network's conductance equations G theta = q solved
/// exactly (thermal circuits, Incropera and DeWitt, section 3.1). Throws InputError naming an
/// unknown heat node in `heatInto`.
std::map<std::string, double> steadyHeatNodeRises(const Circuit& c,
                                                  const std::map<std::string, double>& heatInto);

}  // namespace disc
