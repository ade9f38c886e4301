// The slow-state ODE integrator behind the envelope, over Boost.Odeint (private).
//
// This header stays C++17-clean: its implementation includes Boost.Odeint's Rosenbrock
// stepper, whose uBLAS storage does not compile under C++20 with Boost 1.74 (it calls
// std::allocator::construct, removed in C++20), so slow_ode.cpp alone is built as C++17.
#pragma once

#include <functional>
#include <vector>

namespace disc::detail {

/// y' = f(t, y) with its Jacobian df/dy (row-major, n x n).
struct SlowOdeSystem {
  std::function<void(double t, const std::vector<double>& y, std::vector<double>& dydt,
                     std::vector<double>* jacobian)>
      evaluate;
};

struct SlowOdeSettings {
  double reltol = 1e-3;
  double abstol = 1.0;  ///< on the scaled state (the envelope scales each state by its tolerance)
  double firstStep = 1.0;  ///< s (the floor when firstFromJacobian)
  /// The first step from the Jacobian at the start (see integrateSlowOde), not below firstStep.
  bool firstFromJacobian = false;
  double maxStep = 0.0;  ///< s; 0 = no limit
  long maxSteps = 100000;
};

struct SlowOdeStats {
  long accepted = 0, rejected = 0;
};

/// Integrates from t0 to t1 with Odeint's Rosenbrock method of order 4 and error control.
/// `observer(t, y)` runs after every accepted step; it returns false to stop early. Returns
/// the time reached.
double integrateSlowOde(const SlowOdeSystem& system, std::vector<double>& y, double t0, double t1,
                        const SlowOdeSettings& settings, SlowOdeStats& stats,
                        const std::function<bool(double, const std::vector<double>&)>& observer);

}  // namespace disc::detail
