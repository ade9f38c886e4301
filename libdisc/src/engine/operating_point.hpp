// DC operating point with gmin and source stepping (private).
#pragma once

#include <vector>

#include "disc/analysis.hpp"
#include "linear_solver.hpp"
#include "system.hpp"

namespace disc::detail {

/// Solves F(x) = i(x, 0) = 0 in place (x holds the initial guess, size n+1). Throws
/// ConvergenceError naming the worst equation when every strategy fails.
void solveOperatingPoint(System& sys, LinearSolver& ls, std::vector<double>& x,
                         const OperatingPointOptions& options, RunStats& stats);

}  // namespace disc::detail
