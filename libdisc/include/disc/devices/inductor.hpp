// Inductor (with optional winding resistance) and magnetic coupling between inductors.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Inductor between two nodes; inductance in H, series winding resistance in ohm. Its branch
/// current (a -> b through the inductor) is an unknown.
class Inductor : public DeviceBase<Inductor> {
 public:
  Inductor(std::string name, NodeId a, NodeId b, double inductance, double resistance = 0.0);
  std::string_view kind() const override { return "inductor"; }
  double inductance() const { return l_; }
  double resistance() const { return r_; }
  void setInductance(double henry);
  void setResistance(double ohm);
  const std::vector<DeviceParameter>& parameterTable() const override;
  /// Index of the branch-current unknown (valid after bind()).
  int branch() const { return br_; }

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  bool isLinear() const override { return true; }
  bool definesVoltage() const override { return true; }
  std::vector<std::string> probes() const override { return {"i", "p", "energy"}; }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  double l_, r_;
  int a_ = 0, b_ = 0, br_ = 0;
  int sab_ = 0, sbb_ = 0, sba_ = 0, sbr_ = 0, sbrbr_ = 0;
};

/// Mutual coupling k (0 < k <= 1) between two inductors of the same circuit: M = k sqrt(L1 L2).
class Coupling : public DeviceBase<Coupling> {
 public:
  Coupling(std::string name, std::string first, std::string second, double k);
  std::string_view kind() const override { return "coupling"; }
  double coefficient() const { return k_; }
  void setCoefficient(double k);

  /// Finds the two inductors in the circuit being compiled.
  void prepare(const Circuit& c) override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  bool isLinear() const override { return true; }
  std::vector<std::pair<int, int>> dcPaths() const override { return {}; }
  std::vector<std::string> probes() const override { return {"energy"}; }
  std::string probeUnit(int) const override { return "J"; }
  double probe(int k, const EvalContext& ctx) const override;

 private:
  std::string first_, second_;
  double k_;
  const Inductor* l1_ = nullptr;
  const Inductor* l2_ = nullptr;
  int s12_ = 0, s21_ = 0;
};

}  // namespace disc
