// Typed exceptions: every failure a user can meet is one of these, with an actionable message.
#pragma once

#include <stdexcept>
#include <string>

namespace disc {

/// Base of every libdisc exception.
class Error : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

/// A parameter, option or circuit description is wrong (bad value, unknown name, bad topology).
class InputError : public Error {
 public:
  using Error::Error;
};

/// The circuit matrix is singular: a floating node or a loop of voltage-defined branches.
class SingularCircuitError : public Error {
 public:
  SingularCircuitError(const std::string& message, std::string unknown)
      : Error(message), unknown_(std::move(unknown)) {}
  /// Name of the unknown (node, branch) at which the factorisation failed.
  const std::string& unknown() const { return unknown_; }

 private:
  std::string unknown_;
};

/// Newton-Raphson did not converge (operating point after gmin and source stepping).
class ConvergenceError : public Error {
 public:
  ConvergenceError(const std::string& message, std::string worstEquation, double residual)
      : Error(message), worst_(std::move(worstEquation)), residual_(residual) {}
  const std::string& worstEquation() const { return worst_; }
  double residual() const { return residual_; }

 private:
  std::string worst_;
  double residual_;
};

/// The transient step fell below the smallest allowed step.
class TimeStepError : public Error {
 public:
  TimeStepError(const std::string& message, double time, std::string worstUnknown)
      : Error(message), time_(time), worst_(std::move(worstUnknown)) {}
  double time() const { return time_; }
  const std::string& worstUnknown() const { return worst_; }

 private:
  double time_;
  std::string worst_;
};

/// A run was stopped by its progress callback (for example on a user's interrupt).
class Cancelled : public Error {
 public:
  using Error::Error;
};

}  // namespace disc
