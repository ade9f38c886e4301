// Two-winding transformer with winding resistances, leakage and magnetizing inductance.
#pragma once

#include "disc/device.hpp"

namespace disc {

/// Transformer parameters. Inductances are referred to the winding they name; magnetizing
/// inductance is referred to the primary. ratio = primary turns / secondary turns.
struct TransformerParams {
  double ratio = 1.0;         ///< N1/N2
  double r1 = 0.0;            ///< primary winding resistance, ohm
  double r2 = 0.0;            ///< secondary winding resistance, ohm
  double leakage1 = 0.0;      ///< primary leakage inductance, H
  double leakage2 = 0.0;      ///< secondary leakage inductance, H
  double magnetizing = 10.0;  ///< magnetizing inductance seen from the primary, H
  void validate() const;
};

/// Terminals: primary p1, n1; secondary p2, n2 (dots at p1 and p2). Winding currents are
/// unknowns, positive into the dotted terminals.
class Transformer : public DeviceBase<Transformer> {
 public:
  Transformer(std::string name, NodeId p1, NodeId n1, NodeId p2, NodeId n2,
              const TransformerParams& params);
  std::string_view kind() const override { return "transformer"; }
  const TransformerParams& params() const { return p_; }
  void setParams(const TransformerParams& params);
  const std::vector<DeviceParameter>& parameterTable() const override;

  std::vector<UnknownSpec> internalUnknowns() const override;
  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  bool isLinear() const override { return true; }
  std::vector<std::pair<int, int>> dcPaths() const override { return {{0, 1}, {2, 3}}; }
  std::vector<std::string> probes() const override { return {"i1", "i2", "p", "energy", "loss"}; }
  std::string probeUnit(int k) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  TransformerParams p_;
  double l1_ = 0, l2_ = 0, m_ = 0;
  int t_[4] = {0, 0, 0, 0};
  int i1_ = 0, i2_ = 0;
  // Slots: KCL rows x branch columns, branch rows x node columns, branch x branch.
  int sk_[4] = {0, 0, 0, 0};
  int sv_[2][2] = {{0, 0}, {0, 0}};
  int sb_[2][2] = {{0, 0}, {0, 0}};
  void derive();
};

}  // namespace disc
