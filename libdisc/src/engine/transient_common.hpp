// Pieces shared by the transient back ends (private).
#pragma once

#include <vector>

#include "disc/analysis.hpp"
#include "failure_monitor.hpp"
#include "linear_solver.hpp"
#include "recorder.hpp"
#include "system.hpp"

namespace disc::detail {

/// Largest step: the user's, else a fiftieth of the run and a twentieth of a sine period.
double resolveMaxStep(const System& sys, const TransientOptions& o);

/// Reports progress; throws Cancelled if the callback asks to stop.
void reportProgress(const TransientOptions& o, double t);

/// The step budget while a run goes (TransientOptions::maxSteps): once the accepted steps
/// reach it before the stop time the run ends with a TimeStepError that says where the run
/// got to, the step it was taking and the unknown that oscillates fastest in the last steps
/// (a lightly damped ringing is the usual cause), so memory stays bounded.
class StepBudget {
 public:
  StepBudget(const System& sys, const TransientOptions& o);
  /// After each accepted step of size h ending at t, with the unknowns x and the recorder
  /// (whose memory the message gives).
  void accepted(double t, double h, const double* x, const Recorder& rec);

 private:
  const System& sys_;
  double stop_;
  long long budget_, steps_ = 0;
  static constexpr int kWindow = 4096;  // steps per window of sign-change counts
  int inWindow_ = 0;
  double windowStart_ = 0.0, lastWindow_ = 0.0;  // start time; length of the last full window
  std::vector<int> changes_, lastChanges_;       // turning points per unknown
  std::vector<double> extreme_, swing_;          // running extreme since the last; hysteresis
  std::vector<signed char> rising_;
};

/// Trapezoidal or BDF2 with truncation-error step control (the engine's own integrators).
/// Both stop after the step in which `monitor` finds a body destroyed (that step is recorded).
void integrateStepping(System& sys, LinearSolver& ls, const TransientOptions& o,
                       std::vector<double>& x, Recorder& rec, RunStats& stats,
                       FailureMonitor& monitor);

/// SUNDIALS IDA (variable-order BDF) through the same device interface.
void integrateIda(System& sys, const TransientOptions& o, std::vector<double>& x, Recorder& rec,
                  RunStats& stats, FailureMonitor& monitor);

}  // namespace disc::detail
