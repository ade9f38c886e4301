// The slow-state envelope: a two-time-scale method. The electrical state is periodic at the
// mains period for fixed slow states; the slow states (temperatures, forming, warm-up) move by
// the period averages of their own equations. For a slow unknown s_k with charge q_k(s_k)
// (heat capacity times temperature, for instance) the device equation i_k + dq_k/dt = 0
// averaged over one settled period gives
//   ds_k/dt = -<i_k>(s) / (dq_k/ds_k),
// where <i_k>(s) comes from the periodic steady state at s. Its Jacobian comes from the
// shooting's own sensitivities (PeriodSolution::slowJacobian), so the stiff rosenbrock4 of
// Boost.Odeint takes steps set by the slow motion alone.
#include "disc/envelope.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <optional>

#include "disc/device.hpp"
#include "disc/error.hpp"
#include "periodic_solver.hpp"
#include "slow_ode.hpp"

namespace disc {

void EnvelopeOptions::validate() const {
  periodic.validate();
  if (!(duration > 0.0) || !std::isfinite(duration))
    throw InputError(fmt::format("warm-up: duration must be positive, got {} s", duration));
  if (duration > 1e8)
    throw InputError(
        fmt::format("warm-up: duration {:.3g} s is beyond 3 years; give at most 1e8 s", duration));
  if (!(reltol > 0.0 && reltol < 0.1))
    throw InputError("warm-up: reltol must lie between 0 and 0.1");
  if (!(temperatureTol > 0.0 && temperatureTol <= 10.0))
    throw InputError("warm-up: the temperature tolerance must lie above 0 and at most 10 K");
  if (!(stateTol > 0.0 && stateTol <= 0.1))
    throw InputError("warm-up: the state tolerance must lie above 0 and at most 0.1");
  if (!(maxStep >= 0.0) || !std::isfinite(maxStep))
    throw InputError("warm-up: maximum step must be zero (automatic) or positive");
}

namespace {

/// Appends one row of period reductions (mean, min, max per signal) to the series.
void appendRow(Result& series, double t, const Result& period, bool first) {
  const auto& time = period.time();
  const auto& names = period.signals();
  if (first) {
    for (const auto& s : names) series.addSignal(s, period.unit(s));
    for (const auto& s : names) series.addSignal("min(" + s + ")", period.unit(s));
    for (const auto& s : names) series.addSignal("max(" + s + ")", period.unit(s));
  }
  series.timeColumn().push_back(t);
  const std::size_t m = names.size();
  const double span = time.back() - time.front();
  for (std::size_t k = 0; k < m; ++k) {
    const auto& v = period[names[k]];
    double area = 0.0, lo = v.front(), hi = v.front();
    for (std::size_t j = 1; j < time.size(); ++j) {
      area += 0.5 * (v[j] + v[j - 1]) * (time[j] - time[j - 1]);
      lo = std::min(lo, v[j]);
      hi = std::max(hi, v[j]);
    }
    series.column(k).push_back(span > 0.0 ? area / span : v.front());
    series.column(m + k).push_back(lo);
    series.column(2 * m + k).push_back(hi);
  }
}

}  // namespace

bool EnvelopeResult::failed() const {
  return std::any_of(failures.begin(), failures.end(),
                     [](const FailureEvent& e) { return e.kind == ThermalCondition::Destroyed; });
}

EnvelopeResult warmUp(const Circuit& circuit, const EnvelopeOptions& options) {
  options.validate();
  const auto started = std::chrono::steady_clock::now();
  detail::System sys(circuit);
  detail::LinearSolver ls;
  EnvelopeResult er;
  EnvelopeStats& es = er.stats;
  RunStats& stats = er.last.waveforms.stats();
  stats.method = "warm-up";
  stats.unknowns = sys.size();
  const PeriodicOptions& po = options.periodic;
  const double period = po.period > 0.0 ? po.period : circuitPeriod(circuit);
  const std::vector<int> slow = detail::slowUnknowns(sys);
  if (slow.empty())
    throw InputError(
        "warm-up: the circuit has no slow states (no plate stack, self-heated diode or warming "
        "load), so nothing changes over minutes; run periodic for its settled period");
  std::vector<double> x;
  const double t0 = detail::warmStart(sys, ls, po, period, x, slow, stats);
  detail::PeriodicSolver solver(sys, ls, po, period, t0, slow);
  const std::size_t ns = slow.size();

  std::vector<double> scale(ns);  // each slow state in units of its absolute tolerance
  for (std::size_t c = 0; c < ns; ++c)
    scale[c] =
        sys.kind(slow[c]) == UnknownKind::Temperature ? options.temperatureTol : options.stateTol;
  std::vector<std::string> record = options.record;
  if (record.empty())
    for (int k : slow) record.push_back("x:" + sys.unknownName(k));

  // The periodic steady state at slow values y (scaled), warm-started from the last one.
  detail::PeriodSolution sol;
  double solvedTime = -1.0;
  std::vector<double> solvedY;
  // With `rec`, the settled period is recorded into it; false when nothing was solved (the
  // last solve is still the one asked for, so the caller records it).
  // The periodic steady state of `on` at slow values y, predicted from its last one in xs.
  auto solveAt = [&](detail::PeriodicSolver& on, std::vector<double>& xs, double t,
                     const std::vector<double>& y, bool jacobian, detail::Recorder* rec,
                     detail::PeriodSolution& out) {
    std::vector<double> ds(ns);
    for (std::size_t c = 0; c < ns; ++c)
      ds[c] = y[c] * scale[c] - xs[static_cast<std::size_t>(slow[c])];
    on.predict(xs, ds);
    sys.setFrozenValues(xs);
    try {
      on.solve(xs, t, rec, out, stats, jacobian);
    } catch (const ConvergenceError& e) {
      throw ConvergenceError(fmt::format("warm-up at t = {:.6g} s: {}", t, e.what()),
                             e.worstEquation(), e.residual());
    }
    ++es.periodicSolves;
    es.shootingIterations += out.stats.iterations;
    es.periodIntegrations += out.stats.periodIntegrations;
  };
  auto settle = [&](double t, const std::vector<double>& y, bool jacobian,
                    detail::Recorder* rec = nullptr) {
    if (t == solvedTime && y == solvedY && (sol.hasJacobian || !jacobian)) return false;
    solveAt(solver, x, t, y, jacobian, rec, sol);
    solvedTime = t;
    solvedY = y;
    return true;
  };
  detail::SlowOdeSystem ode;
  ode.evaluate = [&](double t, const std::vector<double>& y, std::vector<double>& dydt,
                     std::vector<double>* jac) {
    settle(t, y, jac != nullptr);
    dydt.resize(ns);
    for (std::size_t r = 0; r < ns; ++r) {
      const double cap = sol.slowCapacity[r];
      if (!(cap > 0.0))
        throw InputError(fmt::format(
            "warm-up: slow unknown '{}' stores nothing (dq/dx = {}), so it has no rate; a "
            "device model error",
            sys.unknownName(slow[r]), cap));
      dydt[r] = -sol.slowCurrent[r] / cap / scale[r];
    }
    if (jac) {
      jac->assign(ns * ns, 0.0);
      for (std::size_t r = 0; r < ns; ++r)
        for (std::size_t c = 0; c < ns; ++c)
          (*jac)[r * ns + c] =
              -sol.slowJacobian(static_cast<Eigen::Index>(r), static_cast<Eigen::Index>(c)) /
              sol.slowCapacity[r] * scale[c] / scale[r];
    }
  };

  // Plates and other heated bodies whose temperature is a slow state: destruction is located
  // between slow steps, runaway judged on the period-averaged heat balance.
  struct BodyWatch {
    HeatedBody body;
    std::size_t slowIndex = 0;
    std::vector<std::size_t> sameDevice;  // slow indices of the device's temperatures
    std::ptrdiff_t sinkIndex = -1;        // slow index of the heat node it loses heat to
    bool runaway = false;
  };
  std::vector<BodyWatch> bodies;
  {
    std::vector<HeatedBody> found;
    for (const Device* d : sys.devices()) {
      found.clear();
      d->heatedBodies(found);
      std::vector<std::size_t> temps;
      const std::size_t firstBody = bodies.size();
      for (HeatedBody& b : found) {
        const auto it = std::find(slow.begin(), slow.end(), b.unknown);
        if (it == slow.end()) continue;  // a temperature held by the device, not a slow state
        BodyWatch w;
        w.slowIndex = static_cast<std::size_t>(it - slow.begin());
        if (b.sink >= 0) {
          const auto sk = std::find(slow.begin(), slow.end(), b.sink);
          if (sk != slow.end()) w.sinkIndex = sk - slow.begin();
        }
        w.body = std::move(b);
        temps.push_back(w.slowIndex);
        bodies.push_back(std::move(w));
      }
      for (std::size_t k = firstBody; k < bodies.size(); ++k) bodies[k].sameDevice = temps;
    }
  }
  auto temperatureOf = [&](const BodyWatch& w, const std::vector<double>& yy) {
    return w.body.ambient + yy[w.slowIndex] * scale[w.slowIndex];
  };

  // The settled period handed to a caller's onPeriod, marked as one settled period so that
  // a supply report made from it needs no settling check and shows no switch-on.
  auto settledPeriod = [&](detail::PeriodicSolver& from, const std::vector<double>& xs, double t) {
    Result own;
    {
      detail::Recorder rec(sys, po.record, own);
      from.recordPeriod(xs, t, rec, stats);
    }
    for (double& tp : own.timeColumn()) tp -= t0;
    own.stats().method = "periodic";
    return own;
  };

  // Each accepted slow step: the settled period recorded, reduced into the series.
  bool first = true;
  double tPrev = 0.0;
  std::vector<double> yPrev;
  auto recordRow = [&](double t, const std::vector<double>& yy) {
    Result period;
    {
      // The next slow step starts with the Jacobian here: the one pass with sensitivities
      // gives it, the averages and the recorded period together.
      detail::Recorder rec(sys, record, period);
      if (!settle(t, yy, t < options.duration * (1.0 - 1e-12), &rec))
        solver.recordPeriod(x, t, rec, stats);
    }
    for (double& tp : period.timeColumn()) tp -= t0;
    appendRow(er.series, t, period, first);
    first = false;
    er.endTime = t;
  };
  std::vector<double> fPrev;  // the slow rates at the last row (scaled)
  // Along the slow step from the last row, the quadratic through that row's state and rate and
  // the new state: a crossing is located on it with no periodic steady state at the new state
  // (past destruction there may be none).
  auto alongStep = [&](double theta, double t, const std::vector<double>& yy, std::size_t c) {
    const double d0 = fPrev.empty() ? yy[c] - yPrev[c] : (t - tPrev) * fPrev[c];
    return yPrev[c] + theta * d0 + theta * theta * (yy[c] - yPrev[c] - d0);
  };
  // The first theta in [0, 1] where that quadratic reaches `level` (it lies below at 0 and at
  // or above at 1).
  auto crossing = [&](double t, const std::vector<double>& yy, std::size_t c, double level) {
    const double c0 = alongStep(0.0, t, yy, c) - level, c1 = alongStep(1.0, t, yy, c) - level;
    const double b = fPrev.empty() ? c1 - c0 : (t - tPrev) * fPrev[c];
    const double a = c1 - c0 - b;
    double theta = c0 / (c0 - c1);  // the chord's, kept when the quadratic is all but linear
    if (std::abs(a) > 1e-9 * (std::abs(b) + std::abs(c0))) {
      const double root = std::sqrt(std::max(0.0, b * b - 4.0 * a * c0));
      double best = 2.0;
      for (const double r : {(-b - root) / (2.0 * a), (-b + root) / (2.0 * a)})
        if (r >= 0.0 && r <= 1.0) best = std::min(best, r);
      if (best <= 1.0) theta = best;
    }
    return std::clamp(theta, 0.0, 1.0);
  };
  // A body past destruction: the row at the located crossing ends the series, so no
  // temperature beyond destruction is ever recorded.
  auto destroyed = [&](double t, const std::vector<double>& yy) {
    double theta = 2.0;
    const BodyWatch* hit = nullptr;
    for (const BodyWatch& w : bodies) {
      const double now = temperatureOf(w, yy);
      if (now < w.body.destruction) continue;
      const double before = yPrev.empty() ? now : temperatureOf(w, yPrev);
      const double th = !std::isfinite(now) || before >= w.body.destruction
                            ? 0.0
                            : crossing(t, yy, w.slowIndex,
                                       (w.body.destruction - w.body.ambient) / scale[w.slowIndex]);
      if (th < theta) theta = th, hit = &w;
    }
    if (!hit) return false;
    std::vector<double> yc = yy;
    double tc = t;
    if (!yPrev.empty()) {
      for (std::size_t c = 0; c < ns; ++c) yc[c] = alongStep(theta, t, yy, c);
      tc = tPrev + theta * (t - tPrev);
      // The located row itself is below destruction for every other body, however the
      // quadratic bends.
      yc[hit->slowIndex] = (hit->body.destruction - hit->body.ambient) / scale[hit->slowIndex];
    }
    if (!yPrev.empty() && theta == 0.0)
      settle(tPrev, yPrev, false);  // at destruction already at the last row: it ends the series
    else
      recordRow(tc, yc);
    const FailureEvent e =
        failureEvent(hit->body, ThermalCondition::Destroyed, tc, hit->body.destruction,
                     hit->runaway ? "thermal runaway" : "overheating");
    er.failures.push_back(e);
    er.stoppedBy = e.verdict();
    return true;
  };
  // Above its rating a body is watched for runaway: heating, and heating faster as its
  // device's temperatures rise together (the row sum of their block of the slow Jacobian).
  auto checkRunaway = [&](double t, const std::vector<double>& yy) {
    bool any = false;
    for (const BodyWatch& w : bodies)
      any = any || (!w.runaway && temperatureOf(w, yy) > w.body.serviceLimit);
    if (!any) return;
    std::vector<double> rate, jac;
    ode.evaluate(t, yy, rate, &jac);
    for (BodyWatch& w : bodies) {
      const double temperature = temperatureOf(w, yy);
      if (w.runaway || !(temperature > w.body.serviceLimit)) continue;
      const std::size_t r = w.slowIndex;
      const double heating = w.body.heatCapacity * rate[r] * scale[r];  // W, net
      double together = 0.0;  // d(dT_r/dt)/dT, all the device's temperatures moving alike
      for (std::size_t c : w.sameDevice) together += jac[r * ns + c] * scale[r] / scale[c];
      HeatState h;
      h.temperature = temperature;
      const double sink = w.sinkIndex < 0
                              ? w.body.ambient
                              : w.body.ambient + yy[static_cast<std::size_t>(w.sinkIndex)] *
                                                     scale[static_cast<std::size_t>(w.sinkIndex)];
      h.sinkTemperature = sink;
      h.dissipation = heating + w.body.lossConductance * (temperature - sink);
      h.dissipationSlope = w.body.heatCapacity * together + w.body.lossConductance;
      const ThermalCheck c = checkHeat(w.body, h);
      if (c.condition != ThermalCondition::Runaway) continue;
      w.runaway = true;
      FailureEvent e = failureEvent(w.body, ThermalCondition::Runaway, t, temperature, "");
      e.cause = fmt::format(
          "over a mains period its dissipation, {:.3g} W, grows by {:.3g} W/K, faster than its "
          "cooling ({:.3g} W/K); at this rate it reaches destruction within {}",
          h.dissipation, h.dissipationSlope, w.body.lossConductance,
          formatDuration(c.timeToDestruction));
      er.failures.push_back(e);
    }
  };
  // Rows at every tenth of the duration that a slow step passed over, on the cubic Hermite
  // interpolant of its end states and rates (its error is of the order of the step's own
  // third-order error estimate), each the periodic steady state at those slow values. They are
  // solved by a copy of the solver, so the step's own settled state stays the next step's start.
  const double rowSpacing = options.duration / 10.0;
  // A caller's onPeriod that ends the run at an interpolated row: the run ends on that row's
  // solver and state.
  std::optional<detail::PeriodicSolver> rowSolver;
  std::vector<double> xRow;
  detail::PeriodSolution rowSol;
  bool endedOnRow = false;
  auto interpolatedRows = [&](double t, const std::vector<double>& yy,
                              const std::vector<double>& f) {
    if (yPrev.empty() || fPrev.empty()) return true;
    const double h = t - tPrev;
    bool copied = false;
    std::vector<double> yr(ns);
    for (double k = std::floor(tPrev / rowSpacing) + 1.0; k * rowSpacing < t - 1e-6 * h; ++k) {
      const double tr = k * rowSpacing, s = (tr - tPrev) / h;
      if (s < 1e-6) continue;  // a tenth the last row already stands on (rounding)
      const double h00 = (1.0 + 2.0 * s) * (1.0 - s) * (1.0 - s), h10 = s * (1.0 - s) * (1.0 - s);
      const double h01 = s * s * (3.0 - 2.0 * s), h11 = s * s * (s - 1.0);
      for (std::size_t c = 0; c < ns; ++c)
        yr[c] = h00 * yPrev[c] + h10 * h * fPrev[c] + h01 * yy[c] + h11 * h * f[c];
      // No row beyond a destruction the step's ends do not show.
      for (const BodyWatch& w : bodies)
        if (temperatureOf(w, yr) >= w.body.destruction) return true;
      if (!copied) rowSolver.emplace(solver), xRow = x, copied = true;
      Result period;
      {
        detail::Recorder rec(sys, record, period);
        solveAt(*rowSolver, xRow, tr, yr, false, &rec, rowSol);
      }
      for (double& tp : period.timeColumn()) tp -= t0;
      appendRow(er.series, tr, period, first);
      ++es.interpolatedRows;
      er.endTime = tr;
      if (options.onPeriod) {
        if (!options.onPeriod(tr, settledPeriod(*rowSolver, xRow, tr))) {
          er.stoppedBy = fmt::format("stopped at t = {:.6g} s by the caller", tr);
          endedOnRow = true;
          return false;
        }
      }
    }
    if (copied) sys.setFrozenValues(x);
    return true;
  };
  auto observe = [&](double t, const std::vector<double>& yy) {
    if (destroyed(t, yy)) return false;
    checkRunaway(t, yy);
    // The rates here (with the Jacobian the next step starts from): the settled period is
    // then recorded from the same solve.
    std::vector<double> f, jac;
    ode.evaluate(t, yy, f, t < options.duration * (1.0 - 1e-12) ? &jac : nullptr);
    if (!interpolatedRows(t, yy, f)) return false;
    recordRow(t, yy);
    tPrev = t;
    yPrev = yy;
    fPrev = std::move(f);
    bool go = true;
    if (options.onPeriod) {
      go = options.onPeriod(t, settledPeriod(solver, x, t));
      if (!go) er.stoppedBy = fmt::format("stopped at t = {:.6g} s by the caller", t);
    }
    if (options.progress && !options.progress(t, options.duration))
      throw Cancelled(fmt::format("warm-up cancelled at t = {:.6g} s", t));
    return go;
  };

  std::vector<double> y(ns);
  for (std::size_t c = 0; c < ns; ++c) y[c] = x[static_cast<std::size_t>(slow[c])] / scale[c];
  if (observe(0.0, y)) {
    detail::SlowOdeSettings settings;
    settings.reltol = options.reltol;
    settings.abstol = 1.0;
    // No step is forced for the rows (they are interpolated): the error control alone sets them.
    settings.maxStep = options.maxStep;
    settings.firstStep =
        settings.maxStep > 0.0 ? std::min(settings.maxStep, 10.0 * period) : 10.0 * period;
    settings.firstFromJacobian = true;
    detail::SlowOdeStats os;
    try {
      detail::integrateSlowOde(ode, y, 0.0, options.duration, settings, os, observe);
    } catch (const ConvergenceError& e) {
      // A body heating past its rating with no periodic steady state ahead is the runaway
      // itself, not a numerical failure: the run ends at the last settled row.
      const BodyWatch* hot = nullptr;
      for (const BodyWatch& w : bodies)
        if (!yPrev.empty() && (w.runaway || temperatureOf(w, yPrev) > w.body.serviceLimit))
          hot = &w;
      if (!hot) throw;
      const FailureEvent ev = failureEvent(
          hot->body, ThermalCondition::Runaway, tPrev, temperatureOf(*hot, yPrev),
          "beyond this time no periodic steady state exists: the heating outruns the cooling");
      if (!hot->runaway) er.failures.push_back(ev);
      er.stoppedBy = ev.verdict();
      settle(tPrev, yPrev, false);
    }
    es.slowSteps = os.accepted;
    es.rejectedSlowSteps = os.rejected;
  }
  // The settled period at the end, with the caller's signals.
  {
    Result& w = er.last.waveforms;
    detail::Recorder rec(sys, po.record, w);
    if (endedOnRow)
      rowSolver->recordPeriod(xRow, er.endTime, rec, stats);
    else
      solver.recordPeriod(x, er.endTime, rec, stats);
    for (double& tp : w.timeColumn()) tp -= t0;
    er.last.period = period;
    er.last.startTime = t0;
    er.last.stats = endedOnRow ? rowSol.stats : sol.stats;
  }
  es.wallSeconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  er.last.waveforms.stats().wallSeconds = es.wallSeconds;
  return er;
}

}  // namespace disc
