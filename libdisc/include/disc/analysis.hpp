// Analyses: DC operating point and transient, with their options.
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "disc/circuit.hpp"
#include "disc/result.hpp"

namespace disc {

/// Convergence and truncation-error tolerances.
struct Tolerances {
  double reltol = 1e-3;       ///< relative, on unknowns and on charges
  double voltage = 1e-6;      ///< absolute, V
  double current = 1e-6;      ///< absolute, A
  double temperature = 1e-4;  ///< absolute, K
  double state = 1e-6;        ///< absolute, dimensionless slow states
  void validate() const;
};

/// Options of the DC operating point (Newton-Raphson, then gmin stepping, then source stepping).
struct OperatingPointOptions {
  Tolerances tol;
  int maxIterations = 150;          ///< per Newton solve
  double gmin = 1e-12;              ///< S, from every node to gnd
  std::vector<std::string> record;  ///< signals; empty = every node voltage and device current
  /// When plain Newton fails: conductances to gnd relaxed by decades.
  bool gminStepping = true;
  /// When that fails too: every source ramped up from zero.
  bool sourceStepping = true;
  void validate() const;
};

/// Time integration scheme.
enum class Method {
  Trapezoidal,  ///< trapezoidal rule, second order, A-stable
  Bdf2,         ///< variable-step BDF2 (Gear order 2), L-stable
  Ida,          ///< SUNDIALS IDA: variable-order BDF with KLU
  TrBdf2        ///< TR-BDF2 (trapezoidal stage, then BDF2 stage), second order, L-stable
};

/// How the transient starts.
enum class Start {
  OperatingPoint,  ///< from the DC operating point at t = 0
  Cold             ///< from zero state: discharged capacitors, no inductor current (switch-on)
};

struct TransientOptions {
  double stop = 0.0;         ///< s, end time (required)
  double maxStep = 0.0;      ///< s; 0 = automatic (a fraction of stop and of sine periods)
  double initialStep = 0.0;  ///< s; 0 = automatic
  double recordFrom = 0.0;   ///< s; points before this time are not recorded
  /// s; decimation: a row is kept when it lies at least this long after the last row kept
  /// (to one part in 10^9); the first recorded row and the run's last are always kept. 0
  /// keeps every accepted step. Applies to the sink and, without keepLast, to the Result.
  double recordSpacing = 0.0;
  /// Receives every kept row as the run goes (a CSV file: disc::CsvFile), so that rows need
  /// not stay in memory; not owned, and must outlive the run.
  RowSink* sink = nullptr;
  /// s; 0: the Result keeps the rows the sink gets (all of them without recordSpacing). Above
  /// 0 the Result keeps, bounded whatever the stop time, every recorded step (not decimated)
  /// over the last keepLast seconds of the run (the supply report's settled window) and at
  /// most keepSpread rows spread over the time before (for plots); Result::extent still
  /// covers every recorded row.
  double keepLast = 0.0;
  std::size_t keepSpread = 2000;
  Method method = Method::Trapezoidal;
  Start start = Start::OperatingPoint;
  Tolerances tol;
  int maxNewton = 12;  ///< Newton iterations per step before the step is cut
  /// Accepted steps the run may take (0: RunLimits::kSteps, docs/limits.md). A run whose
  /// largest step cannot reach the stop time within it is refused up front (InputError); one
  /// that spends it before the stop time ends with a TimeStepError naming what holds the step
  /// down. Bounds the results' memory to about maxSteps x (signals + 1) x 8 bytes.
  long long maxSteps = 0;
  /// Highest BDF order IDA may use (1-5). Orders above 2 are not A-stable: the lightly damped
  /// resonances of leakage inductance with junction capacitance force them into tiny steps.
  int idaMaxOrder = 2;
  std::vector<std::string> record;  ///< signals; empty = every node voltage and device current
  /// Hold the slow unknowns (plate temperatures and forming, UnknownSpec::slow) at their
  /// starting values: the electrical response alone, as the periodic steady state sees it.
  bool holdSlow = false;
  /// Called after each accepted step with (time, stop); return false to cancel the run (the
  /// analysis then throws Cancelled).
  std::function<bool(double, double)> progress;
  void validate() const;
};

/// Signal names: "v:node", "v:node1,node2", "<probe>:<device>" (e.g. "i:R1", "p:D1"),
/// "x:<unknown>" (raw unknown, e.g. "x:T1.i2").

/// Every analysis reads the circuit only while it takes its own deep copy, at the start; the
/// run then works on that copy alone. One circuit may therefore run in many threads at once,
/// each result bit-identical to a serial run's; a change to the circuit (a parameter set,
/// a device added) must not overlap the start of a run on it, and never reaches a run under
/// way. The progress callback is called from the analysis's own thread.

/// DC operating point at t = 0. The result holds one time point.
Result operatingPoint(const Circuit& circuit, const OperatingPointOptions& options = {});
/// Transient analysis from 0 to options.stop.
Result transient(const Circuit& circuit, const TransientOptions& options);

/// The fewest steps the transient can take (its stop time over its largest step), what sets
/// that step, and the step budget it is held to; for refusing a run up front.
struct StepEstimate {
  double minimumSteps = 0.0;
  double largestStep = 0.0;  ///< s
  std::string limitedBy;     ///< "max-step", "the stop time" or the element whose period sets it
  long long budget = 0;      ///< the run's maxSteps, or RunLimits::kSteps
};
StepEstimate estimateSteps(const Circuit& circuit, const TransientOptions& options);
/// Throws InputError, with the estimate and what to change, when the fewest steps exceed the
/// budget. transient() calls it first; the netlist checks call it with the run's location.
void checkStepBudget(const Circuit& circuit, const TransientOptions& options);

const char* methodName(Method m);
/// Parses "trapezoidal", "bdf2", "tr-bdf2" or "ida"; throws InputError otherwise ("trap" with the
/// new name).
Method parseMethod(const std::string& name);

}  // namespace disc
