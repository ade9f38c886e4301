// Thermal networks: heat nodes, heat paths and heat sources.
#include "disc/devices/thermal.hpp"

#include <fmt/format.h>
#include <cmath>
#include <set>

#include "check.hpp"
#include "disc/circuit.hpp"

namespace disc {

void HeatNodeParams::validate() const {
  detail::requirePositive("heat node", "heat capacity", capacity, "J/K");
  detail::requireNonNegative("heat node", "thermal resistance to ambient", toAmbient, "K/W");
}

HeatNode::HeatNode(std::string name, const HeatNodeParams& params)
    : DeviceBase(std::move(name), {}) {
  // A heat path's second end "ambient" means the surroundings; a node of that name would be
  // unreachable from any path and would shadow the word.
  if (name_ == HeatPath::kAmbient)
    throw InputError(
        "'ambient' is the word for the surroundings, not a heat node's name; call the heat "
        "node after what it stands for, e.g. chassis or sink");
  setParams(params);
}

void HeatNode::setParams(const HeatNodeParams& params) {
  detail::namedChecks(name_, [&] { params.validate(); });
  p_ = params;
}

const std::vector<DeviceParameter>& HeatNode::parameterTable() const {
  constexpr auto field = paramsField<HeatNode, HeatNodeParams>;
  static const std::vector<DeviceParameter> t = {
      field("capacity", &HeatNodeParams::capacity, "J/K", {}).within(1e-3, 1e8),
      field("to-ambient", &HeatNodeParams::toAmbient, "K/W", {}).within(0.0, 1e4)};
  return t;
}

const HeatNode& findHeatNode(const Circuit& c, const std::string& name, const std::string& user) {
  const auto* n = dynamic_cast<const HeatNode*>(c.find(name));
  if (!n) {
    const Device* d = c.find(name);
    throw InputError(
        d ? fmt::format("{}: '{}' is a {}, not a heat node", user, name, d->kind())
          : fmt::format("{}: no heat node named '{}' (declare it with heat-node)", user, name));
  }
  return *n;
}

void HeatNode::prepare(const Circuit& c) {
  ambient_ = c.ambient();
  // Heat that cannot reach the ambient accumulates without end: no steady state, and a
  // singular operating point. Walk the heat paths from this node.
  std::set<std::string> seen{name_}, frontier{name_};
  while (!frontier.empty()) {
    std::set<std::string> next;
    for (const std::string& n : frontier) {
      const auto* node = dynamic_cast<const HeatNode*>(c.find(n));
      if (node && node->p_.toAmbient > 0.0) return;
      for (const auto& d : c.devices()) {
        const auto* path = dynamic_cast<const HeatPath*>(d.get());
        if (!path) continue;
        if (path->from() != n && path->to() != n) continue;
        if (path->toAmbient()) return;
        const std::string& other = path->from() == n ? path->to() : path->from();
        if (seen.insert(other).second) next.insert(other);
      }
    }
    frontier = std::move(next);
  }
  throw InputError(fmt::format(
      "heat node '{}' has no way to the ambient: give it (or a node joined to it) to-ambient= "
      "or a heat-path to ambient; its heat would otherwise accumulate without end",
      name_));
}

std::vector<UnknownSpec> HeatNode::internalUnknowns() const {
  // Slow: a sink or a chassis takes minutes to warm, far longer than a mains period.
  return {{"temp", UnknownKind::Temperature, /*slow=*/true}};
}

void HeatNode::bind(const Binding& b) {
  th_ = b.internals[0];
}

void HeatNode::declare(PatternBuilder& pb) {
  pb.entry(th_, th_, diag_);
}

void HeatNode::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double th = ctx.x[th_];
  const double g = p_.toAmbient > 0.0 ? 1.0 / p_.toAmbient : 0.0;
  s.i[th_] += g * th;
  s.q[th_] += p_.capacity * th;
  if (!s.jacobian) return;
  s.G[diag_] += g;
  s.C[diag_] += p_.capacity;
}

void HeatNode::initialState(double* x) const {
  x[th_] = 0.0;
}

std::vector<std::string> HeatNode::probes() const {
  return {"temp", "loss", "stored"};
}

std::string HeatNode::probeUnit(int k) const {
  return k == 0 ? "K" : k == 1 ? "W" : "J";
}

double HeatNode::probe(int k, const EvalContext& ctx) const {
  const double th = ctx.x[th_];
  if (k == 0) return ambient_ + th;
  if (k == 1) return p_.toAmbient > 0.0 ? th / p_.toAmbient : 0.0;
  return p_.capacity * th;
}

HeatPath::HeatPath(std::string name, std::string from, std::string to, double resistance)
    : DeviceBase(std::move(name), {}), from_(std::move(from)), to_(std::move(to)) {
  if (from_ == kAmbient)
    throw InputError(
        fmt::format("{}: a heat path's first end is a heat node; write the "
                    "ambient second",
                    name_));
  if (from_ == to_)
    throw InputError(fmt::format("{}: a heat path joins two different heat nodes", name_));
  setResistance(resistance);
}

void HeatPath::setResistance(double kelvinPerWatt) {
  detail::namedChecks(name_, [&] {
    detail::requirePositive("heat path", "thermal resistance", kelvinPerWatt, "K/W");
  });
  r_ = kelvinPerWatt;
}

const std::vector<DeviceParameter>& HeatPath::parameterTable() const {
  static const std::vector<DeviceParameter> t = {
      parameterOf<HeatPath>("resistance", &HeatPath::resistance, &HeatPath::setResistance, "K/W")
          .within(1e-4, 1e4)};
  return t;
}

void HeatPath::prepare(const Circuit& c) {
  a_ = &findHeatNode(c, from_, name_);
  b_ = toAmbient() ? nullptr : &findHeatNode(c, to_, name_);
}

void HeatPath::bind(const Binding& b) {
  ground_ = b.ground;
}

void HeatPath::declare(PatternBuilder& pb) {
  // The nodes' unknowns are bound by now (every device is bound before any declares).
  ua_ = a_->unknown();
  ub_ = b_ ? b_->unknown() : ground_;
  slots_.declare(pb, ua_, ub_);
}

void HeatPath::evaluate(const EvalContext& ctx, Stamp& s) const {
  const double g = 1.0 / r_, flow = g * (ctx.x[ua_] - ctx.x[ub_]);
  s.i[ua_] += flow;
  s.i[ub_] -= flow;
  if (s.jacobian) slots_.add(s.G, g);
}

double HeatPath::probe(int, const EvalContext& ctx) const {
  return (ctx.x[ua_] - ctx.x[ub_]) / r_;
}

HeatSource::HeatSource(std::string name, std::string node, double power)
    : DeviceBase(std::move(name), {}), node_(std::move(node)) {
  if (node_ == HeatPath::kAmbient)
    throw InputError(
        fmt::format("{}: a heat source heats a heat node, and 'ambient' is none (heat into the "
                    "surroundings warms nothing the run models); name the heat node it warms",
                    name_));
  setPower(power);
}

void HeatSource::setPower(double watts) {
  detail::namedChecks(name_,
                      [&] { detail::requireNonNegative("heat source", "power", watts, "W"); });
  power_ = watts;
}

const std::vector<DeviceParameter>& HeatSource::parameterTable() const {
  static const std::vector<DeviceParameter> t = {
      parameterOf<HeatSource>("power", &HeatSource::power, &HeatSource::setPower, "W")
          .within(0.0, 1e6)};
  return t;
}

void HeatSource::prepare(const Circuit& c) {
  target_ = &findHeatNode(c, node_, name_);
}

void HeatSource::evaluate(const EvalContext& ctx, Stamp& s) const {
  // Scaled with the electrical sources, so source stepping starts from a cold network too.
  s.i[target_->unknown()] -= power_ * ctx.sourceScale;
}

double HeatSource::probe(int, const EvalContext& ctx) const {
  return power_ * ctx.sourceScale;
}

std::map<std::string, double> steadyHeatNodeRises(const Circuit& c,
                                                  const std::map<std::string, double>& heatInto) {
  std::vector<const HeatNode*> nodes;
  std::map<std::string, std::size_t> index;
  for (const auto& d : c.devices())
    if (const auto* n = dynamic_cast<const HeatNode*>(d.get())) {
      index[n->name()] = nodes.size();
      nodes.push_back(n);
    }
  const std::size_t n = nodes.size();
  std::map<std::string, double> rises;
  if (n == 0) {
    if (!heatInto.empty())
      throw InputError(fmt::format("no heat node named '{}'", heatInto.begin()->first));
    return rises;
  }
  std::vector<double> g(n * n, 0.0), q(n, 0.0);
  auto at = [&](const std::string& name, const std::string& user) {
    const auto it = index.find(name);
    if (it == index.end()) throw InputError(fmt::format("{}: no heat node named '{}'", user, name));
    return it->second;
  };
  for (std::size_t k = 0; k < n; ++k)
    if (nodes[k]->params().toAmbient > 0.0) g[k * n + k] += 1.0 / nodes[k]->params().toAmbient;
  for (const auto& d : c.devices()) {
    if (const auto* p = dynamic_cast<const HeatPath*>(d.get())) {
      const std::size_t a = at(p->from(), p->name());
      const double gp = 1.0 / p->resistance();
      g[a * n + a] += gp;
      if (!p->toAmbient()) {
        const std::size_t b = at(p->to(), p->name());
        g[b * n + b] += gp;
        g[a * n + b] -= gp;
        g[b * n + a] -= gp;
      }
    } else if (const auto* s = dynamic_cast<const HeatSource*>(d.get())) {
      q[at(s->node(), s->name())] += s->power();
    }
  }
  for (const auto& [name, watts] : heatInto) q[at(name, "heat")] += watts;
  // Gaussian elimination with partial pivoting: a handful of nodes, and G is symmetric
  // positive definite when every node reaches the ambient (HeatNode::prepare checks it).
  for (std::size_t col = 0; col < n; ++col) {
    std::size_t piv = col;
    for (std::size_t r = col + 1; r < n; ++r)
      if (std::abs(g[r * n + col]) > std::abs(g[piv * n + col])) piv = r;
    if (!(std::abs(g[piv * n + col]) > 0.0))
      throw InputError(
          fmt::format("heat node '{}' has no way to the ambient: it has no steady temperature",
                      nodes[col]->name()));
    if (piv != col) {
      for (std::size_t k = 0; k < n; ++k) std::swap(g[col * n + k], g[piv * n + k]);
      std::swap(q[col], q[piv]);
    }
    for (std::size_t r = col + 1; r < n; ++r) {
      const double f = g[r * n + col] / g[col * n + col];
      for (std::size_t k = col; k < n; ++k) g[r * n + k] -= f * g[col * n + k];
      q[r] -= f * q[col];
    }
  }
  std::vector<double> theta(n, 0.0);
  for (std::size_t r = n; r-- > 0;) {
    double s = q[r];
    for (std::size_t k = r + 1; k < n; ++k) s -= g[r * n + k] * theta[k];
    theta[r] = s / g[r * n + r];
  }
  for (std::size_t k = 0; k < n; ++k) rises[nodes[k]->name()] = theta[k];
  return rises;
}

}  // namespace disc
