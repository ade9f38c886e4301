// Compiled static-pivot sparse LU.
#include "static_lu.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <queue>

namespace disc::detail {

void StaticLu::clear() {
  n_ = 0;
  perm_.clear();
  qperm_.clear();
  colStart_.clear();
  diag_.clear();
  row_.clear();
  ops_.clear();
  load_.clear();
  fill_.clear();
  levelEnd_.clear();
  pivots_.clear();
  scales_.clear();
  lower_.clear();
  upperSolve_.clear();
  lu_.clear();
  invPivot_.clear();
  pivotTerms_.clear();
  pivotMass_.clear();
  pivotCancellation_ = HUGE_VAL;
}

bool StaticLu::build(int n, const int* colPtr, const int* rowIdx, const int* p, const int* q) {
  clear();
  if (n <= 0) return false;
  std::vector<Op> columnOps;
  std::vector<int> opsEnd, level;
  if (!symbolic(n, colPtr, rowIdx, p, q, columnOps, opsEnd, level)) {
    clear();
    return false;
  }
  row_.shrink_to_fit();  // built entry by entry; a long run should not keep the growth slack
  ops_.reserve(columnOps.size());
  scheduleByLevel(columnOps, opsEnd, level);
  pivotTerms_.shrink_to_fit();
  scales_.shrink_to_fit();
  buildSolveStreams();
  n_ = n;
  perm_.assign(p, p + n);
  qperm_.assign(q, q + n);
  lu_.assign(row_.size(), 0.0);
  std::vector<char> loaded(row_.size(), 0);
  for (int e : load_) loaded[static_cast<std::size_t>(e)] = 1;
  for (std::size_t e = 0; e < loaded.size(); ++e)
    if (!loaded[e]) fill_.push_back(static_cast<int>(e));
  invPivot_.assign(static_cast<std::size_t>(n), 0.0);
  pivotMass_.assign(static_cast<std::size_t>(n), 0.0);
  work_.assign(static_cast<std::size_t>(n), 0.0);
  return true;
}

bool StaticLu::symbolic(int n, const int* colPtr, const int* rowIdx, const int* p, const int* q,
                        std::vector<Op>& ops, std::vector<int>& opsEnd, std::vector<int>& level) {
  const auto un = static_cast<std::size_t>(n);
  std::vector<int> pinv(un);
  for (int k = 0; k < n; ++k) pinv[static_cast<std::size_t>(p[k])] = k;
  load_.assign(static_cast<std::size_t>(colPtr[n]), -1);
  colStart_.assign(un + 1, 0);
  diag_.assign(un, 0);
  opsEnd.assign(un, 0);
  level.assign(un, 0);
  std::vector<int> mark(un, -1), pos(un, -1), upper, lower;
  // Rows below the current column, visited in increasing order: the L-solve of a column needs
  // each earlier row final before it is used, and increasing order is a topological order.
  std::priority_queue<int, std::vector<int>, std::greater<>> pending;
  for (int k = 0; k < n; ++k) {
    upper.clear();
    lower.clear();
    bool hasDiagonal = false;
    auto reach = [&](int r) {
      if (mark[static_cast<std::size_t>(r)] == k) return;
      mark[static_cast<std::size_t>(r)] = k;
      if (r < k)
        pending.push(r);
      else if (r == k)
        hasDiagonal = true;
      else
        lower.push_back(r);
    };
    const int col = q[k];
    for (int e = colPtr[col]; e < colPtr[col + 1]; ++e)
      reach(pinv[static_cast<std::size_t>(rowIdx[e])]);
    while (!pending.empty()) {
      const int j = pending.top();
      pending.pop();
      upper.push_back(j);
      for (int e = diag_[static_cast<std::size_t>(j)] + 1;
           e < colStart_[static_cast<std::size_t>(j) + 1]; ++e)
        reach(row_[static_cast<std::size_t>(e)]);
    }
    if (!hasDiagonal) return false;
    std::sort(lower.begin(), lower.end());
    const int start = static_cast<int>(row_.size());
    colStart_[static_cast<std::size_t>(k)] = start;
    for (int r : upper) row_.push_back(r);
    row_.push_back(k);
    for (int r : lower) row_.push_back(r);
    const int end = static_cast<int>(row_.size());
    for (int e = start; e < end; ++e)
      pos[static_cast<std::size_t>(row_[static_cast<std::size_t>(e)])] = e;
    diag_[static_cast<std::size_t>(k)] = start + static_cast<int>(upper.size());
    colStart_[static_cast<std::size_t>(k) + 1] = end;
    int depth = 0;
    for (int j : upper) {
      const int uj = pos[static_cast<std::size_t>(j)];
      for (int e = diag_[static_cast<std::size_t>(j)] + 1;
           e < colStart_[static_cast<std::size_t>(j) + 1]; ++e)
        ops.push_back({pos[static_cast<std::size_t>(row_[static_cast<std::size_t>(e)])], e, uj});
      depth = std::max(depth, level[static_cast<std::size_t>(j)] + 1);
    }
    opsEnd[static_cast<std::size_t>(k)] = static_cast<int>(ops.size());
    level[static_cast<std::size_t>(k)] = depth;
    for (int e = colPtr[col]; e < colPtr[col + 1]; ++e)
      load_[static_cast<std::size_t>(e)] =
          pos[static_cast<std::size_t>(pinv[static_cast<std::size_t>(rowIdx[e])])];
  }
  return true;
}

void StaticLu::scheduleByLevel(const std::vector<Op>& columnOps, const std::vector<int>& opsEnd,
                               const std::vector<int>& level) {
  // The factorisation runs level by level, a level being the columns whose dependencies (the
  // columns their U part reads) all lie in earlier levels: per level one flat pass of
  // multiply-subtracts, one of reciprocal pivots and one of L scalings. Columns of a level are
  // independent, so the processor overlaps their work, and no pass has a short inner loop whose
  // exit the branch predictor would miss once per column.
  const auto n = level.size();
  const int levels = n > 0 ? *std::max_element(level.begin(), level.end()) + 1 : 0;
  std::vector<std::vector<int>> byLevel(static_cast<std::size_t>(levels));
  for (std::size_t k = 0; k < n; ++k)
    byLevel[static_cast<std::size_t>(level[k])].push_back(static_cast<int>(k));
  for (const auto& cols : byLevel) {
    for (int k : cols)
      for (int o = k > 0 ? opsEnd[static_cast<std::size_t>(k) - 1] : 0;
           o < opsEnd[static_cast<std::size_t>(k)]; ++o) {
        const Op& op = columnOps[static_cast<std::size_t>(o)];
        ops_.push_back(op);
        if (op.dst == diag_[static_cast<std::size_t>(k)]) pivotTerms_.push_back({k, op.l, op.u});
      }
    for (int k : cols) {
      pivots_.push_back(k);
      for (int e = diag_[static_cast<std::size_t>(k)] + 1;
           e < colStart_[static_cast<std::size_t>(k) + 1]; ++e)
        scales_.push_back({e, k});
    }
    levelEnd_.push_back({static_cast<int>(ops_.size()), static_cast<int>(pivots_.size()),
                         static_cast<int>(scales_.size())});
  }
}

void StaticLu::buildSolveStreams() {
  // L by columns in increasing order, U (rows scaled to a unit diagonal after each
  // factorisation) by columns in decreasing order.
  const int n = static_cast<int>(diag_.size());
  lower_.reserve(scales_.size());  // one solve operation per L entry
  upperSolve_.reserve(row_.size() - scales_.size() - diag_.size());
  for (int k = 0; k < n; ++k)
    for (int e = diag_[static_cast<std::size_t>(k)] + 1;
         e < colStart_[static_cast<std::size_t>(k) + 1]; ++e)
      lower_.push_back({row_[static_cast<std::size_t>(e)], e, k});
  for (int k = n - 1; k >= 0; --k)
    for (int e = colStart_[static_cast<std::size_t>(k)]; e < diag_[static_cast<std::size_t>(k)];
         ++e)
      upperSolve_.push_back({row_[static_cast<std::size_t>(e)], e, k});
}

bool StaticLu::factor(const double* values) {
  double* lu = lu_.data();
  for (int e : fill_) lu[e] = 0.0;
  const std::size_t nnz = load_.size();
  for (std::size_t e = 0; e < nnz; ++e) lu[load_[e]] = values[e];
  return eliminate();
}

bool StaticLu::factor(const double* g, const double* c, double a0,
                      const std::vector<int>& shiftSlots, double shift) {
  double* lu = lu_.data();
  for (int e : fill_) lu[e] = 0.0;
  const std::size_t nnz = load_.size();
  for (std::size_t e = 0; e < nnz; ++e) lu[load_[e]] = g[e] + a0 * c[e];
  if (shift != 0.0)
    for (int slot : shiftSlots) lu[load_[static_cast<std::size_t>(slot)]] += shift;
  return eliminate();
}

bool StaticLu::eliminate() {
  double* lu = lu_.data();
  double* inv = invPivot_.data();
  const Op* op = ops_.data();
  const int* pivot = pivots_.data();
  const Scale* scale = scales_.data();
  const int* diag = diag_.data();
  double* mass = pivotMass_.data();
  for (int k = 0; k < n_; ++k) mass[k] = std::abs(lu[diag[k]]);
  for (const LevelEnd& end : levelEnd_) {
    for (const Op* last = ops_.data() + end.ops; op != last; ++op)
      lu[op->dst] -= lu[op->l] * lu[op->u];
    for (const int* last = pivots_.data() + end.pivots; pivot != last; ++pivot)
      inv[*pivot] = 1.0 / lu[diag[*pivot]];
    for (const Scale* last = scales_.data() + end.scales; scale != last; ++scale)
      lu[scale->entry] *= inv[scale->column];
  }
  // What went into each pivot (before U is scaled: lu[u] is still U(j, k) itself).
  for (const PivotTerm& t : pivotTerms_) mass[t.column] += std::abs(lu[t.l] * lu[t.u]);
  // U's rows scaled to a unit diagonal: the solve then has no per-column division step.
  for (const SolveOp& u : upperSolve_) lu[u.entry] *= inv[u.dst];
  // Pivot magnitudes in a separate pass, off the elimination's dependency chain.
  double smallest = HUGE_VAL, largest = 0.0, cancellation = 0.0;
  bool regular = true;
  for (int k = 0; k < n_; ++k) {
    const double mag = std::abs(inv[k]);  // 1 / |pivot|
    // A zero pivot gives an infinite reciprocal, an overflow a zero one, a NaN value a NaN.
    regular = regular && mag > 0.0 && mag < HUGE_VAL;
    smallest = std::min(smallest, mag);
    largest = std::max(largest, mag);
    cancellation = std::max(cancellation, mass[k] * mag);
  }
  if (!regular) {
    pivotRatio_ = 0.0;
    pivotCancellation_ = HUGE_VAL;
    return false;
  }
  pivotRatio_ = smallest / largest;  // min |pivot| / max |pivot|
  pivotCancellation_ = cancellation;
  return true;
}

void StaticLu::solve(double* b) const {
  double* y = work_.data();
  const double* lu = lu_.data();
  const double* inv = invPivot_.data();
  const int* perm = perm_.data();
  for (int k = 0; k < n_; ++k) y[k] = b[perm[k]];
  for (const SolveOp& o : lower_) y[o.dst] -= lu[o.entry] * y[o.src];       // L, unit diagonal
  for (int k = 0; k < n_; ++k) y[k] *= inv[k];                              // D
  for (const SolveOp& o : upperSolve_) y[o.dst] -= lu[o.entry] * y[o.src];  // D^-1 U
  const int* qperm = qperm_.data();
  for (int k = 0; k < n_; ++k) b[qperm[k]] = y[k];
}

void StaticLu::solveRows(double* b, int cols) const {
  const auto w = static_cast<std::size_t>(cols);
  if (workRows_.size() < static_cast<std::size_t>(n_) * w)
    workRows_.resize(static_cast<std::size_t>(n_) * w);
  double* y = workRows_.data();
  const double* lu = lu_.data();
  const double* inv = invPivot_.data();
  auto row = [&](double* base, int k) { return base + static_cast<std::size_t>(k) * w; };
  for (int k = 0; k < n_; ++k)
    std::copy_n(row(b, perm_[static_cast<std::size_t>(k)]), w, row(y, k));
  for (const SolveOp& o : lower_) {
    const double l = lu[o.entry];
    double* d = row(y, o.dst);
    const double* s = row(y, o.src);
    for (std::size_t j = 0; j < w; ++j) d[j] -= l * s[j];
  }
  for (int k = 0; k < n_; ++k) {
    double* d = row(y, k);
    for (std::size_t j = 0; j < w; ++j) d[j] *= inv[k];
  }
  for (const SolveOp& o : upperSolve_) {
    const double u = lu[o.entry];
    double* d = row(y, o.dst);
    const double* s = row(y, o.src);
    for (std::size_t j = 0; j < w; ++j) d[j] -= u * s[j];
  }
  for (int k = 0; k < n_; ++k)
    std::copy_n(row(y, k), w, row(b, qperm_[static_cast<std::size_t>(k)]));
}

}  // namespace disc::detail
