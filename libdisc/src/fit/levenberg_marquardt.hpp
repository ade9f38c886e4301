// Levenberg-Marquardt for small bounded least-squares problems (private).
//
// Minimises 0.5 |r(z)|^2 over box bounds lo <= z <= hi with the classical damped Gauss-Newton
// step (K. Levenberg 1944; D. W. Marquardt 1963), Marquardt's diagonal scaling, and steps
// projected onto the box. The Jacobian is taken by finite differences; the covariance follows
// from it at the optimum.
#pragma once

#include <Eigen/Dense>
#include <functional>

namespace disc::detail {

struct LeastSquaresProblem {
  /// Fills r (size `residuals`) at z; may throw to reject a trial point (counted as a failed
  /// step, never as a result).
  std::function<void(const Eigen::VectorXd& z, Eigen::VectorXd& r)> evaluate;
  int residuals = 0;
  Eigen::VectorXd lower, upper;  ///< bounds on z
};

struct LeastSquaresOptions {
  int maxIterations = 100;
  double stepTolerance = 1e-8;   ///< stop when the step is below this (relative to |z| + 1)
  double costTolerance = 1e-10;  ///< stop when the cost falls by less than this fraction
  double difference = 1e-6;      ///< finite-difference step (in units of z)
  bool central = true;           ///< central differences (else forward)
};

struct LeastSquaresResult {
  Eigen::VectorXd z;
  Eigen::VectorXd r;
  Eigen::MatrixXd jacobian;  ///< at z
  double cost = 0.0;         ///< 0.5 |r|^2
  int iterations = 0;
  int evaluations = 0;
  bool converged = false;
};

LeastSquaresResult levenbergMarquardt(const LeastSquaresProblem& problem, Eigen::VectorXd z0,
                                      const LeastSquaresOptions& options);

/// Covariance of z: s^2 (J^T J)^+ with s^2 = |r|^2 / (m - n); the pseudo-inverse drops
/// directions the data do not determine (those get an infinite variance).
Eigen::MatrixXd leastSquaresCovariance(const LeastSquaresResult& result);

}  // namespace disc::detail
