// Newton-Raphson with device step limiting.
#include "newton.hpp"

#include <cmath>
#include <limits>

namespace disc::detail {
namespace {

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
  // Second-order remainder of an exact step accepted below this many tolerances, for updates
  // of at most kQuadraticReach tolerances (a guard against a factorisation gone bad).
  constexpr double kQuadraticBelow = 0.2, kQuadraticReach = 1e3;
  constexpr double kRefinementBelow = 0.02;  // the solve's own error, in tolerances
  // Factors whose pivots cancelled by at most this factor solve to about 1e-11 relative
  // (16 - 5 digits): on an update of at most kQuadraticReach tolerances an error near 1e-8
  // tolerances, far inside kRefinementBelow, so the refinement solve is skipped. The lost weak
  // mode of a long reverse-biased junction chain cancels by 1e8 and more; the transformer
  // bridge's factors reach 1e8 with refinement errors still below 1e-6 tolerances.
  constexpr double kTrustedCancellation = 1e5;
  // Per unknown, 1 / (2 S) for the smallest scale S over which the device laws bend in it,
  // beside the junctions, which declare their own (Device::junctionPairs): temperatures
  // kT^2/Ea >= 2 K (activation energies up to 1.5 eV at 200 K and above), slow states 0.1;
  // currents enter every law linearly (branch equations of sources, inductors and windings).
  // Node voltages bend the laws only through junctions; their 50 mV is a guard found by
  // measurement: without it a 10000-diode chain in reverse bias, whose solves lose the chain's
  // weakest mode to round-off, took 119 + 21 steps instead of 80 + 6.
  if (work.halfCurvature.size() != static_cast<std::size_t>(n) + 1) {
    work.halfCurvature.assign(static_cast<std::size_t>(n) + 1, 0.0);
    for (int k = 0; k < n; ++k) {
      double scale = 0.0;
      switch (sys.kind(k)) {
        case UnknownKind::Voltage:
          scale = 0.05;
          break;
        case UnknownKind::Temperature:
          scale = 2.0;
          break;
        case UnknownKind::State:
          scale = 0.1;
          break;
        case UnknownKind::Current:
          break;
      }
      work.halfCurvature[static_cast<std::size_t>(k)] = scale > 0.0 ? 0.5 / scale : 0.0;
    }
  }
  const std::vector<double>& halfCurvature = work.halfCurvature;
  std::vector<double>& rhs = work.rhs;
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
    // The right-hand side is kept for the refinement check of an exact step (below), unless
    // the factors' pivots vouch for the solve.
    const bool solveVouched = !chord && ls.pivotCancellation() <= kTrustedCancellation;
    if (settings.acceptQuadratic && !chord && !solveVouched) rhs.assign(dx.begin(), dx.end());
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
    double measure = 0.0, quadratic = 0.0;
    bool finite = true;
    for (int k = 0; k < n; ++k) {
      const auto uk = static_cast<std::size_t>(k);
      const double step = dx[uk];
      const double tol =
          settings.reltol * std::max(std::abs(x[uk] + step), std::abs(x[uk])) + abstol[uk];
      finite = finite && std::isfinite(step);
      measure = std::max(measure, std::abs(step) / tol);
      quadratic = std::max(quadratic, step * step * halfCurvature[uk] / tol);
    }
    // A non-finite update (a factorisation gone singular) is not applied.
    if (!finite) break;
    for (int k = 0; k < n; ++k) x[static_cast<std::size_t>(k)] += dx[static_cast<std::size_t>(k)];
    // The junctions' movement in this same update (devices whose junction voltage is a
    // difference of node voltages: those are large in a tall stack while the junction's is
    // small, so the unknowns' measure does not cover it).
    double junctionMove = 0.0, junctionRemainder = 0.0;
    sys.junctionMeasures(ctx, dx.data(), junctionMove, junctionRemainder);
    measure = std::max(measure, junctionMove);
    // (An evaluation that limited a junction linearised the device elsewhere than at x.)
    // Converged: this update within tolerance on every unknown and every junction. Not on a
    // chord step at the start of a solve in a circuit with junctions: factors kept from before
    // a junction switched make the update small while the junction current is far off (a
    // forward junction's huge conductance), and nothing yet shows their contraction.
    const bool unrated = chord && it == 0 && sys.limitCells() > 0;
    bool small = measure <= 1.0 && !limited && !unrated;
    // Or an exact Newton step (Jacobian evaluated at this iterate, no junction limited) small
    // enough that its second-order remainder, the error it leaves, is within tolerance: for a
    // junction law exp(v / (n kT/q)) about dv^2 / (2 n kT/q) (Newton's quadratic convergence),
    // with the scale each junction declares and the smallest other bend of the laws. The update
    // itself may then exceed the tolerance: at tight tolerances this saves the iteration that
    // would only confirm it.
    const bool secondOrderSmall = !limited && measure <= kQuadraticReach &&
                                  quadratic <= kQuadraticBelow &&
                                  junctionRemainder <= kQuadraticBelow;
    if (it == 0) out.firstUpdateQuadratic = secondOrderSmall;
    if (!small && settings.acceptQuadratic && !chord && secondOrderSmall) {
      // The quadratic bound holds for the exact Newton update; a factorisation that lost a weak
      // mode to round-off (a long chain of junctions in reverse bias at a long step) gives a
      // different one. Where the pivots do not vouch for the solve, one step of iterative
      // refinement measures its error: the residual of the linear system, solved again, must
      // be far within tolerance.
      small = solveVouched;
      if (!small) {
        sys.jacobianTimes(a0, settings.gmin, dx.data(), f.data());
        for (int k = 0; k < n; ++k) {
          const auto uk = static_cast<std::size_t>(k);
          f[uk] = rhs[uk] - f[uk];
        }
        f[static_cast<std::size_t>(n)] = 0.0;
        ls.solve(f.data(), n);
        double refinement = 0.0;
        for (int k = 0; k < n; ++k) {
          const auto uk = static_cast<std::size_t>(k);
          refinement = std::max(refinement,
                                std::abs(f[uk]) / (settings.reltol * std::abs(x[uk]) + abstol[uk]));
        }
        small = refinement <= kRefinementBelow;
      }
    }
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
  negatedResidual(sys, x, a0, history, settings.gmin, f);  // the sign does not matter here
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
