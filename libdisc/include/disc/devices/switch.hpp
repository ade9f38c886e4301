// Time-controlled switch: a mains switch closing, a load stepping in.
#pragma once

#include <vector>

#include "disc/device.hpp"

namespace disc {

/// Its on-resistance when closed and off-resistance when open (ohm); toggles at each listed time
/// (s).
class Switch : public DeviceBase<Switch> {
 public:
  Switch(std::string name, NodeId a, NodeId b, bool closedAtStart, std::vector<double> toggles,
         double ron = 1e-3, double roff = 1e9);
  std::string_view kind() const override { return "switch"; }
  bool closedAt(double t) const;
  double onResistance() const { return ron_; }
  double offResistance() const { return roff_; }
  /// Both resistances, checked together (open above closed); a refused pair leaves them as
  /// they were.
  void setResistances(double ron, double roff);
  const std::vector<DeviceParameter>& parameterTable() const override;

  void bind(const Binding& b) override;
  void declare(PatternBuilder& pb) override;
  void evaluate(const EvalContext& ctx, Stamp& s) const override;
  void evaluateCharges(const EvalContext&, Stamp&) const override {}  // no charge
  void breakpoints(double from, double to, std::vector<double>& out) const override;
  double probe(int k, const EvalContext& ctx) const override;

 private:
  bool closed0_;
  std::vector<double> toggles_;
  double ron_, roff_;
  int a_ = 0, b_ = 0;
  PairSlots s_;
};

}  // namespace disc
