// Sparse LU with a fixed pivot sequence, compiled into a flat list of operations (private).
#pragma once

#include <cmath>
#include <vector>

namespace disc::detail {

/// LU factors of B = A(P, Q) for a fixed pattern and fixed row and column permutations (those
/// of a pivoting factorisation, KLU's here), without any pivot search: the elimination is
/// worked out once and stored as a list of multiply-subtract operations on one array of factor
/// values, so each refactorisation is a straight pass over that list. Circuit matrices keep
/// their pattern for a whole run and their pivot order for most of it; what a general sparse
/// refactorisation spends on gathering, scattering and traversing columns is paid once here
/// (the approach of "compiled" sparse refactorisation for repeated solves with one pattern).
class StaticLu {
 public:
  /// Builds the program for the CSC pattern (n, colPtr, rowIdx) with row permutation p (p[k] is
  /// the row of A that is the k-th pivot row) and column permutation q. Returns false, leaving
  /// the object empty, if a pivot position is structurally empty in that order.
  bool build(int n, const int* colPtr, const int* rowIdx, const int* p, const int* q);
  bool ready() const { return n_ > 0; }
  void clear();

  /// Factors the values (in the CSC order of the pattern given to build). Returns false if a
  /// pivot is zero or not finite. pivotRatio() is then the smallest over the largest pivot
  /// magnitude (KLU's cheap reciprocal condition estimate, comparable with its rcond).
  bool factor(const double* values);
  /// The same for the values g + a0 c (in the pattern's CSC order), plus `shift` on the
  /// entries at `shiftSlots` (CSC positions): the engine's G + a0 C + gmin without assembling.
  bool factor(const double* g, const double* c, double a0, const std::vector<int>& shiftSlots,
              double shift);
  double pivotRatio() const { return pivotRatio_; }
  /// The largest factor by which elimination cancelled a pivot: the sum of the magnitudes that
  /// made it (the entry as loaded and every product subtracted from it) over its magnitude as
  /// factored. A pivot that cancelled by a factor c carries only about 16 - log10(c) correct
  /// digits; the weak mode of a long chain of reverse-biased junctions at a long time step
  /// shows here as a factor of 1e8 and more. Small values vouch for the solve's accuracy
  /// without a check by iterative refinement.
  double pivotCancellation() const { return pivotCancellation_; }

  /// Solves A x = b in place with the last factors (L unit lower, U scaled to unit diagonal, D
  /// the pivots).
  void solve(double* b) const;
  /// Solves A X = B in place for `cols` right-hand sides, B row-major (n x cols): one pass
  /// over the solve program, each operation on a whole row of B.
  void solveRows(double* b, int cols) const;

  /// Entries of L and U together (diagonal once) and multiply-subtract operations per factor.
  std::size_t factorEntries() const { return lu_.size(); }
  std::size_t operations() const { return ops_.size(); }

 private:
  struct Op;
  /// Fill pattern, factor layout, load map and each column's operations and depth.
  bool symbolic(int n, const int* colPtr, const int* rowIdx, const int* p, const int* q,
                std::vector<Op>& ops, std::vector<int>& opsEnd, std::vector<int>& level);
  void scheduleByLevel(const std::vector<Op>& columnOps, const std::vector<int>& opsEnd,
                       const std::vector<int>& level);
  void buildSolveStreams();
  bool eliminate();
  struct Op {
    int dst, l, u;  // lu[dst] -= lu[l] * lu[u]
  };
  struct Scale {
    int entry, column;  // lu[entry] *= invPivot[column]
  };
  struct LevelEnd {
    int ops, pivots, scales;  // ends of one level's passes
  };
  struct SolveOp {
    int dst, entry, src;  // y[dst] -= lu[entry] * y[src]
  };
  struct PivotTerm {
    int column, l, u;  // |lu[l] * lu[u]| (U unscaled) entered pivot `column`
  };
  int n_ = 0;
  std::vector<int> perm_, qperm_;  // p and q of build()
  std::vector<int> colStart_;      // per column: U entries, then the diagonal, then L entries
  std::vector<int> diag_;          // position of each column's diagonal
  std::vector<int> row_;           // row (in B) of each factor entry
  std::vector<Op> ops_;
  std::vector<int> load_;  // position in lu_ of each value of A, in CSC order
  std::vector<int> fill_;  // positions in lu_ that no value of A lands on
  std::vector<LevelEnd> levelEnd_;
  std::vector<int> pivots_;          // columns, level by level
  std::vector<Scale> scales_;        // L entries, level by level
  std::vector<SolveOp> lower_;       // L by columns in increasing order
  std::vector<SolveOp> upperSolve_;  // U off the diagonal by columns in decreasing order
  std::vector<double> lu_;
  std::vector<double> invPivot_;
  std::vector<PivotTerm> pivotTerms_;  // the operations whose destination is a pivot
  std::vector<double> pivotMass_;      // per pivot: |entry as loaded| + sum of |products|
  mutable std::vector<double> work_, workRows_;
  double pivotRatio_ = 0.0;
  double pivotCancellation_ = HUGE_VAL;
};

}  // namespace disc::detail
