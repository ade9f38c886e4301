// Trapezoidal rule, variable-step BDF2 and TR-BDF2 on the charge-oriented system, with local
// truncation error control, breakpoints and step rejection.
//
// Each step solves i(x) + qdot(x) = 0 with qdot = a0 q + h, where (a0, h) come from the method:
//   backward Euler (restarts): a0 = 1/dt,            h = -q_n / dt
//   trapezoidal:               a0 = 2/dt,            h = -2 q_n / dt - qdot_n
//   BDF2, w = dt/dt_prev:      a0 = (1+2w)/(dt(1+w)), h = -(1+w)/dt q_n + w^2/(dt(1+w)) q_{n-1}
// The truncation error is estimated from divided differences of q over the last points:
// trapezoidal dt^3 q'''/12, BDF2 (2/9) dt^3 q''' (constant-step error constants), and dt^2 q''/2
// when fewer points exist (right after a restart).
//
// TR-BDF2 (R. E. Bank et al., "Transient simulation of silicon devices and circuits", IEEE
// Trans. CAD 4(4), 1985; M. E. Hosea and L. F. Shampine, "Analysis and implementation of
// TR-BDF2", Appl. Numer. Math. 20, 1996): each step of size dt is a trapezoidal stage to
// t + g dt, then a BDF2 stage on (t, t + g dt, t + dt), g = 2 - sqrt(2), for which both stages
// have the same a0 = 2/(g dt) (one Jacobian). One-step, second order and L-stable: a stiff mode
// (a junction switching on) is damped within the step instead of ringing at -1 per step as
// under the trapezoidal rule. Its local error k dt^3 q''', k = (-3g^2 + 4g - 2)/(12(2 - g)),
// is estimated from the second divided difference of qdot over the three points (Bank et al.)
// and filtered by (G + a0 C)^-1 a0 into the unknowns, as Hosea and Shampine do, so a stiff mode
// that the BDF2 stage damps does not hold the step down.
#include <fmt/format.h>
#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

#include "disc/error.hpp"
#include "newton.hpp"
#include "transient_common.hpp"

namespace disc::detail {
namespace {

enum class Formula { Euler, Trap, Bdf2, TrBdf2 };

struct Coefficients {
  double a0 = 0, a1 = 0, a2 = 0;  // qdot_new = a0 q_new + a1 q_n + a2 q_{n-1} (+ b qdot_n)
  double b = 0;
};

/// TR-BDF2's stage split: the trapezoidal stage covers kGamma of the step.
constexpr double kGamma = 2.0 - std::numbers::sqrt2;
/// Its local error constant (Bank et al.; Hosea and Shampine): LTE = kLte dt^3 q'''.
constexpr double kLte = (-3.0 * kGamma * kGamma + 4.0 * kGamma - 2.0) / (12.0 * (2.0 - kGamma));

Coefficients coefficients(Formula f, double h, double hPrev) {
  Coefficients c;
  switch (f) {
    case Formula::Euler:
      c.a0 = 1.0 / h;
      c.a1 = -1.0 / h;
      break;
    case Formula::Trap:
      c.a0 = 2.0 / h;
      c.a1 = -2.0 / h;
      c.b = -1.0;
      break;
    case Formula::TrBdf2:  // the second stage's, set up in integrateStepping
    case Formula::Bdf2: {
      const double w = h / hPrev;
      c.a0 = (1.0 + 2.0 * w) / (h * (1.0 + w));
      c.a1 = -(1.0 + w) / h;
      c.a2 = w * w / (h * (1.0 + w));
      break;
    }
  }
  return c;
}

/// The last few accepted (t, q) points, newest first.
struct History {
  std::array<double, 3> t{};
  std::array<std::vector<double>, 3> q;
  int count = 0;
  void reset(double time, const std::vector<double>& qn) {
    q[0] = qn;
    restartAt(time);
  }
  /// Forgets all but the newest point.
  void restartAt(double time) {
    count = 1;
    t[0] = time;
  }
  /// Takes qn's storage as the newest point (qn is left with the oldest point's, to be
  /// overwritten): no copy of a circuit-sized vector per step.
  void push(double time, std::vector<double>& qn) {
    std::rotate(t.rbegin(), t.rbegin() + 1, t.rend());
    std::rotate(q.rbegin(), q.rbegin() + 1, q.rend());
    t[0] = time;
    q[0].swap(qn);
    if (qn.size() != q[0].size()) qn.assign(q[0].size(), 0.0);
    count = std::min(count + 1, 3);
  }
};

}  // namespace

void integrateStepping(System& sys, LinearSolver& ls, const TransientOptions& o,
                       std::vector<double>& x, Recorder& rec, RunStats& stats,
                       FailureMonitor& monitor) {
  const int n = sys.size();
  const std::size_t N = static_cast<std::size_t>(n) + 1;
  const auto abstol = sys.absTolerances(o.tol);
  const double hmax = resolveMaxStep(sys, o);
  const double hmin = std::max(1e-13 * o.stop, 1e-18);
  std::vector<double> breaks = sys.breakpoints(0.0, o.stop);
  if (breaks.empty() || breaks.back() < o.stop) breaks.push_back(o.stop);

  NewtonSettings ns;
  ns.maxIterations = o.maxNewton;
  ns.reltol = o.tol.reltol;
  ns.abstol = &abstol;
  ns.vabstol = o.tol.voltage;
  ns.reuseJacobian = true;
  ns.reuseAcrossSolves = true;
  ns.stopOnDivergence = true;
  ns.predictConvergence = true;
  ns.acceptQuadratic = true;
  ns.finalChargesOnly = true;
  NewtonWorkspace work;
  ns.workspace = &work;
  StepBudget budget(sys, o);

  std::vector<double> xdot(N, 0.0), xPrev = x, xPrev2 = x, xPrev3 = x, xNew(N, 0.0), hist(N, 0.0);
  // Times of x, xPrev, xPrev2, xPrev3 and how many of them follow the last restart (the older
  // ones hold finite values from the start, so a zero weight on them adds nothing).
  std::array<double, 4> xTimes{};
  int xPoints = 1;
  std::vector<double> qdot(N, 0.0), qNew(N, 0.0), xdotNew(N, 0.0), qScale(N, 0.0);
  // TR-BDF2: the trapezoidal stage's unknowns, charges, their slope and history terms; the
  // largest magnitude each unknown has reached (its error scale).
  std::vector<double> xGamma(N, 0.0), qGamma(N, 0.0), qdotGamma(N, 0.0), histGamma(N, 0.0),
      xScale(N, 0.0);
  EvalContext ctx;
  ctx.x = x.data();
  ctx.xdot = xdot.data();
  ctx.time = 0.0;
  sys.evaluate(ctx, true);
  ++stats.evaluations;

  // Consistent values just after a restart at `time` (t = 0 of a cold start, a breakpoint):
  // the charges (capacitor charges, inductor fluxes, heat) keep their values `qFixed` while the
  // unknowns without charge take the sources' values at `time`, by one backward-Euler step of a
  // negligible size. Gives the derivative of the charges there (qdot = -i), which the error
  // estimate of the first step needs, and a first recorded row that satisfies the equations.
  NewtonSettings nsInit = ns;
  nsInit.reuseAcrossSolves = false;
  nsInit.predictConvergence = false;
  nsInit.acceptQuadratic = false;
  nsInit.finalChargesOnly = false;
  nsInit.stopOnDivergence = false;
  nsInit.maxIterations = std::max(o.maxNewton, 50);
  enum class Settled { Failed, Same, Moved };
  std::vector<double> qFixed(N, 0.0), xStart(N, 0.0), filtered(N, 0.0);
  auto settleAt = [&](double time, double hScale) {
    const double a0 = 1.0 / (1e-9 * hScale);
    xStart = x;
    // A source across capacitors moves charge at once (an impulse): then the charges jump, by
    // more or less, and the first pass's a0 (q - qFixed) is not their slope. A second pass from
    // the charges the first left gives it.
    for (int pass = 0; pass < 2; ++pass) {
      qFixed = sys.q;
      for (std::size_t k = 0; k < N; ++k) hist[k] = -a0 * qFixed[k];
      xNew = x;
      EvalContext c0 = ctx;
      c0.x = xNew.data();
      c0.time = time;
      const NewtonOutcome out = solveNewton(sys, ls, xNew, c0, a0, hist.data(), nsInit, stats);
      if (!out.converged) {
        // Keep the state as it is (its derivative from the step before, if any).
        x = xStart;
        ctx.x = x.data();
        sys.evaluate(ctx, true);
        ++stats.evaluations;
        return Settled::Failed;
      }
      for (std::size_t k = 0; k < N; ++k) {
        xdot[k] = a0 * (xNew[k] - x[k]);
        qdot[k] = a0 * (sys.q[k] - qFixed[k]);  // = -i, and exactly 0 on rows without charge
      }
      x.swap(xNew);
      x[static_cast<std::size_t>(n)] = 0.0;
      xdot[static_cast<std::size_t>(n)] = 0.0;
      ctx.x = x.data();
      ctx.time = time;
    }
    for (int k = 0; k < n; ++k) {
      const auto uk = static_cast<std::size_t>(k);
      if (std::abs(x[uk] - xStart[uk]) > o.tol.reltol * std::abs(xStart[uk]) + abstol[uk])
        return Settled::Moved;
    }
    return Settled::Same;
  };
  const double hFirst = o.initialStep > 0.0 ? o.initialStep : std::min(hmax, o.stop) * 1e-3;
  // Derivative of the charges at the last restart is known (the first step's error test).
  bool slopeKnown = true;  // at an operating point the charges rest: qdot = 0
  if (o.start == Start::Cold) slopeKnown = settleAt(0.0, hFirst) != Settled::Failed;
  if (o.recordFrom <= 0.0) rec.record(ctx);

  History history;  // history.q[0] is the charge at the current time t
  history.reset(0.0, sys.q);
  double t = 0.0, hPrev = 0.0;
  double h = hFirst;
  bool restart = true;
  // Tries of the first step after a restart (-1: the fallback below), the last and its error.
  int firstTries = 0;
  double firstH = 0.0, firstErr = 0.0;
  double errAccepted = 0.0, hAccepted = 0.0;        // the last accepted step's error and size
  double acceptedFactor = 0.0, acceptedExpo = 0.0;  // its errAccepted^-acceptedExpo
  std::size_t nextBreak = 0;

  while (t < o.stop) {
    while (nextBreak < breaks.size() && breaks[nextBreak] <= t * (1.0 + 1e-14)) ++nextBreak;
    const double tb = nextBreak < breaks.size() ? breaks[nextBreak] : o.stop;
    h = std::min(h, hmax);
    bool hitsBreak = false;
    // Land on breakpoints exactly, and stretch a step rather than leave a sliver before one.
    if (t + 1.1 * h >= tb) {
      h = tb - t;
      hitsBreak = true;
    }
    const Formula f = restart ? Formula::Euler
                      : o.method == Method::TrBdf2
                          ? Formula::TrBdf2
                          : (o.method == Method::Bdf2 && history.count >= 2 ? Formula::Bdf2
                             : o.method == Method::Bdf2                     ? Formula::Euler
                                                                            : Formula::Trap);
    // TR-BDF2's second stage is a BDF2 step of (1 - g) dt after one of g dt.
    const Coefficients c = f == Formula::TrBdf2
                               ? coefficients(Formula::Bdf2, (1.0 - kGamma) * h, kGamma * h)
                               : coefficients(f, h, hPrev);
    const std::vector<double>& qn = history.q[0];
    // The first Newton iterate extrapolates the last accepted points (Lagrange form): four
    // points, a cubic, one order above the methods', as BDF codes predict, so at tight
    // tolerances the first iterate is often already within tolerance (11 % fewer iterations
    // on the Shockley bridge at reltol 3e-8; neutral at 1e-3); after a breakpoint, as many as
    // it has (a straight line, then a parabola).
    auto predict = [&](double tau, std::vector<double>& into) {
      into = x;
      if (restart || xPoints < 2) return;
      const std::size_t m = static_cast<std::size_t>(xPoints);
      std::array<double, 4> w{};  // zero beyond the m points
      for (std::size_t a = 0; a < m; ++a) {
        double num = 1.0, den = 1.0;  // one division per weight
        for (std::size_t b = 0; b < m; ++b)
          if (b != a) {
            num *= tau - xTimes[b];
            den *= xTimes[a] - xTimes[b];
          }
        w[a] = num / den;
      }
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        into[uk] = w[0] * x[uk] + w[1] * xPrev[uk] + w[2] * xPrev2[uk] + w[3] * xPrev3[uk];
      }
    };
    auto solve = [&](std::vector<double>& xs, double a0, const double* history) {
      const NewtonOutcome out = solveNewton(sys, ls, xs, ctx, a0, history, ns, stats);
      // Factors kept from the previous step make the first iteration a chord step, which is
      // never accepted alone; fresh factors let an exact first step end the solve (the
      // second-order test). So: fresh factors while first updates are that small (tight
      // tolerances, smooth stretches), kept factors otherwise (they also carry a long chain of
      // junctions in reverse bias, whose weakest mode a fresh factorisation at a long step can
      // lose).
      ns.reuseAcrossSolves = !(out.converged && out.firstUpdateQuadratic);
      if (!out.converged) {
        ++stats.rejectedSteps;
        h /= 8.0;
        if (h < hmin)
          throw TimeStepError(
              fmt::format("time step too small at t = {:.9g} s: Newton did not converge even "
                          "with a {:.3g} s step; the worst equation is {} (residual {:.3g}). "
                          "Look for a device driven far outside its range or an unrealistic "
                          "ideal element",
                          t, h * 8.0, sys.describe(out.worstRow), out.worstResidual),
              t, out.worstRow >= 0 ? sys.unknownName(out.worstRow) : "");
      }
      return out.converged;
    };
    if (f == Formula::TrBdf2) {
      // The trapezoidal stage to t + g dt (never a breakpoint: the step ends at one at most).
      const Coefficients c1 = coefficients(Formula::Trap, kGamma * h, 0.0);
      for (std::size_t k = 0; k < N; ++k) histGamma[k] = c1.a1 * qn[k] + c1.b * qdot[k];
      predict(t + kGamma * h, xGamma);
      ctx.time = t + kGamma * h;
      if (!solve(xGamma, c1.a0, histGamma.data())) continue;
      qGamma.swap(sys.q);  // the next evaluation overwrites sys.q entirely
      for (std::size_t k = 0; k < N; ++k) {
        qdotGamma[k] = c1.a0 * qGamma[k] + histGamma[k];
        hist[k] = c.a1 * qGamma[k] + c.a2 * qn[k];
      }
      // The BDF2 stage starts from the line through x and the stage's unknowns.
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        xNew[uk] = x[uk] + (xGamma[uk] - x[uk]) / kGamma;
      }
    } else {
      for (std::size_t k = 0; k < N; ++k) {
        hist[k] = c.a1 * qn[k] + c.b * qdot[k];
        if (c.a2 != 0.0) hist[k] += c.a2 * history.q[1][k];
      }
      predict(t + h, xNew);
    }
    // A step that lands on a breakpoint sees the excitation's left limit there (a source
    // switched on at tb is still off); the right limit follows at the restart below.
    ctx.time = hitsBreak ? std::nextafter(tb, 0.0) : t + h;
    if (!solve(xNew, c.a0, hist.data())) continue;
    qNew.swap(sys.q);  // the next evaluation overwrites sys.q entirely

    // Truncation error on the charges, from divided differences including the new point.
    double errNorm = 0.0;
    double eulerNorm = 0.0;  // what a backward-Euler step of this size would make, h^2 q''/2
    int worst = -1;
    int order = 0;
    // The error allowed on row k, relative to the largest charge the row has held (so a charge
    // passing through zero or a junction's small charge does not demand steps far below what
    // its effect needs) with the charge an absolute tolerance of the row's unknown moves.
    auto rowTolerance = [&](std::size_t uk, double q0) {
      const double ckk =
          std::abs(sys.C[static_cast<std::size_t>(sys.diagonalSlot(static_cast<int>(uk)))]);
      qScale[uk] = std::max(qScale[uk], std::abs(q0));
      return o.tol.reltol * qScale[uk] + abstol[uk] * ckk;
    };
    if (history.count == 1 && slopeKnown) {
      // First step after a restart (backward Euler): its error h^2 q''/2 in the charges is the
      // distance from the tangent at the restart, q_new - q_n - h qdot_n. Stiff modes (a
      // junction's capacitance behind its series resistance, picoseconds) bend that tangent
      // hard while backward Euler damps them at once: the error is taken in the unknowns
      // through (G + C/h)^-1 C/h, which passes the slow modes and filters the stiff ones (the
      // estimate of E. Hairer and G. Wanner, Solving Ordinary Differential Equations II,
      // section IV.8, for Radau5), against reltol |x| + abstol.
      order = 1;
      // The filter goes twice: once leaves a stiff mode's whole initial value (backward Euler
      // removed it, the tangent did not), twice scales it by 1/(h lambda) like its true error.
      for (std::size_t k = 0; k < N; ++k)
        xdotNew[k] = (qNew[k] - history.q[0][k] - h * qdot[k]) / h;
      ls.solve(xdotNew.data(), n);
      const auto& J = sys.jacobian();
      std::fill(filtered.begin(), filtered.end(), 0.0);  // C v / h
      for (int col = 0; col < n; ++col)
        for (int p = J.outerIndexPtr()[col]; p < J.outerIndexPtr()[col + 1]; ++p)
          filtered[static_cast<std::size_t>(J.innerIndexPtr()[p])] +=
              sys.C[static_cast<std::size_t>(p)] * xdotNew[static_cast<std::size_t>(col)] / h;
      xdotNew.swap(filtered);
      ls.solve(xdotNew.data(), n);
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        const double err = std::abs(xdotNew[uk]);
        if (err == 0.0) continue;
        const double tol =
            o.tol.reltol * std::max(std::abs(xNew[uk]), std::abs(x[uk])) + abstol[uk];
        rowTolerance(uk, qNew[uk]);  // keeps the rows' charge scales up to date
        const double ratio = err / tol;
        if (ratio > errNorm) {
          errNorm = ratio;
          worst = k;
        }
      }
    } else if (f == Formula::TrBdf2) {
      // LTE = kLte dt^3 q''' with q''' from the second divided difference of qdot over t,
      // t + g dt and t + dt, filtered into the unknowns by (G + a0 C)^-1 a0 (the matrix of the
      // Newton solves): slow modes pass, stiff ones that the BDF2 stage damps are scaled down.
      order = 2;
      const double s = 2.0 * kLte * h * c.a0;
      for (std::size_t k = 0; k < N; ++k) {
        const double qdotNew = c.a0 * qNew[k] + hist[k];
        filtered[k] = s * (qdot[k] / kGamma - qdotGamma[k] / (kGamma * (1.0 - kGamma)) +
                           qdotNew / (1.0 - kGamma));
      }
      ls.solve(filtered.data(), n);
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        const double err = std::abs(filtered[uk]);
        if (err == 0.0) continue;
        // Relative to the largest magnitude the unknown has held, as the charges' scale above.
        const double scale = std::max({xScale[uk], std::abs(xNew[uk]), std::abs(x[uk])});
        const double ratio = err / (o.tol.reltol * scale + abstol[uk]);
        if (ratio > errNorm) {
          errNorm = ratio;
          worst = k;
        }
      }
    } else if (history.count >= 2) {
      const double t0 = t + h, t1 = history.t[0], t2 = history.t[1];
      const bool third = history.count >= 3;
      const double t3 = third ? history.t[2] : 0.0;
      const double lteScale = !third               ? h * h
                              : f == Formula::Trap ? 0.5 * h * h * h
                              : f == Formula::Bdf2 ? (4.0 / 3.0) * h * h * h
                                                   : h * h;
      order = third && f != Formula::Euler ? 2 : 1;
      // Reciprocal time differences once per step, not per unknown.
      const double r01 = 1.0 / (t0 - t1), r12 = 1.0 / (t1 - t2), r02 = 1.0 / (t0 - t2);
      const double r23 = third ? 1.0 / (t2 - t3) : 0.0, r13 = third ? 1.0 / (t1 - t3) : 0.0;
      const double r03 = third ? 1.0 / (t0 - t3) : 0.0;
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        const double q0 = qNew[uk], q1 = history.q[0][uk], q2 = history.q[1][uk];
        const double d01 = (q0 - q1) * r01, d12 = (q1 - q2) * r12;
        const double dd2 = (d01 - d12) * r02;
        double dd;
        if (third && order == 2) {
          const double q3 = history.q[2][uk];
          const double d23 = (q2 - q3) * r23;
          const double dd2b = (d12 - d23) * r13;
          dd = (dd2 - dd2b) * r03;
        } else {
          dd = dd2;
        }
        const double err = std::abs(lteScale * dd);
        if (err == 0.0) continue;
        const double tol = rowTolerance(uk, q0);
        const double ratio = tol > 0.0 ? err / tol : 1e300;
        eulerNorm = std::max(eulerNorm, tol > 0.0 ? std::abs(h * h * dd2) / tol : 1e300);
        if (ratio > errNorm) {
          errNorm = ratio;
          worst = k;
        }
      }
    }
    const double expo = order == 2 ? 1.0 / 3.0 : 0.5;
    if (history.count == 1 && slopeKnown) {
      // A first-step error that grows as the step shrinks comes from modes too fast to follow
      // (a junction's capacitance charging through its series resistance in picoseconds) that
      // backward Euler damps at the longer step: go back to the try before and take it.
      if (firstTries > 0 && errNorm > firstErr && firstH > h) {
        h = firstH;
        firstTries = -1;  // take the next try as it comes
        ++stats.rejectedSteps;
        continue;
      }
      if (firstTries < 0) errNorm = std::min(errNorm, 1.0);
      firstH = h;
      firstErr = errNorm;
      if (firstTries >= 0) ++firstTries;
    }
    if (errNorm > 1.0) {
      ++stats.rejectedSteps;
      const double hTried = h;
      // The first step after a restart has only a trial size: let its estimate cut deeper.
      h *= std::clamp(0.9 * std::pow(errNorm, -expo), history.count == 1 ? 1e-3 : 0.1, 0.9);
      // Retry with one backward-Euler step: it damps the stiff modes (junction charges behind
      // small resistances) that the trapezoidal rule would carry on ringing undamped. Its size
      // comes from its own, first-order, error on the same divided differences: sized by the
      // trapezoidal rule's estimate it failed two times in three (Shockley bridge at reltol
      // 1e-7: 2305 rejections before, 863 after).
      if (f == Formula::Trap) {
        restart = true;
        if (order == 2 && eulerNorm > 0.0)
          h = hTried * std::clamp(0.9 / std::sqrt(eulerNorm), 0.01, 0.9);
      }
      if (h < hmin)
        throw TimeStepError(
            fmt::format("time step too small at t = {:.9g} s: the truncation error stays above "
                        "tolerance at {}; loosen reltol or check for a discontinuity the "
                        "circuit cannot follow",
                        t, sys.describe(worst)),
            t, worst >= 0 ? sys.unknownName(worst) : "");
      continue;
    }

    // Accept.
    firstTries = 0;
    for (std::size_t k = 0; k < N; ++k) {
      qdot[k] = c.a0 * qNew[k] + hist[k];
      double xd;
      if (f == Formula::TrBdf2) {
        xd = c.a0 * xNew[k] + c.a1 * xGamma[k] + c.a2 * x[k];
        xScale[k] = std::max(xScale[k], std::abs(xNew[k]));
      } else {
        xd = c.a0 * xNew[k] + c.a1 * x[k] + c.b * xdot[k];
        if (c.a2 != 0.0) xd += c.a2 * xPrev[k];
      }
      xdotNew[k] = xd;
    }
    xPrev3.swap(xPrev2);
    xPrev2.swap(xPrev);
    xPrev.swap(x);
    x.swap(xNew);
    xdot.swap(xdotNew);
    x[static_cast<std::size_t>(n)] = 0.0;
    xdot[static_cast<std::size_t>(n)] = 0.0;
    hPrev = h;
    t = hitsBreak ? tb : t + h;
    history.push(t, qNew);
    std::rotate(xTimes.rbegin(), xTimes.rbegin() + 1, xTimes.rend());
    xTimes[0] = t;
    xPoints = std::min(xPoints + 1, 4);
    ++stats.acceptedSteps;
    ctx.x = x.data();
    ctx.xdot = xdot.data();
    // A row landing on a breakpoint holds the left limit (its time one rounding below tb).
    ctx.time = hitsBreak && t < o.stop ? std::nextafter(tb, 0.0) : t;
    if (t >= o.recordFrom) rec.record(ctx);
    ctx.time = t;
    reportProgress(o, t);
    budget.accepted(t, hPrev, x.data(), rec);
    if (monitor.accepted(ctx)) {
      if (t < o.recordFrom) rec.record(ctx);  // the step that destroyed a body is always kept
      break;
    }

    // errNorm^-expo once per step: the predictive rule below reuses the last accepted one.
    const double errFactor = errNorm > 0.0 ? std::pow(errNorm, -expo) : 0.0;
    double grow = errNorm > 0.0 ? 0.9 * errFactor : 2.0;
    // Gustafsson's predictive controller (E. Hairer and G. Wanner, Solving Ordinary
    // Differential Equations II, section IV.8): when the error grows from step to step, as it
    // does while a junction approaches switching, it slows the growth the plain rule would
    // allow and so avoids the accept-reject alternation that costs a whole Newton solve each
    // time. The smaller of the two factors is taken.
    // Only between steps of the same formula: an error estimate after a backward-Euler restart
    // is of another order and says nothing about the trend.
    // (errAccepted / errNorm)^expo = errFactor / acceptedFactor, both of exponent expo: a step
    // of the same formula after a step of the same order.
    if (errAccepted > 0.0 && errNorm > 0.0 && hAccepted > 0.0 && f != Formula::Euler &&
        acceptedExpo == expo)
      grow = std::min(grow, grow * (hPrev / hAccepted) * (errFactor / acceptedFactor));
    errAccepted = f != Formula::Euler ? errNorm : 0.0;
    acceptedFactor = errFactor;
    acceptedExpo = expo;
    hAccepted = hPrev;
    h *= std::clamp(grow, 0.3, 2.0);
    restart = false;
    if (hitsBreak && t < o.stop) {
      // A corner in the excitation: restart at first order from the breakpoint.
      restart = true;
      errAccepted = 0.0;
      h = std::min(h, std::max(1e-3 * hmax, 100.0 * hmin));
      // The right limit at the breakpoint: what a switched source or switch makes of the
      // unknowns without charge, recorded as a second row at tb when it differs, and the
      // charges' slope there for the first step's error test (else the left slope stands).
      sys.q.swap(history.q[0]);
      const Settled settled = settleAt(t, h);
      if (settled == Settled::Moved && t >= o.recordFrom) rec.record(ctx);
      sys.q.swap(history.q[0]);  // history.q[0]: the charges at the settled state
      history.restartAt(t);
      xPoints = 1;
      slopeKnown = true;
    }
  }
}

}  // namespace disc::detail
