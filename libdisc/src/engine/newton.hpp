// Damped Newton-Raphson on F(x) = i(x) + a0 q(x) + h + gmin x_nodes (private).
#pragma once

#include <vector>

#include "disc/result.hpp"
#include "linear_solver.hpp"
#include "system.hpp"

namespace disc::detail {

struct NewtonSettings {
  int maxIterations = 50;
  double reltol = 1e-3;
  const std::vector<double>* abstol = nullptr;  ///< per unknown, size n+1
  double gmin = 0.0;
  double vabstol = 1e-6;  ///< V, for the devices' own junction convergence checks
  /// Keep the last factorisation for an iteration that starts close to the solution (a chord
  /// step): the transient's steps, not the operating point's searches.
  bool reuseJacobian = false;
};

struct NewtonOutcome {
  bool converged = false;
  int iterations = 0;
  int worstRow = -1;  ///< row with the largest residual at the last iterate
  double worstResidual = 0.0;
};

/// Solves in place. ctx.x must point at x. On success the system's i and q hold their values at
/// the converged x. `a0` and `history` give the integration formula's d/dt q = a0 q + history
/// (a0 = 0 and history = nullptr for DC).
NewtonOutcome solveNewton(System& sys, LinearSolver& ls, std::vector<double>& x, EvalContext ctx,
                          double a0, const double* history, const NewtonSettings& settings,
                          RunStats& stats);

}  // namespace disc::detail
