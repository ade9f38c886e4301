// Periodic steady state: the settled mains cycle found directly, by Newton shooting on the
// electrical state over one period, with the slow states (temperatures, forming) held fixed.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/circuit.hpp"
#include "disc/result.hpp"

namespace disc {

/// A settled period kept to start the shooting of another circuit of the same structure (the
/// same devices, nodes and unknowns) whose values differ a little: its start state, step grid
/// and monodromy matrix. Opaque; shared read-only between threads.
struct PeriodicOrbit;

/// Options of the periodic steady state.
struct PeriodicOptions {
  /// s; 0 = the common period of the circuit's sine sources (all must be whole multiples of the
  /// lowest frequency).
  double period = 0.0;
  /// Tighter than a transient's default: the figures of one period carry no averaging over
  /// many cycles, and the shooting update is judged against these tolerances.
  Tolerances tol = {1e-5, 1e-7, 1e-7, 1e-4, 1e-6};
  double maxStep = 0.0;                 ///< s; 0 = a hundredth of the period
  int warmupPeriods = 3;                ///< transient periods before shooting (warm start)
  int maxIterations = 40;               ///< shooting iterations
  Start start = Start::OperatingPoint;  ///< how the warm-up transient starts
  /// s, the slow clock held over the period (a variac schedule's time, a valve's warm-up).
  double slowTime = 0.0;
  std::vector<std::string> record;  ///< signals; empty = every node voltage and device current
  /// Starts from this orbit instead of a warm-up transient (warmupPeriods and start are then
  /// unused): its settled start state for the fast unknowns, its step grid, and its monodromy
  /// for chord steps, which converge in a few periods when the circuit differs little. Used
  /// when the circuit has the orbit's structure and period; otherwise the warm-up runs
  /// (PeriodicStats::fromOrbit says which).
  std::shared_ptr<const PeriodicOrbit> from;
  void validate() const;
};

/// How a periodic steady state was found.
struct PeriodicStats {
  int iterations = 0;          ///< shooting (Newton) iterations
  int periodIntegrations = 0;  ///< periods integrated, warm-up excluded
  int warmupPeriods = 0;
  double residual = 0.0;  ///< last update, in units of the tolerance (at most 1 when converged)
  /// Largest modulus of the monodromy matrix's eigenvalues (Floquet multipliers): below 1 the
  /// periodic state is stable; near 1 a mode settles over many periods (a large reservoir).
  double largestMultiplier = 0.0;
  int stepsPerPeriod = 0;
  bool fromOrbit = false;  ///< started from PeriodicOptions::from (no warm-up transient)
};

/// The settled period.
struct PeriodicResult {
  double period = 0.0;     ///< s
  double startTime = 0.0;  ///< s, where the period starts on the sources' clock
  /// One period of the recorded signals, times from 0 to period (first and last rows agree to
  /// the tolerance).
  Result waveforms;
  PeriodicStats stats;
  /// The settled period, to start a similar circuit from (PeriodicOptions::from).
  std::shared_ptr<const PeriodicOrbit> orbit;
};

/// Finds the periodic steady state of a circuit driven by periodic sources. Throws
/// ConvergenceError naming the cause when shooting does not converge (no periodic response,
/// a mode that never settles, an unstable slow state), InputError when the sources are not
/// periodic, TimeStepError when a period cannot be integrated.
PeriodicResult periodicSteadyState(const Circuit& circuit, const PeriodicOptions& options = {});

/// The common period of the circuit's sine sources, s; throws InputError when there is none
/// or their frequencies are not whole multiples of the lowest.
double circuitPeriod(const Circuit& circuit);

}  // namespace disc
