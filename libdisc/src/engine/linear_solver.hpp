// Sparse LU: SuiteSparse KLU (through Eigen's KLUSupport) analyses the pattern once per topology
// and factors with a pivot search when needed; between those, a compiled refactorisation
// (StaticLu) reuses KLU's pivot order (private).
#pragma once

#include <cmath>
#include <vector>

#include <Eigen/KLUSupport>
#include <Eigen/SparseCore>

#include "static_lu.hpp"

namespace disc::detail {

class System;

/// Eigen's KLU wrapper with access to KLU's refactorisation, which keeps the pivot sequence of
/// the last full factorisation: several times cheaper, as circuit matrices keep their pattern.
class Klu : public Eigen::KLU<Eigen::SparseMatrix<double>> {
 public:
  /// Refactors the matrix of the last factorize() with new values; false if KLU refused.
  bool refactorize(const Eigen::SparseMatrix<double>& matrix);
  /// KLU's cheap reciprocal condition estimate of the current factors.
  double rcond();
  bool hasNumeric() const { return m_numeric != nullptr; }
  /// The row and column permutations of the last factorisation (pivot order included).
  bool permutations(int* p, int* q);
  /// Frees the numeric factors (the symbolic analysis stays); factorize() makes new ones.
  void releaseNumeric();
  /// Solves with the current factors in place (no temporary vector, unlike Eigen's solve()).
  bool solveInPlace(double* rhs, int n);
};

class LinearSolver {
 public:
  /// Factors the system's current Jacobian values; throws SingularCircuitError naming the
  /// unknown where the pivot vanished.
  void factor(const System& sys);
  /// Factors G + a0 C + gmin (on node rows) from the system's last Jacobian evaluation. In the
  /// kept pivot order this goes straight into the factors; otherwise it assembles the matrix
  /// first.
  void factor(System& sys, double a0, double gmin);
  /// Solves J dx = rhs in place (size n).
  void solve(double* rhs, int n);
  /// Solves J X = B in place for `cols` right-hand sides, B row-major (n x cols).
  void solveRows(double* b, int n, int cols);
  /// How far elimination cancelled the present factors' pivots (StaticLu::pivotCancellation);
  /// infinite for KLU's own factors, which do not report it.
  double pivotCancellation() const { return useProgram_ ? program_.pivotCancellation() : HUGE_VAL; }
  /// Factorisations with a pivot search so far (the others reuse the pivot order).
  long fullFactorizations() const { return full_; }
  /// The integration coefficient a0 of the Jacobian G + a0 C last factored (0 for DC; negative
  /// while the solve that factored it has not converged), so a later Newton solve can judge
  /// whether those factors are still close enough to use.
  double factoredA0() const { return factoredA0_; }
  void setFactoredA0(double a0) { factoredA0_ = a0; }
  bool hasFactors() const { return analyzed_; }
  /// The next factorisation searches pivots afresh (after a failed Newton solve: the kept
  /// pivot order may have lost accuracy since a junction switched).
  void repivot() { repivot_ = true; }

 private:
  Klu klu_;
  StaticLu program_;         // refactorisation in KLU's last pivot order
  bool useProgram_ = false;  // the current factors are the program's (else KLU's)
  std::vector<int> p_, q_, pNew_, qNew_;
  std::vector<int> gminSlots_;   // diagonal slots of node rows
  std::vector<double> columns_;  // solveRows through KLU: B by columns
  bool analyzed_ = false;
  bool repivot_ = false;
  double rcondFull_ = 0.0;   // condition estimate at the last full factorisation
  double factoredA0_ = 0.0;  // a0 of the factors; negative: not to be reused
  long full_ = 0;
  void fullFactor(const System& sys);
  void adoptPivotOrder(const System& sys);
};

}  // namespace disc::detail
