// Inductor and mutual coupling.
#include "disc/devices/inductor.hpp"

#include <cmath>

#include "check.hpp"
#include "disc/circuit.hpp"

namespace disc {

Inductor::Inductor(std::string name, NodeId a, NodeId b, double inductance, double resistance)
    : DeviceBase(std::move(name), {a, b}) {
  setInductance(inductance);
  setResistance(resistance);
}

void Inductor::setInductance(double henry) {
  detail::requirePositive(name_, "inductance", henry, "H");
  l_ = henry;
}

void Inductor::setResistance(double ohm) {
  detail::requireNonNegative(name_, "winding resistance", ohm, "ohm");
  r_ = ohm;
}

const std::vector<DeviceParameter>& Inductor::parameterTable() const {
  static const std::vector<DeviceParameter> t = {
      parameterOf<Inductor>("inductance", &Inductor::inductance, &Inductor::setInductance, "H")
          .within(1e-12, 1e4),
      parameterOf<Inductor>("resistance", &Inductor::resistance, &Inductor::setResistance, "ohm")
          .within(0.0, 1e9)};
  return t;
}

std::vector<UnknownSpec> Inductor::internalUnknowns() const {
  return {{"i", UnknownKind::Current}};
}

void Inductor::bind(const Binding& b) {
  a_ = b.terminals[0];
  b_ = b.terminals[1];
  br_ = b.internals[0];
}

void Inductor::declare(PatternBuilder& pb) {
  pb.entry(a_, br_, sab_);
  pb.entry(b_, br_, sbb_);
  pb.entry(br_, a_, sba_);
  pb.entry(br_, b_, sbr_);
  pb.entry(br_, br_, sbrbr_);
}

void Inductor::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double i = ctx.x[br_];
  s.i[a_] += i;
  s.i[b_] -= i;
  // Branch equation: v_a - v_b - R i - d(L i)/dt = 0.
  s.i[br_] += ctx.x[a_] - ctx.x[b_] - r_ * i;
  s.q[br_] -= l_ * i;
  if (!s.jacobian) return;
  s.G[sab_] += 1.0;
  s.G[sbb_] -= 1.0;
  s.G[sba_] += 1.0;
  s.G[sbr_] -= 1.0;
  s.G[sbrbr_] -= r_;
  s.C[sbrbr_] -= l_;
}

std::string Inductor::probeUnit(int k) const {
  return k == 0 ? "A" : k == 1 ? "W" : "J";
}

double Inductor::probe(int k, const EvalContext& ctx) const {
  const double i = ctx.x[br_];
  if (k == 0) return i;
  if (k == 1) return (ctx.x[a_] - ctx.x[b_]) * i;
  return 0.5 * l_ * i * i;
}

Coupling::Coupling(std::string name, std::string first, std::string second, double k)
    : DeviceBase(std::move(name), {}), first_(std::move(first)), second_(std::move(second)) {
  setCoefficient(k);
  if (first_ == second_) throw InputError(name_ + ": an inductor cannot be coupled to itself");
}

void Coupling::setCoefficient(double k) {
  if (!(k > 0.0 && k <= 1.0))
    throw InputError(fmt::format("{}: coupling coefficient must lie in (0, 1], got {}", name_, k));
  k_ = k;
}

void Coupling::prepare(const Circuit& c) {
  auto find = [&](const std::string& n) {
    const auto* l = dynamic_cast<const Inductor*>(c.find(n));
    if (!l) throw InputError(fmt::format("{}: '{}' is not an inductor of this circuit", name_, n));
    return l;
  };
  l1_ = find(first_);
  l2_ = find(second_);
}

void Coupling::bind(const Binding&) {}

void Coupling::declare(PatternBuilder& pb) {
  if (!l1_ || !l2_) throw InputError(name_ + ": coupling used before its inductors were linked");
  pb.entry(l1_->branch(), l2_->branch(), s12_);
  pb.entry(l2_->branch(), l1_->branch(), s21_);
}

void Coupling::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double m = k_ * std::sqrt(l1_->inductance() * l2_->inductance());
  s.q[l1_->branch()] -= m * ctx.x[l2_->branch()];
  s.q[l2_->branch()] -= m * ctx.x[l1_->branch()];
  if (!s.jacobian) return;
  s.C[s12_] -= m;
  s.C[s21_] -= m;
}

double Coupling::probe(int, const EvalContext& ctx) const {
  const double m = k_ * std::sqrt(l1_->inductance() * l2_->inductance());
  return m * ctx.x[l1_->branch()] * ctx.x[l2_->branch()];
}

}  // namespace disc
