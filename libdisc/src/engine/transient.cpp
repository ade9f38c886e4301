// Transient analysis entry point: start state, back-end dispatch, options.
#include <fmt/format.h>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>

#include "disc/error.hpp"
#include "disc/limits.hpp"
#include "operating_point.hpp"
#include "periodic_solver.hpp"
#include "transient_common.hpp"

namespace disc {

const char* methodName(Method m) {
  switch (m) {
    case Method::Trapezoidal:
      return "trapezoidal";
    case Method::Bdf2:
      return "bdf2";
    case Method::Ida:
      return "ida";
    case Method::TrBdf2:
      return "tr-bdf2";
  }
  return "?";
}

Method parseMethod(const std::string& name) {
  if (name == "trapezoidal") return Method::Trapezoidal;
  if (name == "bdf2") return Method::Bdf2;
  if (name == "ida") return Method::Ida;
  if (name == "tr-bdf2") return Method::TrBdf2;
  if (name == "trap")
    throw InputError("method 'trap' is now called 'trapezoidal' (the trapezoidal rule)");
  throw InputError(
      fmt::format("unknown integration method '{}': use trapezoidal, bdf2, tr-bdf2 or ida", name));
}

void TransientOptions::validate() const {
  tol.validate();
  if (!(stop > 0.0) || !std::isfinite(stop))
    throw InputError(fmt::format("transient: stop time must be positive, got {} s", stop));
  if (!(maxStep >= 0.0) || !std::isfinite(maxStep))
    throw InputError("transient: maximum step must be zero (automatic) or positive");
  if (!(initialStep >= 0.0) || !std::isfinite(initialStep))
    throw InputError("transient: initial step must be zero (automatic) or positive");
  if (!(recordFrom >= 0.0) || recordFrom > stop)
    throw InputError("transient: recording must start between 0 and the stop time");
  if (!(recordSpacing >= 0.0) || !std::isfinite(recordSpacing))
    throw InputError("transient: record spacing must be zero (every step) or positive");
  if (!(keepLast >= 0.0) || !std::isfinite(keepLast))
    throw InputError("transient: keepLast must be zero (keep every row) or positive");
  if (keepLast > 0.0 && keepSpread < 2)
    throw InputError("transient: keepSpread must be at least 2");
  if (maxNewton < 2) throw InputError("transient: maxNewton must be at least 2");
  if (idaMaxOrder < 1 || idaMaxOrder > 5)
    throw InputError(fmt::format("transient: IDA order must be 1 to 5, got {}", idaMaxOrder));
  if (maxSteps < 0 || maxSteps > RunLimits::kMaxSteps)
    throw InputError(
        fmt::format("transient: max-steps must lie between 1 and {} (0: the default "
                    "{}), got {}",
                    RunLimits::kMaxSteps, RunLimits::kSteps, maxSteps));
}

StepEstimate estimateSteps(const Circuit& circuit, const TransientOptions& o) {
  StepEstimate e;
  e.budget = o.maxSteps > 0 ? o.maxSteps : RunLimits::kSteps;
  // As resolveMaxStep does, from the devices' own hints rather than a built system.
  double h = o.stop / 50.0;
  e.limitedBy = "the stop time";
  if (o.maxStep > 0.0) {
    h = std::min(o.maxStep, o.stop);
    e.limitedBy = "max-step";
  } else {
    for (const auto& d : circuit.devices())
      if (d->stepHint() < h) {
        h = d->stepHint();
        e.limitedBy = fmt::format("the period of '{}'", d->name());
      }
  }
  e.largestStep = h;
  e.minimumSteps = h > 0.0 ? o.stop / h : std::numeric_limits<double>::infinity();
  return e;
}

void checkStepBudget(const Circuit& circuit, const TransientOptions& o) {
  const StepEstimate e = estimateSteps(circuit, o);
  if (e.minimumSteps > static_cast<double>(e.budget))
    throw InputError(fmt::format(
        "the transient needs at least {:.3g} steps (stop {:.4g} s over a largest step of {:.3g} "
        "s, set by {}), more than its budget of {} steps (docs/limits.md): shorten stop, "
        "lengthen max-step, or raise max-steps= (disc run --max-steps, max_steps= in Python) to "
        "force it (its rows then go to the CSV as it "
        "runs, in bounded memory; record-spacing= thins them). For minutes to hours of warming "
        "up, 'run warm-up duration={:.4g}s' follows the temperatures and forming over settled "
        "mains periods at a small fraction of the cost (docs/engine.md)",
        e.minimumSteps, o.stop, e.largestStep, e.limitedBy, e.budget, o.stop));
}

namespace detail {

double resolveMaxStep(const System& sys, const TransientOptions& o) {
  if (o.maxStep > 0.0) return std::min(o.maxStep, o.stop);
  return std::min(o.stop / 50.0, sys.naturalStep());
}

void reportProgress(const TransientOptions& o, double t) {
  if (o.progress && !o.progress(t, o.stop))
    throw Cancelled(fmt::format("transient cancelled at t = {:.6g} s", t));
}

StepBudget::StepBudget(const System& sys, const TransientOptions& o)
    : sys_(sys),
      stop_(o.stop),
      budget_(o.maxSteps > 0 ? o.maxSteps : RunLimits::kSteps),
      changes_(static_cast<std::size_t>(sys.size()), 0),
      lastChanges_(static_cast<std::size_t>(sys.size()), 0),
      extreme_(static_cast<std::size_t>(sys.size()), 0.0),
      swing_(sys.absTolerances(o.tol)),
      rising_(static_cast<std::size_t>(sys.size()), 0) {
  // A turning point counts when the unknown comes back from its extreme by a hundred times its
  // absolute tolerance: rounding noise on a quiet node is no oscillation.
  for (auto& w : swing_) w *= 100.0;
}

void StepBudget::accepted(double t, double h, const double* x, const Recorder& rec) {
  ++steps_;
  for (std::size_t k = 0; k < changes_.size(); ++k) {
    const double v = x[k];
    if (rising_[k] >= 0 && v > extreme_[k]) {
      extreme_[k] = v;
      rising_[k] = 1;
    } else if (rising_[k] <= 0 && v < extreme_[k]) {
      extreme_[k] = v;
      rising_[k] = -1;
    } else if (std::abs(v - extreme_[k]) > swing_[k]) {
      // Turned back from the extreme by more than the hysteresis.
      if (rising_[k] != 0) ++changes_[k];
      rising_[k] = v > extreme_[k] ? 1 : -1;
      extreme_[k] = v;
    }
  }
  if (++inWindow_ == kWindow) {
    lastChanges_.swap(changes_);
    std::fill(changes_.begin(), changes_.end(), 0);
    lastWindow_ = t - windowStart_;
    windowStart_ = t;
    inWindow_ = 0;
  }
  if (steps_ < budget_ || t >= stop_) return;
  const bool full = lastWindow_ > 0.0;
  const auto& counts = full ? lastChanges_ : changes_;
  const double span = full ? lastWindow_ : t - windowStart_;
  int worst = -1;
  for (std::size_t k = 0; k < counts.size(); ++k)
    if (counts[k] > 0 && (worst < 0 || counts[k] > counts[static_cast<std::size_t>(worst)]))
      worst = static_cast<int>(k);
  std::string cause;
  // Ten turning points in the window: an oscillation, not the slow drift of a settling run.
  if (worst >= 0 && counts[static_cast<std::size_t>(worst)] >= 10 && span > 0.0) {
    const double f = counts[static_cast<std::size_t>(worst)] / (2.0 * span);
    cause = fmt::format(
        "; {} oscillates at about {:.3g} Hz in the last steps: a lightly damped ringing (such "
        "as a transformer's leakage inductance with a diode's junction capacitance, or a choke "
        "with a capacitor) that the step must follow. Damp it (a resistor and capacitor in "
        "series across the diodes or the winding, common practice), loosen reltol",
        sys_.describe(worst), f);
  } else {
    cause = "; loosen reltol, lengthen the step (max-step) or shorten stop";
  }
  const double values = static_cast<double>(rec.keptValues());
  throw TimeStepError(
      fmt::format("the transient spent its budget of {} steps at t = {:.6g} s of {:.4g} s (step "
                  "{:.3g} s; {:.0f} MB of results so far){}, or raise max-steps= "
                  "(docs/limits.md)",
                  budget_, t, stop_, h, values * 8.0 / 1e6, cause),
      t, worst >= 0 ? sys_.unknownName(worst) : "");
}

}  // namespace detail

Result transient(const Circuit& circuit, const TransientOptions& options) {
  options.validate();
  checkStepBudget(circuit, options);
  const auto started = std::chrono::steady_clock::now();
  detail::System sys(circuit);
  detail::LinearSolver ls;
  Result result;
  detail::Recorder recorder(sys, options.record, result);
  recorder.plan(options);
  RunStats& stats = result.stats();
  stats.method = methodName(options.method);
  stats.unknowns = sys.size();
  std::vector<double> x(static_cast<std::size_t>(sys.size()) + 1, 0.0);
  sys.initialState(x);
  if (options.holdSlow) sys.freeze(detail::slowUnknowns(sys), x);
  if (options.start == Start::OperatingPoint) {
    OperatingPointOptions op;
    op.tol = options.tol;
    detail::solveOperatingPoint(sys, ls, x, op, stats);
  }
  detail::FailureMonitor monitor(sys);
  EvalContext start;
  start.x = x.data();
  if (monitor.start(start)) {
    // No physical starting state: the run ends where it begins.
    monitor.holdDestroyed(x);
    std::vector<double> zero(x.size(), 0.0);
    start.xdot = zero.data();
    recorder.record(start);
  } else if (options.method == Method::Ida) {
    detail::integrateIda(sys, options, x, recorder, stats, monitor);
  } else {
    detail::integrateStepping(sys, ls, options, x, recorder, stats, monitor);
  }
  recorder.finish();
  result.failureEvents() = monitor.events();
  stats.wallSeconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace disc
