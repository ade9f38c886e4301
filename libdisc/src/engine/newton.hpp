// Damped Newton-Raphson on F(x) = i(x) + a0 q(x) + h + gmin x_nodes (private).
#pragma once

#include <vector>

#include "disc/result.hpp"
#include "linear_solver.hpp"
#include "system.hpp"

namespace disc::detail {

/// Scratch vectors of one Newton solve, kept by a caller that solves many times (a transient's
/// steps) so that no step allocates.
struct NewtonWorkspace {
  std::vector<double> f, dx, limits;
  std::vector<double> halfCurvature;  // per unknown, for the second-order remainder test
  std::vector<double> rhs;            // right-hand side of an exact step, for its refinement
};

struct NewtonSettings {
  int maxIterations = 50;
  double reltol = 1e-3;
  const std::vector<double>* abstol = nullptr;  ///< per unknown, size n+1
  double gmin = 0.0;
  double vabstol = 1e-6;  ///< V, for the devices' own junction convergence checks
  /// Keep the last factorisation for an iteration that starts close to the solution (a chord
  /// step): the transient's steps, not the operating point's searches.
  bool reuseJacobian = false;
  /// With reuseJacobian: the first iteration may also use the factors left by the previous
  /// solve (the previous time step) when their a0 is within kA0Band of this one, as BDF codes
  /// do; they are replaced as soon as an iteration fails to contract.
  bool reuseAcrossSolves = false;
  /// Give up as soon as the updates grow geometrically (three rises in a row, by at least a
  /// fifth each, ending above tolerance) instead of running to maxIterations: for the
  /// transient, where a failure only costs a shorter step.
  bool stopOnDivergence = false;
  /// Also accept an iterate that the contraction of the last two updates shows to be within
  /// tolerance, without spending an iteration to confirm it.
  bool predictConvergence = false;
  /// Also accept an exact Newton step (fresh Jacobian, no junction limited) whose second-order
  /// remainder is within tolerance, without an iteration to confirm it.
  bool acceptQuadratic = false;
  /// At the accepted iterate evaluate only the charges (the transient needs nothing else);
  /// sys.i then holds the currents of the previous iterate.
  bool finalChargesOnly = false;
  NewtonWorkspace* workspace = nullptr;  ///< optional; a local one otherwise
};

struct NewtonOutcome {
  bool converged = false;
  int iterations = 0;
  /// The first update was small enough for the second-order test (NewtonSettings::
  /// acceptQuadratic): with fresh factors the solve would have ended there.
  bool firstUpdateQuadratic = false;
  int worstRow = -1;  ///< row with the largest residual at the last iterate
  double worstResidual = 0.0;
};

/// Solves in place. ctx.x must point at x. On success the system's q (and i, unless
/// finalChargesOnly) hold their values at the converged x. `a0` and `history` give the
/// integration formula's d/dt q = a0 q + history (a0 = 0 and history = nullptr for DC).
NewtonOutcome solveNewton(System& sys, LinearSolver& ls, std::vector<double>& x, EvalContext ctx,
                          double a0, const double* history, const NewtonSettings& settings,
                          RunStats& stats);

}  // namespace disc::detail
