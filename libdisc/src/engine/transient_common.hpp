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

/// Trapezoidal or BDF2 with truncation-error step control (the engine's own integrators).
/// Both stop after the step in which `monitor` finds a body destroyed (that step is recorded).
void integrateStepping(System& sys, LinearSolver& ls, const TransientOptions& o,
                       std::vector<double>& x, Recorder& rec, RunStats& stats,
                       FailureMonitor& monitor);

/// SUNDIALS IDA (variable-order BDF) through the same device interface.
void integrateIda(System& sys, const TransientOptions& o, std::vector<double>& x, Recorder& rec,
                  RunStats& stats, FailureMonitor& monitor);

}  // namespace disc::detail
