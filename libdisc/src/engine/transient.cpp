// Transient analysis entry point: start state, back-end dispatch, options.
#include <fmt/format.h>
#include <algorithm>
#include <chrono>
#include <cmath>

#include "disc/error.hpp"
#include "operating_point.hpp"
#include "periodic_solver.hpp"
#include "transient_common.hpp"

namespace disc {

const char* methodName(Method m) {
  switch (m) {
    case Method::Trapezoidal:
      return "trap";
    case Method::Bdf2:
      return "bdf2";
    case Method::Ida:
      return "ida";
  }
  return "?";
}

Method parseMethod(const std::string& name) {
  if (name == "trap") return Method::Trapezoidal;
  if (name == "bdf2") return Method::Bdf2;
  if (name == "ida") return Method::Ida;
  throw InputError(fmt::format("unknown integration method '{}': use trap, bdf2 or ida", name));
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
  if (maxNewton < 2) throw InputError("transient: maxNewton must be at least 2");
  if (idaMaxOrder < 1 || idaMaxOrder > 5)
    throw InputError(fmt::format("transient: IDA order must be 1 to 5, got {}", idaMaxOrder));
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

}  // namespace detail

Result transient(const Circuit& circuit, const TransientOptions& options) {
  options.validate();
  const auto started = std::chrono::steady_clock::now();
  detail::System sys(circuit);
  detail::LinearSolver ls;
  Result result;
  detail::Recorder recorder(sys, options.record, result);
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
  result.failureEvents() = monitor.events();
  stats.wallSeconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return result;
}

}  // namespace disc
