// Two-winding transformer as coupled windings: lambda1 = L1 i1 + M i2, lambda2 = M i1 + L2 i2,
// with L1 = Ll1 + Lm, M = Lm / n, L2 = Ll2 + Lm / n^2 (the T-equivalent referred to each side).
#include "disc/devices/transformer.hpp"

#include "check.hpp"

namespace disc {

void TransformerParams::validate() const {
  detail::requirePositive("transformer", "turns ratio", ratio, "");
  detail::requireNonNegative("transformer", "primary resistance", r1, "ohm");
  detail::requireNonNegative("transformer", "secondary resistance", r2, "ohm");
  detail::requireNonNegative("transformer", "primary leakage inductance", leakage1, "H");
  detail::requireNonNegative("transformer", "secondary leakage inductance", leakage2, "H");
  detail::requirePositive("transformer", "magnetizing inductance", magnetizing, "H");
}

Transformer::Transformer(std::string name, NodeId p1, NodeId n1, NodeId p2, NodeId n2,
                         const TransformerParams& params)
    : DeviceBase(std::move(name), {p1, n1, p2, n2}) {
  setParams(params);
}

void Transformer::setParams(const TransformerParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
  derive();
}

const std::vector<DeviceParameter>& Transformer::parameterTable() const {
  constexpr auto field = paramsField<Transformer, TransformerParams>;
  static const std::vector<DeviceParameter> t = {
      field("ratio", &TransformerParams::ratio, "", {}).within(1e-3, 1e3),
      field("r1", &TransformerParams::r1, "ohm", {}).within(0.0, 1e6),
      field("r2", &TransformerParams::r2, "ohm", {}).within(0.0, 1e6),
      field("leakage1", &TransformerParams::leakage1, "H", {}).within(0.0, 1e3),
      field("leakage2", &TransformerParams::leakage2, "H", {}).within(0.0, 1e3),
      field("magnetizing", &TransformerParams::magnetizing, "H", {}).within(1e-6, 1e4)};
  return t;
}

void Transformer::derive() {
  const double n = p_.ratio;
  l1_ = p_.leakage1 + p_.magnetizing;
  m_ = p_.magnetizing / n;
  l2_ = p_.leakage2 + p_.magnetizing / (n * n);
}

std::vector<UnknownSpec> Transformer::internalUnknowns() const {
  return {{"i1", UnknownKind::Current}, {"i2", UnknownKind::Current}};
}

void Transformer::bind(const Binding& b) {
  for (int k = 0; k < 4; ++k) t_[k] = b.terminals[static_cast<std::size_t>(k)];
  i1_ = b.internals[0];
  i2_ = b.internals[1];
}

void Transformer::declare(PatternBuilder& pb) {
  const int br[2] = {i1_, i2_};
  for (int w = 0; w < 2; ++w) {
    pb.entry(t_[2 * w], br[w], sk_[2 * w]);
    pb.entry(t_[2 * w + 1], br[w], sk_[2 * w + 1]);
    pb.entry(br[w], t_[2 * w], sv_[w][0]);
    pb.entry(br[w], t_[2 * w + 1], sv_[w][1]);
    for (int c = 0; c < 2; ++c) pb.entry(br[w], br[c], sb_[w][c]);
  }
}

void Transformer::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double* x = ctx.x;
  const double i1 = x[i1_], i2 = x[i2_];
  s.i[t_[0]] += i1;
  s.i[t_[1]] -= i1;
  s.i[t_[2]] += i2;
  s.i[t_[3]] -= i2;
  // Winding equations: v_w - R_w i_w - d(lambda_w)/dt = 0.
  s.i[i1_] += x[t_[0]] - x[t_[1]] - p_.r1 * i1;
  s.i[i2_] += x[t_[2]] - x[t_[3]] - p_.r2 * i2;
  s.q[i1_] -= l1_ * i1 + m_ * i2;
  s.q[i2_] -= m_ * i1 + l2_ * i2;
  if (!s.jacobian) return;
  for (int w = 0; w < 2; ++w) {
    s.G[sk_[2 * w]] += 1.0;
    s.G[sk_[2 * w + 1]] -= 1.0;
    s.G[sv_[w][0]] += 1.0;
    s.G[sv_[w][1]] -= 1.0;
  }
  s.G[sb_[0][0]] -= p_.r1;
  s.G[sb_[1][1]] -= p_.r2;
  s.C[sb_[0][0]] -= l1_;
  s.C[sb_[0][1]] -= m_;
  s.C[sb_[1][0]] -= m_;
  s.C[sb_[1][1]] -= l2_;
}

std::string Transformer::probeUnit(int k) const {
  return k < 2 ? "A" : (k == 2 || k == 4) ? "W" : "J";
}

double Transformer::probe(int k, const EvalContext& ctx) const {
  const double* x = ctx.x;
  const double i1 = x[i1_], i2 = x[i2_];
  switch (k) {
    case 0:
      return i1;
    case 1:
      return i2;
    case 2:
      return (x[t_[0]] - x[t_[1]]) * i1 + (x[t_[2]] - x[t_[3]]) * i2;
    case 4:
      return p_.r1 * i1 * i1 + p_.r2 * i2 * i2;
    default:
      return 0.5 * l1_ * i1 * i1 + m_ * i1 * i2 + 0.5 * l2_ * i2 * i2;
  }
}

}  // namespace disc
