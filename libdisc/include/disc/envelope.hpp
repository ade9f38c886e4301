// The slow-state envelope ("warm-up"): minutes to hours of plate temperatures, forming and
// other slow states, driven by period averages of periodic steady states.
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "disc/circuit.hpp"
#include "disc/periodic.hpp"
#include "disc/result.hpp"

namespace disc {

/// The periodic options the envelope starts from: reltol 1e-4, absolute tolerances to match.
inline PeriodicOptions envelopePeriodicDefaults() {
  PeriodicOptions p;
  p.tol = {1e-4, 1e-6, 1e-6, 1e-3, 1e-5};
  return p;
}

/// Options of the slow-state envelope.
struct EnvelopeOptions {
  double duration = 0.0;  ///< s, simulated time (required)
  /// Every periodic steady state (tolerances; warm-up of the first). Its reltol 1e-4 carries
  /// the period averages well inside the slow states' own 1e-3.
  PeriodicOptions periodic = envelopePeriodicDefaults();
  double reltol = 1e-3;          ///< slow states, relative
  double temperatureTol = 0.02;  ///< K, absolute
  double stateTol = 1e-4;        ///< forming and other dimensionless slow states, absolute
  double maxStep = 0.0;          ///< s; 0 = no limit (the slow error control alone)
  /// Signals whose period mean, minimum and maximum are recorded in every row of the series:
  /// at t = 0, at every accepted slow step and at every tenth of the duration that a step
  /// passed over (the slow states interpolated there, the period solved at them); empty =
  /// every slow unknown ("x:<unknown>").
  std::vector<std::string> record;
  /// Called at every row of the series, in time order, with the settled period there (one
  /// period of `periodic.record`, times from 0). Return false to end the run at that time (not
  /// an error: EnvelopeResult::stoppedBy says why).
  std::function<bool(double time, const Result& period)> onPeriod;
  /// Called with (time, duration) after every slow step; return false to cancel (Cancelled).
  std::function<bool(double, double)> progress;
  void validate() const;
};

struct EnvelopeStats {
  long slowSteps = 0, rejectedSlowSteps = 0;
  long interpolatedRows = 0;  ///< rows at tenths of the duration inside a slow step
  long periodicSolves = 0;    ///< periodic steady states solved
  long shootingIterations = 0;
  long periodIntegrations = 0;
  double wallSeconds = 0.0;
};

struct EnvelopeResult {
  /// One row per slow step, t = 0 first: per recorded signal its period mean under the signal's
  /// own name, and "min(<signal>)" and "max(<signal>)".
  Result series;
  PeriodicResult last;    ///< the settled period at the end time
  double endTime = 0.0;   ///< s, where the run ended (the duration unless stopped)
  std::string stoppedBy;  ///< empty, or why the run ended early
  /// Runaways detected and bodies destroyed, in order of time. A destruction ends the run at
  /// its located crossing (the series' last row), so no temperature past destruction appears.
  std::vector<FailureEvent> failures;
  EnvelopeStats stats;
  /// True when a body was destroyed.
  bool failed() const;
};

/// Integrates the slow states over options.duration. Each slow state k follows
/// dq_k/dt = -<i_k>, the period average of its own equation's current at the periodic steady
/// state of the present slow values, with Boost.Odeint's rosenbrock4. Throws ConvergenceError
/// when no periodic steady state exists at some slow state (the message names the time).
EnvelopeResult warmUp(const Circuit& circuit, const EnvelopeOptions& options);

}  // namespace disc
