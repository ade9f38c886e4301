// Linear capacitor.
#include "disc/devices/capacitor.hpp"

#include "check.hpp"

namespace disc {

Capacitor::Capacitor(std::string name, NodeId a, NodeId b, double capacitance)
    : DeviceBase(std::move(name), {a, b}) {
  setCapacitance(capacitance);
}

void Capacitor::setCapacitance(double farad) {
  detail::requirePositive(name_, "capacitance", farad, "F");
  c_ = farad;
}

const std::vector<DeviceParameter>& Capacitor::parameterTable() const {
  static const std::vector<DeviceParameter> t = {
      parameterOf<Capacitor>("capacitance", &Capacitor::capacitance, &Capacitor::setCapacitance,
                             "F")
          .within(1e-15, 10.0)};
  return t;
}

void Capacitor::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
}

void Capacitor::declare(PatternBuilder& pb) {
  s_.declare(pb, a_, b_);
}

void Capacitor::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double q = c_ * (ctx.x[a_] - ctx.x[b_]);
  s.q[a_] += q;
  s.q[b_] -= q;
  if (s.jacobian) s_.add(s.C, c_);
}

std::string Capacitor::probeUnit(int k) const {
  return k == 0 ? "A" : k == 1 ? "W" : "J";
}

double Capacitor::probe(int k, const EvalContext& ctx) const {
  const double v = ctx.x[a_] - ctx.x[b_];
  const double i = c_ * (ctx.xdot[a_] - ctx.xdot[b_]);
  if (k == 0) return i;
  if (k == 1) return v * i;
  return 0.5 * c_ * v * v;
}

}  // namespace disc
