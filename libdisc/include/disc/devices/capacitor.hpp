// Linear capacitor.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Ideal capacitor between two nodes; capacitance in F.
class Capacitor : public DeviceBase<Capacitor> {
 public:
  Capacitor(std::string name, NodeId a, NodeId b, double capacitance);
  std::string_view kind() const override { return "capacitor"; }
  double capacitance() const { return c_; }
  void setCapacitance(double farad);
  const std::vector<DeviceParameter>& parameterTable() const override;

  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  bool isLinear() const override { return true; }
  std::vector<std::pair<int, int>> dcPaths() const override { return {}; }
  std::vector<std::string> probes() const override { return {"i", "p", "energy"}; }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  double c_;
  int a_ = 0, b_ = 0;
  PairSlots s_;
};

}  // namespace disc
