// Newton-Raphson with device step limiting.
#include "newton.hpp"

#include <cmath>
#include <limits>

namespace disc::detail {
namespace {

void residual(const System& sys, const std::vector<double>& x, double a0, const double* history,
              double gmin, std::vector<double>& f) {
  const int n = sys.size();
  for (int k = 0; k < n; ++k) {
    double v = sys.i[static_cast<std::size_t>(k)];
    if (a0 != 0.0) v += a0 * sys.q[static_cast<std::size_t>(k)];
    if (history) v += history[k];
    f[static_cast<std::size_t>(k)] = v;
  }
  if (gmin > 0.0)
    for (int k : sys.nodeRows())
      f[static_cast<std::size_t>(k)] += gmin * x[static_cast<std::size_t>(k)];
}

}  // namespace

NewtonOutcome solveNewton(System& sys, LinearSolver& ls, std::vector<double>& x, EvalContext ctx,
                          double a0, const double* history, const NewtonSettings& settings,
                          RunStats& stats) {
  const int n = sys.size();
  const auto& abstol = *settings.abstol;
  std::vector<double> f(static_cast<std::size_t>(n) + 1, 0.0);
  std::vector<double> dx(static_cast<std::size_t>(n) + 1, 0.0);
  NewtonOutcome out;
  ctx.x = x.data();
  std::vector<double> limits(static_cast<std::size_t>(sys.limitCells()) + 1,
                             std::numeric_limits<double>::quiet_NaN());
  bool unsettled = false;
  ctx.limits = limits.data();
  ctx.unsettled = &unsettled;
  ctx.reltol = settings.reltol;
  ctx.vabstol = settings.vabstol;
  // Largest update of the last iteration in units of its tolerance; a chord step (the previous
  // factorisation kept) is taken only when that iteration ended within kChordBelow of
  // convergence, where the Jacobian has barely moved, and only while chord steps still contract.
  constexpr double kChordBelow = 10.0;
  double lastMeasure = std::numeric_limits<double>::infinity();
  bool factored = false, chord = false;
  for (int it = 0; it < settings.maxIterations; ++it) {
    unsettled = false;
    chord = settings.reuseJacobian && factored && lastMeasure <= kChordBelow;
    sys.evaluate(ctx, !chord);
    ++stats.evaluations;
    residual(sys, x, a0, history, settings.gmin, f);
    if (!chord) {
      sys.assemble(a0, settings.gmin);
      ls.factor(sys);
      factored = true;
      ++stats.factorizations;
    }
    for (int k = 0; k < n; ++k) dx[static_cast<std::size_t>(k)] = -f[static_cast<std::size_t>(k)];
    ls.solve(dx.data(), n);
    dx[static_cast<std::size_t>(n)] = 0.0;
    ++stats.newtonIterations;
    out.iterations = it + 1;
    bool finite = true;
    for (int k = 0; k < n; ++k) finite = finite && std::isfinite(dx[static_cast<std::size_t>(k)]);
    if (!finite) break;
    bool small = !unsettled;
    double measure = 0.0;
    for (int k = 0; k < n; ++k) {
      const auto uk = static_cast<std::size_t>(k);
      const double step = dx[uk];
      const double xn = x[uk] + step;
      const double tol = settings.reltol * std::max(std::abs(xn), std::abs(x[uk])) + abstol[uk];
      if (std::abs(step) > tol) small = false;
      measure = std::max(measure, std::abs(step) / tol);
      x[uk] = xn;
    }
    // A chord step that did not at least halve the update: factorise afresh next time.
    lastMeasure =
        chord && measure > 0.5 * lastMeasure ? std::numeric_limits<double>::infinity() : measure;
    if (small) {
      ctx.limits = nullptr;
      sys.evaluate(ctx, false);
      ++stats.evaluations;
      out.converged = true;
      return out;
    }
  }
  // Name the equation furthest from balance at the last iterate.
  ctx.limits = nullptr;
  sys.evaluate(ctx, false);
  residual(sys, x, a0, history, settings.gmin, f);
  for (int k = 0; k < n; ++k) {
    const double r = std::abs(f[static_cast<std::size_t>(k)]);
    if (out.worstRow < 0 || !(r <= out.worstResidual)) {
      out.worstRow = k;
      out.worstResidual = r;
    }
  }
  return out;
}

}  // namespace disc::detail
