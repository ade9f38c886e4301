// Checks for device authors: analytic Jacobians against finite differences.
#pragma once

#include <string>
#include <vector>

#include "disc/circuit.hpp"

namespace disc {

struct JacobianCheck {
  double maxErrorG = 0.0;  ///< largest relative error over the entries of G = di/dx
  double maxErrorC = 0.0;  ///< largest relative error over the entries of C = dq/dx
  std::string worst;       ///< "G[row, col]" or "C[row, col]" with unknown names
  /// Largest relative difference between the charges of a full evaluation and of the
  /// charges-only evaluation the transient uses at accepted iterates (rounding: about 1e-16).
  double maxErrorChargesOnly = 0.0;
};

/// Unknown names of a circuit in solution-vector order (nodes first, then internals).
std::vector<std::string> unknownNames(const Circuit& circuit);

/// Compares the analytic G and C at x (one value per unknown) and time t with central finite
/// differences. Relative error per entry: |a - f| / (|a| + |f| + floor), floor = 1e-6 times the
/// largest entry magnitude of the same row.
JacobianCheck checkJacobian(const Circuit& circuit, const std::vector<double>& x, double t = 0.0);

}  // namespace disc
