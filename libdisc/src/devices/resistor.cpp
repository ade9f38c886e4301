// Linear resistor.
#include "disc/devices/resistor.hpp"

#include "check.hpp"

namespace disc {

Resistor::Resistor(std::string name, NodeId a, NodeId b, double resistance)
    : DeviceBase(std::move(name), {a, b}) {
  setResistance(resistance);
}

void Resistor::setResistance(double ohm) {
  detail::requirePositive(name_, "resistance", ohm, "ohm");
  g_ = 1.0 / ohm;
}

const std::vector<DeviceParameter>& Resistor::parameterTable() const {
  static const std::vector<DeviceParameter> t = {
      parameterOf<Resistor>("resistance", &Resistor::resistance, &Resistor::setResistance, "ohm")
          .within(1e-6, 1e12)};
  return t;
}

void Resistor::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
}

void Resistor::declare(PatternBuilder& pb) {
  s_.declare(pb, a_, b_);
}

void Resistor::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double i = g_ * (ctx.x[a_] - ctx.x[b_]);
  s.i[a_] += i;
  s.i[b_] -= i;
  if (s.jacobian) s_.add(s.G, g_);
}

double Resistor::probe(int k, const EvalContext& ctx) const {
  const double v = ctx.x[a_] - ctx.x[b_];
  return k == 0 ? g_ * v : g_ * v * v;
}

}  // namespace disc
