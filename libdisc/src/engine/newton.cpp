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

/// dx = -F(x) in one pass (the right-hand side of the Newton update); false if any entry is not
/// finite.
bool negatedResidual(const System& sys, const std::vector<double>& x, double a0,
                     const double* history, double gmin, std::vector<double>& dx) {
  const int n = sys.size();
  const double* i = sys.i.data();
  const double* q = sys.q.data();
  double* out = dx.data();
  bool finite = true;
  if (history) {
    for (int k = 0; k < n; ++k) {
      const double v = i[k] + a0 * q[k] + history[k];
      finite = finite && std::isfinite(v);
      out[k] = -v;
    }
  } else {
    for (int k = 0; k < n; ++k) {
      const double v = a0 != 0.0 ? i[k] + a0 * q[k] : i[k];
      finite = finite && std::isfinite(v);
      out[k] = -v;
    }
  }
  if (gmin > 0.0)
    for (int k : sys.nodeRows()) out[k] -= gmin * x[static_cast<std::size_t>(k)];
  return finite;
}

}  // namespace

NewtonOutcome solveNewton(System& sys, LinearSolver& ls, std::vector<double>& x, EvalContext ctx,
                          double a0, const double* history, const NewtonSettings& settings,
                          RunStats& stats) {
  const int n = sys.size();
  const auto& abstol = *settings.abstol;
  NewtonWorkspace local;
  NewtonWorkspace& work = settings.workspace ? *settings.workspace : local;
  std::vector<double>& f = work.f;
  std::vector<double>& dx = work.dx;
  // Every entry below n is written before it is read; only the ground cell needs clearing.
  f.resize(static_cast<std::size_t>(n) + 1);
  dx.resize(static_cast<std::size_t>(n) + 1);
  f[static_cast<std::size_t>(n)] = 0.0;
  dx[static_cast<std::size_t>(n)] = 0.0;
  NewtonOutcome out;
  ctx.x = x.data();
  std::vector<double>& limits = work.limits;
  limits.assign(static_cast<std::size_t>(sys.limitCells()) + 1,
                std::numeric_limits<double>::quiet_NaN());
  bool limited = false;  // a junction was limited in the last evaluation
  ctx.limits = limits.data();
  ctx.limited = &limited;
  ctx.reltol = settings.reltol;
  ctx.vabstol = settings.vabstol;
  // Largest update of the last iteration in units of its tolerance; a chord step (the previous
  // factorisation kept) is taken only when that iteration ended within kChordBelow of
  // convergence, where the Jacobian has barely moved, and only while chord steps still contract.
  constexpr double kChordBelow = 10.0;
  constexpr double kChordDiscard = 1e4;  // a chord update this large (in tolerances) is discarded
  double lastMeasure = std::numeric_limits<double>::infinity();
  // The factors of G + a0' C left by the previous solve serve this one's first iteration when
  // that solve converged and a0'/a0 is within kA0Band of 1 (the chord iteration then contracts
  // at a rate of about |1 - a0'/a0|), as BDF codes keep their Jacobian over several steps.
  constexpr double kA0Band = 1.3;
  const double a0Ratio = ls.factoredA0() > 0.0 && a0 > 0.0 ? ls.factoredA0() / a0 : 0.0;
  bool factored = settings.reuseJacobian && settings.reuseAcrossSolves && ls.hasFactors() &&
                  a0Ratio > 1.0 / kA0Band && a0Ratio < kA0Band;
  if (factored) lastMeasure = 0.0;
  bool chord = false;
  // Predicted convergence: a contraction rate below kFastRate and a predicted remaining error
  // below kPredictedBelow tolerances.
  constexpr double kFastRate = 0.25, kPredictedBelow = 0.2;
  // Updates growing geometrically (kRise or more, several iterations in a row) mean divergence.
  constexpr double kRise = 1.2;
  double previousMeasure = std::numeric_limits<double>::infinity();
  bool previousLimited = true;  // the last iteration's evaluation limited a junction
  int rises = 0;
  for (int it = 0; it < settings.maxIterations; ++it) {
    limited = false;
    chord = settings.reuseJacobian && factored && lastMeasure <= kChordBelow;
    sys.evaluate(ctx, !chord);
    ++stats.evaluations;
    // An iterate that overflowed a device law cannot be factored: report failure, so that the
    // caller shortens the step (or steps gmin or the sources).
    if (!negatedResidual(sys, x, a0, history, settings.gmin, dx)) break;
    if (!chord) {
      ls.factor(sys, a0, settings.gmin);
      ls.setFactoredA0(-1.0);  // not reusable until this solve converges
      factored = true;
      ++stats.factorizations;
    }
    ls.solve(dx.data(), n);
    dx[static_cast<std::size_t>(n)] = 0.0;
    ++stats.newtonIterations;
    out.iterations = it + 1;
    // Reach of a chord update in tolerances of the present values (discarded below if wild).
    double reach = 0.0;
    if (chord)
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        reach =
            std::max(reach, std::abs(dx[uk]) / (settings.reltol * std::abs(x[uk]) + abstol[uk]));
      }
    if (chord && reach > kChordDiscard) {
      // Factors kept from an earlier iterate or step can be far off after a junction switched:
      // an update of thousands of tolerances of the present values is theirs, not the
      // circuit's. Discard it and factorise afresh at the same iterate, rather than continue
      // from a wild point where the update-based test can be fooled.
      lastMeasure = std::numeric_limits<double>::infinity();
      factored = false;
      continue;
    }
    double measure = 0.0;
    bool finite = true;
    for (int k = 0; k < n; ++k) {
      const auto uk = static_cast<std::size_t>(k);
      const double step = dx[uk];
      const double tol =
          settings.reltol * std::max(std::abs(x[uk] + step), std::abs(x[uk])) + abstol[uk];
      finite = finite && std::isfinite(step);
      measure = std::max(measure, std::abs(step) / tol);
    }
    // A non-finite update (a factorisation gone singular) is not applied.
    if (!finite) break;
    for (int k = 0; k < n; ++k) x[static_cast<std::size_t>(k)] += dx[static_cast<std::size_t>(k)];
    // The junctions' movement in this same update (devices whose junction voltage is a
    // difference of node voltages: those are large in a tall stack while the junction's is
    // small, so the unknowns' measure does not cover it).
    measure = std::max(measure, sys.junctionStep(ctx, dx.data()));
    // (An evaluation that limited a junction linearised the device elsewhere than at x.)
    // Converged: this update within tolerance on every unknown and every junction. Not on a
    // chord step at the start of a solve in a circuit with junctions: factors kept from before
    // a junction switched make the update small while the junction current is far off (a
    // forward junction's huge conductance), and nothing yet shows their contraction.
    const bool unrated = chord && it == 0 && sys.limitCells() > 0;
    bool small = measure <= 1.0 && !limited && !unrated;
    // Or converging fast enough that the iterate just formed is within tolerance: with the
    // contraction rate rho of the last two updates, the remaining error is about
    // rho / (1 - rho) times this update (the test of BDF codes, e.g. SUNDIALS IDA). Only where
    // neither of the two evaluations limited a junction: after a limited (wild) update the
    // ratio says nothing about the contraction.
    if (!small && settings.predictConvergence && it > 0 && !limited && !previousLimited) {
      const double rho = measure / previousMeasure;
      small = rho < kFastRate && measure * rho / (1.0 - rho) <= kPredictedBelow;
    }
    // A chord step that did not at least halve the update: factorise afresh next time. (The
    // first iteration on the previous solve's factors has nothing to compare with.)
    lastMeasure = chord && it > 0 && measure > 0.5 * lastMeasure
                      ? std::numeric_limits<double>::infinity()
                      : measure;
    if (small) {
      ctx.limits = nullptr;
      if (settings.finalChargesOnly)
        sys.evaluateCharges(ctx);
      else
        sys.evaluate(ctx, false);
      ++stats.evaluations;
      if (ls.factoredA0() < 0.0) ls.setFactoredA0(a0);  // factored during this solve
      out.converged = true;
      return out;
    }
    // A diverging iteration (typically a factorisation that has lost the circuit's weakest mode
    // to round-off at a long step) will not recover; a shorter step will.
    rises = measure > kRise * previousMeasure ? rises + 1 : 0;
    previousMeasure = measure;
    previousLimited = limited;
    if (settings.stopOnDivergence && rises >= 3 && measure > 1.0) break;
  }
  // Failed: search pivots afresh for the next attempt (a shorter step) rather than trust an
  // order chosen before the junctions switched.
  ls.repivot();
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
