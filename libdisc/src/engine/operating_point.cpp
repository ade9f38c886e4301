// Operating point: plain Newton, then gmin stepping, then source stepping.
#include "operating_point.hpp"

#include <fmt/format.h>
#include <chrono>
#include <cmath>

#include "disc/error.hpp"
#include "failure_monitor.hpp"
#include "newton.hpp"
#include "recorder.hpp"

namespace disc {
namespace detail {

void solveOperatingPoint(System& sys, LinearSolver& ls, std::vector<double>& x,
                         const OperatingPointOptions& options, RunStats& stats) {
  sys.checkDcTopology();
  const auto abstol = sys.absTolerances(options.tol);
  NewtonSettings ns;
  ns.maxIterations = options.maxIterations;
  ns.reltol = options.tol.reltol;
  ns.abstol = &abstol;
  ns.vabstol = options.tol.voltage;
  ns.gmin = options.gmin;
  EvalContext ctx;
  std::vector<double> zero(x.size(), 0.0);
  ctx.xdot = zero.data();
  ctx.dc = true;
  ctx.time = 0.0;

  const std::vector<double> guess = x;
  NewtonOutcome last = solveNewton(sys, ls, x, ctx, 0.0, nullptr, ns, stats);
  if (last.converged) return;

  // gmin stepping: a large conductance to gnd at every node makes the problem nearly linear;
  // relax it by decades, each solve starting from the last.
  x = guess;
  bool ok = options.gminStepping;
  for (double g = 1e-2; ok && g >= options.gmin * 0.999; g /= 10.0) {
    ns.gmin = std::max(g, options.gmin);
    last = solveNewton(sys, ls, x, ctx, 0.0, nullptr, ns, stats);
    if (!last.converged) {
      ok = false;
      break;
    }
  }
  ns.gmin = options.gmin;
  if (ok) {
    last = solveNewton(sys, ls, x, ctx, 0.0, nullptr, ns, stats);
    if (last.converged) return;
  }

  // Source stepping: ramp every independent source from zero, shrinking the ramp step on failure.
  if (!options.sourceStepping)
    throw ConvergenceError(
        fmt::format("no DC operating point found by Newton{}; the worst equation is {} with "
                    "residual {:.3g}; allow source stepping",
                    options.gminStepping ? " and gmin stepping" : "", sys.describe(last.worstRow),
                    last.worstResidual),
        last.worstRow >= 0 ? sys.unknownName(last.worstRow) : "", last.worstResidual);
  std::fill(x.begin(), x.end(), 0.0);
  sys.initialState(x);
  double scale = 0.0, step = 0.1;
  while (scale < 1.0) {
    const double next = std::min(1.0, scale + step);
    std::vector<double> saved = x;
    ctx.sourceScale = next;
    last = solveNewton(sys, ls, x, ctx, 0.0, nullptr, ns, stats);
    if (last.converged) {
      scale = next;
      step = std::min(step * 2.0, 0.25);
    } else {
      x = saved;
      step /= 4.0;
      if (step < 1e-6) break;
    }
  }
  if (scale >= 1.0 && last.converged) return;
  throw ConvergenceError(
      fmt::format("no DC operating point found (Newton, gmin stepping and source stepping all "
                  "failed); the worst equation is {} with residual {:.3g}; check for a device "
                  "driven far beyond its ratings or start the transient cold",
                  sys.describe(last.worstRow), last.worstResidual),
      last.worstRow >= 0 ? sys.unknownName(last.worstRow) : "", last.worstResidual);
}

}  // namespace detail

void Tolerances::validate() const {
  auto pos = [](double v, const char* what) {
    if (!(v > 0.0) || !std::isfinite(v))
      throw InputError(fmt::format("tolerance '{}' must be positive, got {}", what, v));
  };
  pos(reltol, "reltol");
  pos(voltage, "voltage");
  pos(current, "current");
  pos(temperature, "temperature");
  pos(state, "state");
  if (reltol >= 0.1) throw InputError(fmt::format("reltol {} is too loose (use < 0.1)", reltol));
}

void OperatingPointOptions::validate() const {
  tol.validate();
  if (maxIterations < 1) throw InputError("operating point: maxIterations must be at least 1");
  if (!(gmin >= 0.0) || !std::isfinite(gmin))
    throw InputError("operating point: gmin must be zero or positive");
}

Result operatingPoint(const Circuit& circuit, const OperatingPointOptions& options) {
  options.validate();
  const auto start = std::chrono::steady_clock::now();
  detail::System sys(circuit);
  detail::LinearSolver ls;
  Result result;
  detail::Recorder recorder(sys, options.record, result);
  std::vector<double> x(static_cast<std::size_t>(sys.size()) + 1, 0.0);
  sys.initialState(x);
  RunStats& stats = result.stats();
  stats.method = "operating-point";
  stats.unknowns = sys.size();
  detail::solveOperatingPoint(sys, ls, x, options, stats);
  std::vector<double> zero(x.size(), 0.0);
  EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = zero.data();
  ctx.dc = true;
  detail::FailureMonitor monitor(sys);
  if (monitor.start(ctx)) monitor.holdDestroyed(x);
  recorder.record(ctx);
  result.failureEvents() = monitor.events();
  stats.acceptedSteps = 1;
  stats.wallSeconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return result;
}

}  // namespace disc
