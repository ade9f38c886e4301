// Sparse LU over SuiteSparse KLU (through Eigen's KLUSupport): symbolic analysis once per
// topology, numeric factorisation per Newton iteration (private).
#pragma once

#include <Eigen/KLUSupport>
#include <Eigen/SparseCore>

namespace disc::detail {

class System;

class LinearSolver {
 public:
  /// Factors the system's current Jacobian values; throws SingularCircuitError naming the
  /// unknown where the pivot vanished.
  void factor(const System& sys);
  /// Solves J dx = rhs in place (size n).
  void solve(double* rhs, int n);

 private:
  Eigen::KLU<Eigen::SparseMatrix<double>> klu_;
  bool analyzed_ = false;
};

}  // namespace disc::detail
