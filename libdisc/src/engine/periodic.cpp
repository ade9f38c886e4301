// Periodic steady state by Newton shooting (T. J. Aprille and T. N. Trick, "Steady-state
// analysis of nonlinear circuits with periodic inputs", Proc. IEEE 60(1), 1972).
//
// The unknown is the start state z0 of the period: the fast unknowns that carry a charge
// (capacitor and junction voltages, inductor currents, trap states). One period is integrated
// from z0 with variable-step BDF2 (backward Euler on its first step, so the period map depends
// on z0 alone), and the residual r = z(T) - z0 is driven to zero by Newton's method with the
// monodromy matrix M = dz(T)/dz0: (M - I) dz = -r. M comes from the step Jacobians and LU
// factors of the integration itself: differentiating step k,
//   i(x_k) + a0 q(x_k) + a1 q(x_{k-1}) + a2 q(x_{k-2}) = 0,
// gives (G_k + a0 C_k) S_k = -(a1 C_{k-1} S_{k-1} + a2 C_{k-2} S_{k-2}) for S_k = dx_k/dz0, one
// solve with step k's factors per column. The slow unknowns are frozen (System::freeze); their
// own sensitivity columns give the settled orbit's response to them, which the slow-state
// envelope needs for its Jacobian.
//
// The step grid of the first passes is chosen by truncation-error control, then held fixed, so
// that the period map is a smooth function of z0 and Newton converges quadratically; a fixed
// grid whose error estimate along the new orbit exceeds the tolerance is chosen afresh.
#include <fmt/format.h>
#include <Eigen/Eigenvalues>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <memory>

#include "disc/devices/sources.hpp"
#include "disc/error.hpp"
#include "failure_monitor.hpp"
#include "operating_point.hpp"
#include "periodic_solver.hpp"
#include "transient_common.hpp"

namespace disc {

void PeriodicOptions::validate() const {
  tol.validate();
  if (!(period >= 0.0) || !std::isfinite(period))
    throw InputError(
        fmt::format("periodic: period must be zero (from the sources) or positive, "
                    "got {} s",
                    period));
  if (!(maxStep >= 0.0) || !std::isfinite(maxStep))
    throw InputError("periodic: maximum step must be zero (automatic) or positive");
  if (warmupPeriods < 0 || warmupPeriods > 10000)
    throw InputError(
        fmt::format("periodic: warm-up periods must be 0 to 10000, got {}", warmupPeriods));
  if (maxIterations < 1 || maxIterations > 1000)
    throw InputError(
        fmt::format("periodic: shooting iterations must be 1 to 1000, got {}", maxIterations));
  if (!std::isfinite(slowTime) || slowTime < 0.0)
    throw InputError("periodic: the slow clock must be a finite time of at least 0 s");
}

double circuitPeriod(const Circuit& circuit) {
  std::vector<std::pair<double, std::string>> freqs;
  for (const auto& d : circuit.devices()) {
    const Waveform* w = nullptr;
    if (const auto* v = dynamic_cast<const VoltageSource*>(d.get())) w = &v->waveform();
    if (const auto* c = dynamic_cast<const CurrentSource*>(d.get())) w = &c->waveform();
    if (w && w->frequency() > 0.0 && w->amplitude() != 0.0)
      freqs.emplace_back(w->frequency(), d->name());
  }
  if (freqs.empty())
    throw InputError(
        "periodic: the circuit has no sine source, so it has no period; give the period "
        "explicitly or run a transient");
  const auto lowest = *std::min_element(freqs.begin(), freqs.end());
  for (const auto& [f, name] : freqs) {
    const double ratio = f / lowest.first;
    if (std::abs(ratio - std::round(ratio)) > 1e-9 * ratio)
      throw InputError(fmt::format(
          "periodic: source '{}' at {} Hz is not a whole multiple of '{}' at {} Hz, so the "
          "circuit has no common period; give the period explicitly",
          name, f, lowest.second, lowest.first));
  }
  return 1.0 / lowest.first;
}

namespace detail {

std::vector<int> slowUnknowns(const System& sys) {
  std::vector<int> s;
  for (int k = 0; k < sys.size(); ++k)
    if (sys.isSlow(k)) s.push_back(k);
  return s;
}

double periodStart(const System& sys, double period) {
  double last = 0.0;
  for (double b : sys.breakpoints(0.0, 50.0 * period)) last = std::max(last, b);
  return std::ceil(last / period * (1.0 - 1e-12)) * period;
}

namespace {

// An orbit a solver can start from: solved, with its grid and a monodromy of its states.
bool haveMonodromyOf(const PeriodicOrbit& o) {
  const auto m = static_cast<Eigen::Index>(o.states.size());
  return o.monodromy.rows() == m && o.monodromy.cols() == m && !o.grid.empty();
}

using RowMatrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

/// out += a * (C S), C given by its slot values on the system's pattern.
void addChargeTimes(const System& sys, const std::vector<double>& C, double a, const RowMatrix& S,
                    RowMatrix& out) {
  if (a == 0.0) return;
  const auto& J = sys.jacobian();
  const int* outer = J.outerIndexPtr();
  const int* inner = J.innerIndexPtr();
  for (int col = 0; col < sys.size(); ++col)
    for (int s = outer[col]; s < outer[col + 1]; ++s) {
      const double c = C[static_cast<std::size_t>(s)];
      if (c != 0.0) out.row(inner[s]) += (a * c) * S.row(col);
    }
}

}  // namespace

PeriodicSolver::PeriodicSolver(System& sys, LinearSolver& ls, const PeriodicOptions& options,
                               double period, double t0, std::vector<int> slow)
    : sys_(sys), ls_(ls), o_(options), period_(period), t0_(t0), slow_(std::move(slow)) {
  abstol_ = sys_.absTolerances(o_.tol);
  ns_ = static_cast<int>(slow_.size());
}

double PeriodicSolver::weightedNorm(const Eigen::VectorXd& d, const std::vector<double>& x) const {
  double w = 0.0;
  for (int j = 0; j < m_; ++j) {
    const auto k = static_cast<std::size_t>(states_[static_cast<std::size_t>(j)]);
    w = std::max(w, std::abs(d[j]) / (o_.tol.reltol * std::abs(x[k]) + abstol_[k]));
  }
  return w;
}

PeriodicSolver::Pass PeriodicSolver::integrate(std::vector<double>& x, bool adaptive,
                                               double slowTime, Recorder* rec, RunStats& stats,
                                               bool sens) {
  const int n = sys_.size();
  const std::size_t N = static_cast<std::size_t>(n) + 1;
  const double hmax = o_.maxStep > 0.0 ? std::min(o_.maxStep, period_) : period_ / 100.0;
  const double hmin = period_ * 1e-12;
  std::vector<double> breaks = sys_.breakpoints(t0_, t0_ + period_);
  breaks.erase(std::remove_if(breaks.begin(), breaks.end(),
                              [&](double b) { return b >= t0_ + period_ * (1.0 - 1e-12); }),
               breaks.end());
  breaks.push_back(t0_ + period_);

  NewtonSettings ns;
  ns.maxIterations = 12;
  ns.reltol = o_.tol.reltol;
  ns.abstol = &abstol_;
  ns.vabstol = o_.tol.voltage;
  ns.reuseJacobian = true;
  ns.reuseAcrossSolves = true;
  ns.stopOnDivergence = true;
  ns.predictConvergence = true;
  // An exact first step whose second-order remainder is within tolerance ends the solve, as in
  // the transient: from the last pass's path (below) most steps need no second iteration.
  ns.acceptQuadratic = true;
  // A pass with sensitivities evaluates the accepted point in full anyway.
  ns.finalChargesOnly = sens;
  ns.workspace = &work_;

  EvalContext ctx;
  std::vector<double> xdot(N, 0.0);
  ctx.x = x.data();
  ctx.xdot = xdot.data();
  ctx.time = t0_;
  ctx.slowTime = slowTime;
  sys_.evaluate(ctx, true);
  ++stats.evaluations;
  if (rec) rec->record(ctx);

  // The shooting variables: fast unknowns whose column of C has an entry at the start state
  // (the others are algebraic: their start values do not enter the period map).
  if (!statesKnown_) {
    std::vector<char> charged(N, 0);
    const auto& J = sys_.jacobian();
    for (int col = 0; col < n; ++col)
      for (int s = J.outerIndexPtr()[col]; s < J.outerIndexPtr()[col + 1]; ++s)
        if (sys_.C[static_cast<std::size_t>(s)] != 0.0) charged[static_cast<std::size_t>(col)] = 1;
    for (int k = 0; k < n; ++k)
      if (charged[static_cast<std::size_t>(k)] && !sys_.isSlow(k)) states_.push_back(k);
    // With none, every period is the same from any start (a resistive circuit, whose slow
    // states alone carry history): shooting has nothing to solve for.
    m_ = static_cast<int>(states_.size());
    statesKnown_ = true;
  }
  const int cols = m_ + ns_;
  RowMatrix S = RowMatrix::Zero(n, cols), Sp, Sp2, rhs(n, cols);
  for (int j = 0; j < m_; ++j) S(states_[static_cast<std::size_t>(j)], j) = 1.0;
  for (int c = 0; c < ns_; ++c) S(slow_[static_cast<std::size_t>(c)], m_ + c) = 1.0;
  std::vector<double> C0 = sys_.C, Cp, Cp2;
  std::vector<double> q0 = sys_.q, qp, qp2;  // charges at the last three accepted points
  std::vector<double> t3 = {0.0, 0.0, 0.0};  // their local times, newest first

  // Period averages (trapezoidal rule over the accepted points).
  std::vector<double> iPrev = sys_.frozenCurrents();
  Eigen::MatrixXd rowPrev = Eigen::MatrixXd::Zero(ns_, cols);
  auto rowSens = [&](Eigen::MatrixXd& out) {
    out.setZero();
    for (const auto& e : sys_.frozenEntries())
      if (e.g != 0.0) out.row(e.row) += e.g * S.row(e.col);
  };
  avgCurrent_.assign(static_cast<std::size_t>(ns_), 0.0);
  if (sens) {
    avgRowSens_ = Eigen::MatrixXd::Zero(ns_, cols);
    rowSens(rowPrev);
  }
  {
    capacity_.assign(static_cast<std::size_t>(ns_), 0.0);
    for (const auto& e : sys_.frozenEntries())
      if (e.col == slow_[static_cast<std::size_t>(e.row)])
        capacity_[static_cast<std::size_t>(e.row)] = e.c;
  }
  Eigen::MatrixXd rowNow(ns_, cols);

  std::vector<double> xNew(N), hist(N), xPrev = x;
  // The accepted points of the last pass on this grid, when there is one: on a fixed grid each
  // step's first iterate is that pass's point there plus the present deviation from it,
  // extrapolated linearly (near a switching the last orbit knows where the junction turns,
  // which extrapolating this pass's own points does not).
  const bool follow = !adaptive && path_.size() == (grid_.size() + 1) * N;
  std::vector<double> newPath, newTimes;
  newPath.reserve(follow ? path_.size() : N);
  newTimes.reserve(follow ? pathTime_.size() : 1);
  newPath.insert(newPath.end(), x.begin(), x.end());
  newTimes.push_back(0.0);
  double t = 0.0, hPrev = 0.0;
  double h = adaptive ? std::min(hmax, period_ * 1e-4) : 0.0;
  std::size_t gridAt = 0, nextBreak = 0;
  std::vector<double> newGrid;
  int points = 1;  // accepted points since the start (1: only the start)
  Pass pass;
  while (t < period_ * (1.0 - 1e-13)) {
    const double tb = breaks[nextBreak] - t0_;
    bool hitsBreak = false;
    if (adaptive) {
      h = std::min(h, hmax);
      if (t + 1.1 * h >= tb) {
        h = tb - t;
        hitsBreak = true;
      }
    } else {
      if (gridAt >= grid_.size()) return pass;  // the grid ran out: choose afresh
      h = grid_[gridAt];
      if (t + h >= tb * (1.0 - 1e-13)) {
        h = tb - t;
        hitsBreak = true;
      }
    }
    const bool euler = points < 2;
    double a0, a1, a2 = 0.0;
    if (euler) {
      a0 = 1.0 / h;
      a1 = -1.0 / h;
    } else {
      const double w = h / hPrev;
      a0 = (1.0 + 2.0 * w) / (h * (1.0 + w));
      a1 = -(1.0 + w) / h;
      a2 = w * w / (h * (1.0 + w));
    }
    for (std::size_t k = 0; k < N; ++k) hist[k] = a1 * q0[k] + (euler ? 0.0 : a2 * qp[k]);
    xNew = x;
    if (follow) {
      const double* at = path_.data() + (gridAt + 1) * N;  // the last pass's point here
      const double* before = at - N;
      const double* before2 = points >= 2 ? at - 2 * N : nullptr;
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        const double d = x[uk] - before[uk];
        const double slope = before2 ? (d - (xPrev[uk] - before2[uk])) * (h / hPrev) : 0.0;
        xNew[uk] = at[uk] + d + slope;
      }
    } else if (points >= 2) {  // linear extrapolation of the last two points as the first iterate
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        xNew[uk] = x[uk] + (x[uk] - xPrev[uk]) * (h / hPrev);
      }
    }
    ctx.time = t0_ + t + h;
    ctx.x = xNew.data();
    const NewtonOutcome out = solveNewton(sys_, ls_, xNew, ctx, a0, hist.data(), ns, stats);
    // Fresh factors while first updates are small enough for the second-order test (an exact
    // first step then ends the solve), kept factors otherwise (as the transient does).
    ns.reuseAcrossSolves = !(out.converged && out.firstUpdateQuadratic);
    if (!out.converged) {
      ++stats.rejectedSteps;
      if (!adaptive) return pass;
      h /= 8.0;
      if (h < hmin)
        throw TimeStepError(
            fmt::format("periodic: time step too small at t = {:.9g} s of the period: Newton did "
                        "not converge; the worst equation is {} (residual {:.3g})",
                        t, sys_.describe(out.worstRow), out.worstResidual),
            t0_ + t, out.worstRow >= 0 ? sys_.unknownName(out.worstRow) : "");
      continue;
    }
    // The accepted point's own Jacobian and factors, for the sensitivities (without them,
    // Newton's last evaluation at the converged iterate serves: its charges and currents).
    ctx.x = xNew.data();
    if (sens) {
      sys_.evaluate(ctx, true);
      ++stats.evaluations;
    }

    // Truncation error on the charges (as the transient's BDF2: (2/9) h^3 q''' from divided
    // differences), once three earlier points exist.
    double err = 0.0;
    int worst = -1;
    if (points >= 3) {
      const double ta = t + h, tb1 = t3[0], tc = t3[1], td = t3[2];
      for (int k = 0; k < n; ++k) {
        const auto uk = static_cast<std::size_t>(k);
        const double d01 = (sys_.q[uk] - q0[uk]) / (ta - tb1), d12 = (q0[uk] - qp[uk]) / (tb1 - tc),
                     d23 = (qp[uk] - qp2[uk]) / (tc - td);
        const double dd = ((d01 - d12) / (ta - tc) - (d12 - d23) / (tb1 - td)) / (ta - td);
        const double e = std::abs((4.0 / 3.0) * h * h * h * dd);
        if (e == 0.0) continue;
        const double ckk = std::abs(sys_.C[static_cast<std::size_t>(sys_.diagonalSlot(k))]);
        const double scale = std::max({std::abs(sys_.q[uk]), std::abs(q0[uk]), std::abs(qp[uk])});
        const double tol = o_.tol.reltol * scale + abstol_[uk] * ckk;
        const double ratio = tol > 0.0 ? e / tol : 1e300;
        if (ratio > err) {
          err = ratio;
          worst = k;
        }
      }
    }
    if (adaptive && err > 1.0) {
      ++stats.rejectedSteps;
      h *= std::clamp(0.9 * std::pow(err, -1.0 / 3.0), 0.1, 0.9);
      if (h < hmin)
        throw TimeStepError(
            fmt::format("periodic: time step too small at t = {:.9g} s of the period: the "
                        "truncation error stays above tolerance at {}",
                        t, sys_.describe(worst)),
            t0_ + t, worst >= 0 ? sys_.unknownName(worst) : "");
      continue;
    }
    pass.worstError = std::max(pass.worstError, err);
    if (sens) {
      ls_.factor(sys_, a0, 0.0);
      ls_.setFactoredA0(a0);
      ++stats.factorizations;
      // Sensitivities: (G + a0 C) S_k = -(a1 C_{k-1} S_{k-1} + a2 C_{k-2} S_{k-2}); a frozen
      // row reads x_k - s_k = 0, so its column of the slow sensitivity is the unit vector.
      rhs.setZero();
      addChargeTimes(sys_, C0, -a1, S, rhs);
      if (!euler) addChargeTimes(sys_, Cp, -a2, Sp, rhs);
      for (int c = 0; c < ns_; ++c) rhs(slow_[static_cast<std::size_t>(c)], m_ + c) = 1.0;
      ls_.solveRows(rhs.data(), n, cols);
      Sp2.swap(Sp);
      Sp.swap(S);
      S.swap(rhs);
      if (rhs.rows() != n) rhs.resize(n, cols);
      Cp2.swap(Cp);
      Cp.swap(C0);
      C0 = sys_.C;
    }
    qp2.swap(qp);
    qp.swap(q0);
    q0 = sys_.q;
    t3 = {t + h, t3[0], t3[1]};

    {
      const double wgt = 0.5 * h / period_;
      const auto& iNow = sys_.frozenCurrents();
      for (int r = 0; r < ns_; ++r)
        avgCurrent_[static_cast<std::size_t>(r)] +=
            wgt * (iPrev[static_cast<std::size_t>(r)] + iNow[static_cast<std::size_t>(r)]);
      iPrev = iNow;
      if (sens) {
        rowSens(rowNow);
        avgRowSens_ += wgt * (rowPrev + rowNow);
        rowPrev = rowNow;
      }
    }
    // Accept.
    xPrev.swap(x);
    x.swap(xNew);
    x[static_cast<std::size_t>(n)] = 0.0;
    hPrev = h;
    t = hitsBreak ? tb : t + h;
    if (hitsBreak) ++nextBreak;
    ++points;
    ++stats.acceptedSteps;
    if (adaptive) newGrid.push_back(h);
    newPath.insert(newPath.end(), x.begin(), x.end());
    newTimes.push_back(t);
    ++gridAt;
    ctx.x = x.data();
    ctx.time = t0_ + t;
    if (rec) rec->record(ctx);
    if (adaptive) {
      const double grow = err > 0.0 ? 0.9 * std::pow(err, -1.0 / 3.0) : 2.0;
      h *= std::clamp(grow, 0.3, 2.0);
    }
  }
  if (adaptive) grid_ = std::move(newGrid);
  path_ = std::move(newPath);
  pathTime_ = std::move(newTimes);
  pathSlowTime_ = slowTime;
  if (sens) S_ = std::move(S);
  pass.ok = true;
  return pass;
}

void PeriodicSolver::solve(std::vector<double>& x, double slowTime, Recorder* rec,
                           PeriodSolution& out, RunStats& stats, bool needJacobian) {
  const int n = sys_.size();
  PeriodicStats& ps = out.stats;
  ps = {};
  out.hasJacobian = false;
  // Fixed-grid passes converge quadratically; an adaptive pass first (and again whenever the
  // grid no longer meets the tolerance along the present orbit). A pass without sensitivities
  // takes the monodromy of the last one with them (a chord step, contracting at about the
  // change of M since): warm starts need no new sensitivities until a step fails to contract.
  bool adaptive = grid_.empty();
  // A Jacobian needs a pass with sensitivities at the settled orbit anyway: from a warm start
  // (the prediction is usually within tolerance) that pass comes first, not after a chord pass.
  bool chord = haveMonodromy_ && !needJacobian;
  double lastNorm = HUGE_VAL;
  int worstState = -1;
  bool lastFixed = false;  // the last pass ran on the present fixed grid
  for (int it = 0; it < o_.maxIterations; ++it) {
    const std::vector<double> z0 = x;
    const bool sens = !chord;
    const bool sameGrid = !adaptive && lastFixed;
    // Passes are not recorded as they run: the settled one is recorded from its kept path.
    const Pass pass = integrate(x, adaptive, slowTime, nullptr, stats, sens);
    ++ps.periodIntegrations;
    // A fixed grid whose error estimate along this orbit exceeds the tolerance is stale. From
    // another circuit's orbit (no Jacobian needed) its pass still gives the chord update, as
    // the first pass from that orbit's grid usually is stale; otherwise it is redone.
    const bool stale = !adaptive && pass.worstError > (needJacobian ? 2.0 : 4.0);
    if (!pass.ok || (stale && needJacobian)) {
      // The fixed grid failed this orbit, or no longer meets the tolerance along it: choose
      // it afresh from the same start.
      x = z0;
      adaptive = true;
      continue;
    }
    Eigen::VectorXd r(m_);
    for (int j = 0; j < m_; ++j) {
      const auto kj = static_cast<std::size_t>(states_[static_cast<std::size_t>(j)]);
      r[j] = x[kj] - z0[kj];
    }
    if (sens) {
      monodromy_.resize(m_, m_);
      for (int j = 0; j < m_; ++j)
        for (int c = 0; c < m_; ++c) monodromy_(j, c) = S_(states_[static_cast<std::size_t>(j)], c);
      if (m_ > 0) {
        shootingLu_.compute(monodromy_ - Eigen::MatrixXd::Identity(m_, m_));
        if (!(shootingLu_.rcond() > 1e-14)) throwNeutralMode();
      }
      haveMonodromy_ = true;
    }
    const Eigen::VectorXd delta =
        m_ > 0 ? Eigen::VectorXd(shootingLu_.solve(-r)) : Eigen::VectorXd(0);
    const double norm = weightedNorm(delta, x);
    ps.iterations = it + 1;
    ps.residual = norm;
    if (m_ > 0) {
      Eigen::Index j = 0;
      delta.cwiseAbs().maxCoeff(&j);
      worstState = states_[static_cast<std::size_t>(j)];
    }
    if (norm <= 1.0 && !stale && (sens || !needJacobian)) {
      // z0 was settled to the tolerance: this pass is the period. Its averages and (with
      // sensitivities) the orbit's response to the slow values are kept.
      x = z0;
      finish(out, sens);
      ps.stepsPerPeriod = static_cast<int>(grid_.size());
      if (rec) {
        rec->clear();
        replayPath(*rec);
      }
      solved_ = true;
      return;
    }
    // A chord step that contracts poorly, or a settled chord pass that must yield a
    // Jacobian, is followed by a pass with sensitivities. Without the need for a Jacobian
    // (a start from another circuit's orbit), the contraction is judged only between passes
    // on the same fixed grid: a new grid moves the period map by about its truncation error,
    // which a slowly decaying mode (a multiplier near 1) magnifies in the update.
    if (chord && needJacobian && (norm <= 1.0 || norm > 0.25 * lastNorm)) chord = false;
    if (chord && !needJacobian && sameGrid && norm > 0.7 * lastNorm) chord = false;
    // The update of every unknown follows from the sensitivity (algebraic ones too) on passes
    // that have it; a chord pass moves the shooting variables and lets the rest follow.
    double damp = 1.0;
    if (it >= 2 && norm > 4.0 * lastNorm) damp = 0.5;  // outside Newton's reach: half a step
    if (norm > 1.0 || stale || !needJacobian) {
      // Newton's new start z0 + delta; the algebraic unknowns start from their prediction.
      if (sens) {
        const Eigen::VectorXd full = S_.leftCols(m_) * delta;
        for (int k = 0; k < n; ++k) x[static_cast<std::size_t>(k)] += damp * full[k];
      }
      for (int j = 0; j < m_; ++j) {
        const auto kj = static_cast<std::size_t>(states_[static_cast<std::size_t>(j)]);
        x[kj] = z0[kj] + damp * delta[j];
      }
      for (int k : slow_) x[static_cast<std::size_t>(k)] = z0[static_cast<std::size_t>(k)];
    } else {
      x = z0;  // settled, but a pass with sensitivities must follow from the same start
    }
    lastNorm = norm;
    lastFixed = !adaptive && !stale;
    if (stale)
      adaptive = true;
    else if (adaptive && norm < 100.0)
      adaptive = false;
  }
  throw ConvergenceError(
      fmt::format(
          "periodic: shooting did not converge in {} iterations: the last update was {:.3g} "
          "tolerances, largest at {}. The circuit may not settle to a periodic state at "
          "its present slow state (a subharmonic or unstable response, a slow state "
          "running away), or it needs a longer warm-up",
          o_.maxIterations, ps.residual, sys_.describe(worstState)),
      worstState >= 0 ? sys_.unknownName(worstState) : "", ps.residual);
}

void PeriodicSolver::finish(PeriodSolution& out, bool sens) {
  out.slowCurrent = avgCurrent_;
  out.slowCapacity = capacity_;
  // A chord pass settles on the monodromy of an earlier pass: its multipliers still describe
  // the orbit to within the chord's contraction.
  out.stats.largestMultiplier = multiplier_;
  if (!sens) return;
  Eigen::MatrixXd P(m_, ns_);
  for (int j = 0; j < m_; ++j)
    for (int c = 0; c < ns_; ++c) P(j, c) = S_(states_[static_cast<std::size_t>(j)], m_ + c);
  dzds_ =
      ns_ > 0 && m_ > 0 ? Eigen::MatrixXd(shootingLu_.solve(-P)) : Eigen::MatrixXd::Zero(m_, ns_);
  out.slowJacobian = avgRowSens_.rightCols(ns_) + avgRowSens_.leftCols(m_) * dzds_;
  out.hasJacobian = true;
  if (m_ > 0 && m_ <= 400) {
    Eigen::EigenSolver<Eigen::MatrixXd> es(monodromy_, false);
    double big = 0.0;
    for (int j = 0; j < m_; ++j) big = std::max(big, std::abs(es.eigenvalues()[j]));
    multiplier_ = big;
    out.stats.largestMultiplier = big;
  }
}

void PeriodicSolver::throwNeutralMode() const {
  Eigen::EigenSolver<Eigen::MatrixXd> es(monodromy_);
  int at = 0;
  double best = -1.0;
  for (int j = 0; j < m_; ++j)
    if (std::abs(es.eigenvalues()[j]) > best) {
      best = std::abs(es.eigenvalues()[j]);
      at = j;
    }
  Eigen::Index row = 0;
  es.eigenvectors().col(at).cwiseAbs().maxCoeff(&row);
  const int k = states_[static_cast<std::size_t>(row)];
  throw ConvergenceError(
      fmt::format("periodic: a mode of the circuit neither grows nor decays over a period "
                  "(Floquet multiplier {:.6f}), so it has no unique periodic state; it lies "
                  "mostly in {}. Give it a resistive path (a capacitor with no DC path, a "
                  "lossless inductor loop) or run a transient",
                  best, sys_.describe(k)),
      sys_.unknownName(k), best);
}

void PeriodicSolver::recordPeriod(const std::vector<double>& x, double slowTime, Recorder& rec,
                                  RunStats& stats) {
  // The settled pass from x, when it is the last one kept, is the period: its points are
  // recorded as they were found (the probes read only the unknowns and the clocks).
  const std::size_t N = static_cast<std::size_t>(sys_.size()) + 1;
  if (slowTime == pathSlowTime_ && !pathTime_.empty() && path_.size() == pathTime_.size() * N &&
      x.size() == N && std::equal(x.begin(), x.end(), path_.begin())) {
    replayPath(rec);
    return;
  }
  std::vector<double> xr = x;
  if (!integrate(xr, false, slowTime, &rec, stats, false).ok)
    throw ConvergenceError(
        "periodic: the settled period could not be integrated again on its "
        "own step grid",
        "", 0.0);
}

void PeriodicSolver::replayPath(Recorder& rec) const {
  const std::size_t N = static_cast<std::size_t>(sys_.size()) + 1;
  std::vector<double> xdot(N, 0.0);  // as in integrate(): the probes see no derivatives
  EvalContext ctx;
  ctx.xdot = xdot.data();
  ctx.slowTime = pathSlowTime_;
  for (std::size_t k = 0; k < pathTime_.size(); ++k) {
    ctx.x = path_.data() + k * N;
    ctx.time = t0_ + pathTime_[k];
    rec.record(ctx);
  }
}

std::shared_ptr<const PeriodicOrbit> PeriodicSolver::orbit(const std::vector<double>& x) const {
  auto o = std::make_shared<PeriodicOrbit>();
  o->unknowns = sys_.size();
  o->period = period_;
  o->startTime = t0_;
  o->x = x;
  o->grid = grid_;
  o->path = path_;
  o->states = states_;
  o->monodromy = monodromy_;
  o->shootingLu = shootingLu_;
  o->multiplier = multiplier_;
  return o;
}

bool PeriodicSolver::adopt(const PeriodicOrbit& o) {
  if (o.unknowns != sys_.size() || !haveMonodromyOf(o) ||
      std::abs(o.period - period_) > 1e-12 * period_)
    return false;
  grid_ = o.grid;
  path_ = o.path.size() == (o.grid.size() + 1) * (static_cast<std::size_t>(o.unknowns) + 1)
              ? o.path
              : std::vector<double>{};
  states_ = o.states;
  m_ = static_cast<int>(states_.size());
  statesKnown_ = true;
  monodromy_ = o.monodromy;
  shootingLu_ = o.shootingLu;
  multiplier_ = o.multiplier;
  haveMonodromy_ = true;
  return true;
}

void PeriodicSolver::predict(std::vector<double>& x, const std::vector<double>& ds) const {
  for (int c = 0; c < ns_; ++c)
    x[static_cast<std::size_t>(slow_[static_cast<std::size_t>(c)])] +=
        ds[static_cast<std::size_t>(c)];
  if (!solved_ || dzds_.cols() != ns_ || ns_ == 0) return;
  Eigen::VectorXd d = Eigen::Map<const Eigen::VectorXd>(ds.data(), ns_);
  Eigen::VectorXd dz = dzds_ * d;
  for (int j = 0; j < m_; ++j)
    x[static_cast<std::size_t>(states_[static_cast<std::size_t>(j)])] += dz[j];
}

}  // namespace detail

namespace detail {

double warmStart(System& sys, LinearSolver& ls, const PeriodicOptions& o, double period,
                 std::vector<double>& x, const std::vector<int>& slow, RunStats& stats) {
  const double start = periodStart(sys, period) + o.warmupPeriods * period;
  x.assign(static_cast<std::size_t>(sys.size()) + 1, 0.0);
  sys.initialState(x);
  sys.freeze(slow, x);
  if (o.start == Start::OperatingPoint) {
    OperatingPointOptions op;
    op.tol = o.tol;
    solveOperatingPoint(sys, ls, x, op, stats);
  }
  if (start > 0.0) {
    // A short transient up to the period's start (its recorder keeps one point).
    TransientOptions to;
    to.stop = start;
    to.tol = o.tol;
    to.maxStep = o.maxStep > 0.0 ? o.maxStep : period / 50.0;
    to.recordFrom = to.stop;
    Result scratch;
    Recorder warm(sys, {}, scratch);
    FailureMonitor monitor(sys);  // the slow states are frozen: nothing heats here
    integrateStepping(sys, ls, to, x, warm, stats, monitor);
  }
  return start;
}

}  // namespace detail

PeriodicResult periodicSteadyState(const Circuit& circuit, const PeriodicOptions& options) {
  options.validate();
  const auto started = std::chrono::steady_clock::now();
  detail::System sys(circuit);
  detail::LinearSolver ls;
  PeriodicResult pr;
  pr.period = options.period > 0.0 ? options.period : circuitPeriod(circuit);
  RunStats& stats = pr.waveforms.stats();
  stats.method = "periodic";
  stats.unknowns = sys.size();
  std::vector<double> x;
  const std::vector<int> slow = detail::slowUnknowns(sys);
  const PeriodicOrbit* from = options.from.get();
  std::unique_ptr<detail::PeriodicSolver> solver;
  if (from && from->unknowns == sys.size()) {
    // The orbit's settled fast unknowns, this circuit's own slow ones (its initial state).
    x.assign(static_cast<std::size_t>(sys.size()) + 1, 0.0);
    sys.initialState(x);
    for (int k = 0; k < sys.size(); ++k)
      if (!sys.isSlow(k)) x[static_cast<std::size_t>(k)] = from->x[static_cast<std::size_t>(k)];
    sys.freeze(slow, x);
    solver = std::make_unique<detail::PeriodicSolver>(sys, ls, options, pr.period, from->startTime,
                                                      slow);
    if (solver->adopt(*from))
      pr.startTime = from->startTime;
    else
      solver.reset();
  }
  pr.stats.fromOrbit = solver != nullptr;
  if (!solver) {
    pr.startTime = detail::warmStart(sys, ls, options, pr.period, x, slow, stats);
    solver =
        std::make_unique<detail::PeriodicSolver>(sys, ls, options, pr.period, pr.startTime, slow);
  }
  detail::Recorder rec(sys, options.record, pr.waveforms);
  detail::PeriodSolution sol;
  // From an orbit, chord steps on its monodromy settle the period; no new sensitivities are
  // needed unless they stop contracting.
  solver->solve(x, options.slowTime, &rec, sol, stats, !pr.stats.fromOrbit);
  const bool fromOrbit = pr.stats.fromOrbit;
  pr.stats = sol.stats;
  pr.stats.fromOrbit = fromOrbit;
  pr.stats.warmupPeriods = fromOrbit ? 0 : options.warmupPeriods;
  pr.orbit = solver->orbit(x);
  for (double& t : pr.waveforms.timeColumn()) t -= pr.startTime;
  stats.wallSeconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return pr;
}

}  // namespace disc
