// Time-controlled switch.
#include "disc/devices/switch.hpp"

#include <algorithm>

#include "check.hpp"

namespace disc {

Switch::Switch(std::string name, NodeId a, NodeId b, bool closedAtStart,
               std::vector<double> toggles, double ron, double roff)
    : DeviceBase(std::move(name), {a, b}),
      closed0_(closedAtStart),
      toggles_(std::move(toggles)),
      ron_(ron),
      roff_(roff) {
  setResistances(ron, roff);
  if (!std::is_sorted(toggles_.begin(), toggles_.end()))
    throw InputError(name_ + ": switching times must be in increasing order");
}

void Switch::setResistances(double ron, double roff) {
  detail::requirePositive(name_, "closed resistance", ron, "ohm");
  detail::requirePositive(name_, "open resistance", roff, "ohm");
  if (!(roff > ron)) throw InputError(name_ + ": open resistance must exceed closed resistance");
  ron_ = ron;
  roff_ = roff;
}

const std::vector<DeviceParameter>& Switch::parameterTable() const {
  // The resistor's range: beyond it the matrix loses the smaller conductances' digits.
  static const std::vector<DeviceParameter> t = {
      DeviceParameter{"on-resistance",
                      [](const Device& d) { return static_cast<const Switch&>(d).ron_; },
                      [](Device& d, double v) {
                        auto& s = static_cast<Switch&>(d);
                        s.setResistances(v, s.roff_);
                      },
                      "ohm",
                      {"ron"}}
          .within(1e-6, 1e12),
      DeviceParameter{"off-resistance",
                      [](const Device& d) { return static_cast<const Switch&>(d).roff_; },
                      [](Device& d, double v) {
                        auto& s = static_cast<Switch&>(d);
                        s.setResistances(s.ron_, v);
                      },
                      "ohm",
                      {"roff"}}
          .within(1e-6, 1e12)};
  return t;
}

bool Switch::closedAt(double t) const {
  const auto flips = std::upper_bound(toggles_.begin(), toggles_.end(), t) - toggles_.begin();
  return (flips % 2 == 0) ? closed0_ : !closed0_;
}

void Switch::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
}

void Switch::declare(PatternBuilder& pb) {
  s_.declare(pb, a_, b_);
}

void Switch::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double g = 1.0 / (closedAt(ctx.time) ? ron_ : roff_);
  const double i = g * (ctx.x[a_] - ctx.x[b_]);
  s.i[a_] += i;
  s.i[b_] -= i;
  if (s.jacobian) s_.add(s.G, g);
}

void Switch::breakpoints(double from, double to, std::vector<double>& out) const {
  for (double t : toggles_)
    if (t > from && t <= to) out.push_back(t);
}

double Switch::probe(int k, const EvalContext& ctx) const {
  const double g = 1.0 / (closedAt(ctx.time) ? ron_ : roff_);
  const double v = ctx.x[a_] - ctx.x[b_];
  return k == 0 ? g * v : g * v * v;
}

}  // namespace disc
