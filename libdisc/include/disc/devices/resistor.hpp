// Linear resistor.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Ohmic resistor between two nodes; resistance in ohm.
class Resistor : public DeviceBase<Resistor> {
 public:
  Resistor(std::string name, NodeId a, NodeId b, double resistance);
  std::string_view kind() const override { return "resistor"; }
  double resistance() const { return 1.0 / g_; }
  void setResistance(double ohm);
  const std::vector<DeviceParameter>& parameterTable() const override;

  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  bool isLinear() const override { return true; }
  void evaluateCharges(const EvalContext&, Stamp&) const override {}  // no charge
  double probe(int k, const EvalContext& ctx) const override;

 private:
  double g_;
  int a_ = 0, b_ = 0;
  PairSlots s_;
};

}  // namespace disc
