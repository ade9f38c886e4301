// Assembly of the MNA system: unknown allocation, sparse pattern, evaluation sweeps.
#include "system.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

#include "disc/error.hpp"

namespace disc::detail {
namespace {

/// Collects (row, col, &slot) requests, then writes the compressed-pattern slot into each.
class Collector : public PatternBuilder {
 public:
  explicit Collector(int ground) : ground_(ground) {}
  void entry(int row, int col, int& slot) override { requests_.push_back({row, col, &slot}); }

  Eigen::SparseMatrix<double> compress(int n) {
    std::vector<Eigen::Triplet<double>> triplets;
    triplets.reserve(requests_.size());
    for (const auto& r : requests_)
      if (r.row != ground_ && r.col != ground_) triplets.emplace_back(r.row, r.col, 1.0);
    Eigen::SparseMatrix<double> m(n, n);
    m.setFromTriplets(triplets.begin(), triplets.end());
    m.makeCompressed();
    const int discard = static_cast<int>(m.nonZeros());
    for (const auto& r : requests_) {
      if (r.row == ground_ || r.col == ground_) {
        *r.slot = discard;
        continue;
      }
      const int* inner = m.innerIndexPtr();
      const int begin = m.outerIndexPtr()[r.col], end = m.outerIndexPtr()[r.col + 1];
      *r.slot = static_cast<int>(std::lower_bound(inner + begin, inner + end, r.row) - inner);
    }
    return m;
  }

 private:
  struct Request {
    int row, col;
    int* slot;
  };
  int ground_;
  std::vector<Request> requests_;
};

struct UnionFind {
  std::vector<int> parent;
  explicit UnionFind(int n) : parent(static_cast<std::size_t>(n)) {
    std::iota(parent.begin(), parent.end(), 0);
  }
  int find(int a) {
    while (parent[a] != a) a = parent[a] = parent[parent[a]];
    return a;
  }
  bool unite(int a, int b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    parent[a] = b;
    return true;
  }
};

}  // namespace

System::System(const Circuit& circuit) : circuit_(circuit) {
  for (const auto& d : circuit_.devices()) {
    devices_.push_back(d.get());
    d->prepare(circuit_);
  }
  // Unknowns in device order: a device's terminal nodes (at first use), then its internals, so
  // that what one device touches lies close together in memory (long stacks and ladders).
  const int nodes = circuit_.nodeCount();
  nodeUnknown_.assign(static_cast<std::size_t>(nodes), -1);
  auto addUnknown = [this](std::string name, UnknownKind kind, bool node, bool slow = false) {
    names_.push_back(std::move(name));
    kinds_.push_back(kind);
    slow_.push_back(slow ? 1 : 0);
    isNode_.push_back(node ? 1 : 0);
    return static_cast<int>(names_.size()) - 1;
  };
  auto addNode = [&](NodeId id) {
    if (id == kGround || nodeUnknown_[static_cast<std::size_t>(id)] >= 0) return;
    const int k = addUnknown(circuit_.nodeName(id), UnknownKind::Voltage, true);
    nodeUnknown_[static_cast<std::size_t>(id)] = k;
    nodeRows_.push_back(k);
  };
  std::vector<std::vector<int>> internals(devices_.size());
  for (std::size_t k = 0; k < devices_.size(); ++k) {
    for (NodeId t : devices_[k]->terminals()) addNode(t);
    for (const auto& spec : devices_[k]->internalUnknowns())
      internals[k].push_back(
          addUnknown(devices_[k]->name() + "." + spec.suffix, spec.kind, false, spec.slow));
  }
  for (NodeId id = 0; id < nodes; ++id) addNode(id);
  n_ = static_cast<int>(names_.size());
  if (n_ == 0) throw InputError("the circuit has no nodes or unknowns to solve for");
  terminalIndex_.resize(devices_.size());
  for (std::size_t k = 0; k < devices_.size(); ++k) {
    Binding b;
    b.ground = n_;
    for (NodeId t : devices_[k]->terminals()) b.terminals.push_back(unknownOfNode(t));
    b.internals = internals[k];
    b.limitCell = limitCells_;
    limitCells_ += devices_[k]->limitCells();
    terminalIndex_[k] = b.terminals;
    devices_[k]->bind(b);
  }
  std::vector<JunctionPair> pairs;
  for (const Device* d : devices_) d->junctionPairs(pairs);
  for (const JunctionPair& j : pairs) {
    if (!(j.scale > 0.0))
      throw InputError(
          fmt::format("a device declared a junction with voltage scale {} V; it "
                      "must be positive (a device model error)",
                      j.scale));
    junctionPos_.push_back(j.positive);
    junctionNeg_.push_back(j.negative);
    junctionHalfCurvature_.push_back(0.5 / j.scale);
  }
  Collector collector(n_);
  diag_.assign(static_cast<std::size_t>(n_), 0);
  for (int k = 0; k < n_; ++k) collector.entry(k, k, diag_[static_cast<std::size_t>(k)]);
  for (Device* d : devices_) d->declare(collector);
  jac_ = collector.compress(n_);
  const std::size_t slots = static_cast<std::size_t>(jac_.nonZeros()) + 1;
  G.assign(slots, 0.0);
  C.assign(slots, 0.0);
  i.assign(static_cast<std::size_t>(n_) + 1, 0.0);
  q.assign(static_cast<std::size_t>(n_) + 1, 0.0);
  stampLinearDevices();
}

void System::stampLinearDevices() {
  // A linear device's stamp does not depend on x: taken once at x = 0 (the currents and
  // charges it adds there are zero, and ignored), into G and C, which every evaluation
  // overwrites. Kept as lists of nonzeros, not as slot arrays: a large circuit of nonlinear
  // devices should not pay two more arrays per slot.
  std::fill(G.begin(), G.end(), 0.0);
  std::fill(C.begin(), C.end(), 0.0);
  const std::vector<double> zeros(static_cast<std::size_t>(n_) + 1, 0.0);
  EvalContext ctx;
  ctx.x = zeros.data();
  ctx.xdot = zeros.data();
  Stamp s{i.data(), q.data(), G.data(), C.data(), true};
  evaluated_.clear();
  for (Device* d : devices_) {
    if (d->isLinear())
      d->evaluate(ctx, s);
    else
      evaluated_.push_back(d);
  }
  linearCurrents_.clear();
  linearCharges_.clear();
  const int* outer = jac_.outerIndexPtr();
  const int* inner = jac_.innerIndexPtr();
  for (int col = 0; col < n_; ++col)
    for (int k = outer[col]; k < outer[col + 1]; ++k) {
      const auto slot = static_cast<std::size_t>(k);
      if (G[slot] != 0.0) linearCurrents_.push_back({k, inner[k], col, G[slot]});
      if (C[slot] != 0.0) linearCharges_.push_back({k, inner[k], col, C[slot]});
    }
}

std::string System::describe(int k) const {
  if (k < 0 || k >= n_) return "(none)";
  if (isNode(k)) return fmt::format("node '{}'", names_[static_cast<std::size_t>(k)]);
  return fmt::format("unknown '{}'", names_[static_cast<std::size_t>(k)]);
}

std::vector<double> System::absTolerances(const Tolerances& tol) const {
  std::vector<double> a(static_cast<std::size_t>(n_) + 1, 0.0);
  for (int k = 0; k < n_; ++k) {
    switch (kinds_[static_cast<std::size_t>(k)]) {
      case UnknownKind::Voltage:
        a[static_cast<std::size_t>(k)] = tol.voltage;
        break;
      case UnknownKind::Current:
        a[static_cast<std::size_t>(k)] = tol.current;
        break;
      case UnknownKind::Temperature:
        a[static_cast<std::size_t>(k)] = tol.temperature;
        break;
      case UnknownKind::State:
        a[static_cast<std::size_t>(k)] = tol.state;
        break;
    }
  }
  return a;
}

void System::evaluate(const EvalContext& ctx, bool jacobian) {
  std::fill(i.begin(), i.end(), 0.0);
  std::fill(q.begin(), q.end(), 0.0);
  if (jacobian) {
    std::fill(G.begin(), G.end(), 0.0);
    std::fill(C.begin(), C.end(), 0.0);
    for (const LinearTerm& t : linearCurrents_) G[static_cast<std::size_t>(t.slot)] = t.value;
    for (const LinearTerm& t : linearCharges_) C[static_cast<std::size_t>(t.slot)] = t.value;
  }
  for (const LinearTerm& t : linearCurrents_)
    i[static_cast<std::size_t>(t.row)] += t.value * ctx.x[t.col];
  for (const LinearTerm& t : linearCharges_)
    q[static_cast<std::size_t>(t.row)] += t.value * ctx.x[t.col];
  Stamp s{i.data(), q.data(), G.data(), C.data(), jacobian};
  forEachDevice([&](const Device* d) { d->evaluate(ctx, s); });
  if (!frozenRows_.empty()) applyFrozen(ctx, jacobian);
}

void System::freeze(const std::vector<int>& rows, const std::vector<double>& x) {
  unfreeze();
  std::vector<int> position(static_cast<std::size_t>(n_), -1);
  for (int r : rows) {
    if (r < 0 || r >= n_) throw InputError("freeze: unknown index out of range");
    if (position[static_cast<std::size_t>(r)] >= 0) continue;
    position[static_cast<std::size_t>(r)] = static_cast<int>(frozenRows_.size());
    frozenRows_.push_back(r);
    frozenValues_.push_back(x[static_cast<std::size_t>(r)]);
  }
  frozenCurrents_.assign(frozenRows_.size(), 0.0);
  const int* outer = jac_.outerIndexPtr();
  const int* inner = jac_.innerIndexPtr();
  for (int col = 0; col < n_; ++col)
    for (int k = outer[col]; k < outer[col + 1]; ++k) {
      const int at = position[static_cast<std::size_t>(inner[k])];
      if (at < 0) continue;
      frozenEntries_.push_back({at, col, 0.0, 0.0});
      frozenSlots_.push_back(k);
    }
}

void System::unfreeze() {
  frozenRows_.clear();
  frozenValues_.clear();
  frozenCurrents_.clear();
  frozenEntries_.clear();
  frozenSlots_.clear();
}

void System::applyFrozen(const EvalContext& ctx, bool jacobian) {
  for (std::size_t k = 0; k < frozenRows_.size(); ++k) {
    const auto r = static_cast<std::size_t>(frozenRows_[k]);
    frozenCurrents_[k] = i[r];
    i[r] = ctx.x[r] - frozenValues_[k];
    q[r] = 0.0;
  }
  if (!jacobian) return;
  for (std::size_t k = 0; k < frozenSlots_.size(); ++k) {
    const auto slot = static_cast<std::size_t>(frozenSlots_[k]);
    frozenEntries_[k].g = G[slot];
    frozenEntries_[k].c = C[slot];
    G[slot] = 0.0;
    C[slot] = 0.0;
  }
  for (int r : frozenRows_) G[static_cast<std::size_t>(diag_[static_cast<std::size_t>(r)])] = 1.0;
}

void System::evaluateCharges(const EvalContext& ctx) {
  std::fill(q.begin(), q.end(), 0.0);
  for (const LinearTerm& t : linearCharges_)
    q[static_cast<std::size_t>(t.row)] += t.value * ctx.x[t.col];
  Stamp s{i.data(), q.data(), G.data(), C.data(), false};
  forEachDevice([&](const Device* d) { d->evaluateCharges(ctx, s); });
  for (int r : frozenRows_) q[static_cast<std::size_t>(r)] = 0.0;
}

void System::junctionMeasures(const EvalContext& ctx, const double* dx, double& step,
                              double& remainder) const {
  // A flat table rather than a call per device: in a large circuit the device objects are
  // scattered in memory and one more pass over them per Newton iteration misses the cache.
  double m = 0.0, r = 0.0;
  const std::size_t count = junctionPos_.size();
  for (std::size_t k = 0; k < count; ++k) {
    const int a = junctionPos_[k], b = junctionNeg_[k];
    const double v = ctx.x[a] - ctx.x[b], dv = dx[a] - dx[b];
    const double inv = 1.0 / (ctx.reltol * std::max(std::abs(v), std::abs(v - dv)) + ctx.vabstol);
    m = std::max(m, std::abs(dv) * inv);
    r = std::max(r, dv * dv * junctionHalfCurvature_[k] * inv);
  }
  step = m;
  remainder = r;
}

void System::assemble(double a0, double gmin) {
  double* v = jac_.valuePtr();
  const int nz = nnz();
  if (a0 == 0.0) {
    std::copy(G.begin(), G.begin() + nz, v);
  } else {
    for (int k = 0; k < nz; ++k)
      v[k] = G[static_cast<std::size_t>(k)] + a0 * C[static_cast<std::size_t>(k)];
  }
  if (gmin > 0.0)
    for (int k : nodeRows_) v[diag_[static_cast<std::size_t>(k)]] += gmin;
}

void System::jacobianTimes(double a0, double gmin, const double* v, double* out) const {
  std::fill(out, out + n_ + 1, 0.0);
  const int* outer = jac_.outerIndexPtr();
  const int* inner = jac_.innerIndexPtr();
  for (int col = 0; col < n_; ++col) {
    const double vc = v[col];
    for (int s = outer[col]; s < outer[col + 1]; ++s)
      out[inner[s]] += (G[static_cast<std::size_t>(s)] + a0 * C[static_cast<std::size_t>(s)]) * vc;
  }
  if (gmin > 0.0)
    for (int k : nodeRows_) out[k] += gmin * v[k];
  out[n_] = 0.0;
}

std::vector<double> System::breakpoints(double from, double to) const {
  std::vector<double> out;
  for (const Device* d : devices_) d->breakpoints(from, to, out);
  std::sort(out.begin(), out.end());
  out.erase(std::unique(out.begin(), out.end(),
                        [to](double a, double b) { return std::abs(a - b) <= 1e-12 * to; }),
            out.end());
  return out;
}

void System::checkDcTopology() const {
  // Union-find over unknown indices; n_ (the ground sentinel) stands for gnd.
  UnionFind dc(n_ + 1);
  UnionFind forced(n_ + 1);
  for (std::size_t k = 0; k < devices_.size(); ++k) {
    const auto& t = terminalIndex_[k];
    for (auto [a, b] : devices_[k]->dcPaths())
      dc.unite(t[static_cast<std::size_t>(a)], t[static_cast<std::size_t>(b)]);
    if (devices_[k]->definesVoltage() && !forced.unite(t[0], t[1]))
      throw SingularCircuitError(
          fmt::format("'{}' closes a loop of voltage sources and inductors: at DC such a loop "
                      "has no unique current; add a small series resistance",
                      devices_[k]->name()),
          devices_[k]->name());
  }
  const int root = dc.find(n_);
  for (int k : nodeRows_)
    if (dc.find(k) != root)
      throw SingularCircuitError(
          fmt::format("node '{}' has no DC path to gnd (it connects only through capacitors or "
                      "current sources); add a high-value resistor to gnd or start the transient "
                      "cold",
                      names_[static_cast<std::size_t>(k)]),
          names_[static_cast<std::size_t>(k)]);
}

double System::naturalStep() const {
  double h = std::numeric_limits<double>::infinity();
  for (const Device* d : devices_) h = std::min(h, d->stepHint());
  return h;
}

}  // namespace disc::detail
