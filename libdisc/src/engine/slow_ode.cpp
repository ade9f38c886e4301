// Slow-state ODEs with Boost.Odeint's rosenbrock4 (built as C++17; see slow_ode.hpp).
//
// Why a stiff method: the slow states couple on very different time scales (a plate's heat
// reaches its neighbours on the spindle in seconds, the plate's whole stack warms over minutes,
// forming moves over hours), so an explicit stepper would be held to the fastest of them long
// after it has settled. rosenbrock4 (Shampine's L-stable fourth-order Rosenbrock method with an
// embedded third-order estimate, E. Hairer and G. Wanner, Solving Ordinary Differential
// Equations II, section IV.7) needs the Jacobian, which the periodic steady state supplies from
// its own sensitivities.
#include "slow_ode.hpp"

#include <algorithm>
#include <boost/numeric/odeint.hpp>
#include <cmath>
#include <stdexcept>

#include "disc/error.hpp"

namespace disc::detail {

namespace {

namespace odeint = boost::numeric::odeint;
using Vec = boost::numeric::ublas::vector<double>;
using Mat = boost::numeric::ublas::matrix<double>;

struct Bridge {
  const SlowOdeSystem* system;
  std::vector<double> y, f, jac;
  void load(const Vec& x) {
    y.resize(x.size());
    std::copy(x.begin(), x.end(), y.begin());
  }
};

struct Rhs {
  Bridge* b;
  void operator()(const Vec& x, Vec& dxdt, double t) const {
    b->load(x);
    b->system->evaluate(t, b->y, b->f, nullptr);
    for (std::size_t k = 0; k < b->f.size(); ++k) dxdt(k) = b->f[k];
  }
};

struct Jacobian {
  Bridge* b;
  void operator()(const Vec& x, Mat& J, double t, Vec& dfdt) const {
    b->load(x);
    b->system->evaluate(t, b->y, b->f, &b->jac);
    const std::size_t n = x.size();
    for (std::size_t r = 0; r < n; ++r) {
      for (std::size_t c = 0; c < n; ++c) J(r, c) = b->jac[r * n + c];
      // The slow excitations (schedules) are piecewise linear between breakpoints, where the
      // envelope restarts; their time derivative enters only through the error control.
      dfdt(r) = 0.0;
    }
  }
};

}  // namespace

double integrateSlowOde(const SlowOdeSystem& system, std::vector<double>& y, double t0, double t1,
                        const SlowOdeSettings& settings, SlowOdeStats& stats,
                        const std::function<bool(double, const std::vector<double>&)>& observer) {
  Bridge bridge{&system, {}, {}, {}};
  Vec x(y.size());
  std::copy(y.begin(), y.end(), x.begin());
  auto stepper =
      odeint::make_controlled<odeint::rosenbrock4<double>>(settings.abstol, settings.reltol);
  double t = t0;
  double dt = settings.firstStep;
  if (settings.firstFromJacobian) {
    // The first step is the fastest slow mode's time constant, 1 / |J| (the largest row sum
    // bounds every eigenvalue): the states start at rest, so its transient is the first thing
    // to resolve; the error control shortens the step if that is too long. firstStep stays the
    // floor (the periodic states are settled ones: a few periods at least).
    system.evaluate(t0, y, bridge.f, &bridge.jac);
    const std::size_t n = y.size();
    double norm = 0.0;
    for (std::size_t r = 0; r < n; ++r) {
      double sum = 0.0;
      for (std::size_t c = 0; c < n; ++c) sum += std::abs(bridge.jac[r * n + c]);
      norm = std::max(norm, sum);
    }
    if (norm > 0.0 && std::isfinite(norm)) dt = std::max(dt, 1.0 / norm);
  }
  dt = std::min(dt, t1 - t0);
  long tries = 0;
  while (t < t1 * (1.0 - 1e-14) - 1e-300) {
    if (++tries > settings.maxSteps)
      throw TimeStepError("the slow-state envelope took more steps than its limit", t, "");
    if (settings.maxStep > 0.0) dt = std::min(dt, settings.maxStep);
    const bool last = t + dt >= t1;
    if (last) dt = t1 - t;
    const auto outcome =
        stepper.try_step(std::make_pair(Rhs{&bridge}, Jacobian{&bridge}), x, t, dt);
    if (outcome == odeint::fail) {
      ++stats.rejected;
      if (dt < 1e-9 * std::max(1.0, std::abs(t1 - t0)))
        throw TimeStepError("the slow-state envelope's step fell below 1e-9 of its span", t, "");
      continue;
    }
    ++stats.accepted;
    if (last) t = t1;  // land exactly
    std::copy(x.begin(), x.end(), y.begin());
    if (observer && !observer(t, y)) return t;
  }
  std::copy(x.begin(), x.end(), y.begin());
  return t;
}

}  // namespace disc::detail
