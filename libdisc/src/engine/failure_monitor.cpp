// The failure check during a run: destruction located within the crossing step, runaway judged
// on dissipation low-passed over mains cycles.
#include "failure_monitor.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

namespace disc::detail {

FailureMonitor::FailureMonitor(const System& sys) {
  const double natural = sys.naturalStep();
  std::vector<HeatedBody> bodies;
  for (const Device* d : sys.devices()) {
    bodies.clear();
    d->heatedBodies(bodies);
    for (std::size_t k = 0; k < bodies.size(); ++k) {
      Watch w;
      w.body = std::move(bodies[k]);
      w.device = d;
      w.index = static_cast<int>(k);
      // A fiftieth of the body's thermal time constant follows its heating closely; at least
      // five mains periods (a twentieth of a period is the natural step) so the dissipation's
      // ripple averages out, unless that would be slower than a fifth of the time constant.
      const double thermal = w.body.lossConductance > 0.0
                                 ? w.body.heatCapacity / w.body.lossConductance
                                 : w.body.heatCapacity;
      w.tau = thermal / 50.0;
      if (std::isfinite(natural)) w.tau = std::max(w.tau, std::min(100.0 * natural, thermal / 5.0));
      watches_.push_back(std::move(w));
    }
  }
}

FailureEvent FailureMonitor::event(const Watch& w, ThermalCondition kind, double time,
                                   double temperature, std::string cause) const {
  return failureEvent(w.body, kind, time, temperature, std::move(cause));
}

bool FailureMonitor::start(const EvalContext& ctx) {
  bool destroyed = false;
  for (Watch& w : watches_) {
    const double temperature = w.body.ambient + ctx.x[w.body.unknown];
    w.lastTime = ctx.time;
    w.lastTemperature = temperature;
    w.filtering = false;
    if (temperature < w.body.destruction) continue;
    // A starting state past destruction (an operating point whose only thermal balance lies
    // beyond it) is no physical state: the event carries the destruction temperature.
    events_.push_back(event(w, ThermalCondition::Destroyed, ctx.time, w.body.destruction,
                            "no thermal equilibrium below its destruction temperature"));
    destroyed = true;
  }
  return destroyed;
}

void FailureMonitor::holdDestroyed(std::vector<double>& x) const {
  for (const Watch& w : watches_) {
    double& rise = x[static_cast<std::size_t>(w.body.unknown)];
    if (!(w.body.ambient + rise < w.body.destruction)) rise = w.body.destruction - w.body.ambient;
  }
}

bool FailureMonitor::accepted(const EvalContext& ctx) {
  bool destroyed = false;
  for (Watch& w : watches_) {
    const double t = ctx.time, temperature = w.body.ambient + ctx.x[w.body.unknown];
    if (!(temperature < w.body.destruction)) {
      // Linear interpolation within the step that crossed.
      double crossing = t;
      if (std::isfinite(temperature) && temperature > w.lastTemperature)
        crossing = w.lastTime + (w.body.destruction - w.lastTemperature) /
                                    (temperature - w.lastTemperature) * (t - w.lastTime);
      crossing = std::clamp(crossing, w.lastTime, t);
      events_.push_back(event(w, ThermalCondition::Destroyed, crossing, w.body.destruction,
                              w.runaway ? "thermal runaway" : "overheating"));
      destroyed = true;
    } else if (temperature > w.body.serviceLimit) {
      // Above its rating the body's heat balance is followed (one plate-law evaluation per
      // step); below it a runaway is no danger yet and the check costs nothing.
      const HeatState h = w.device->heatState(w.index, ctx);
      if (!w.filtering) {
        w.filtering = true;
        w.since = t;
        w.power = h.dissipation;
        w.slope = h.dissipationSlope;
        w.sink = h.sinkTemperature;
      } else {
        const double a = -std::expm1(-(t - w.lastTime) / w.tau);
        w.power += a * (h.dissipation - w.power);
        w.slope += a * (h.dissipationSlope - w.slope);
        w.sink = h.sinkTemperature;  // a heat node warms over minutes: no filter needed
      }
      if (!w.runaway && t - w.since >= 2.0 * w.tau) {
        const ThermalCheck c = checkHeat(w.body, {temperature, w.power, w.slope, w.sink});
        if (c.condition == ThermalCondition::Runaway) {
          w.runaway = true;
          events_.push_back(event(
              w, ThermalCondition::Runaway, t, temperature,
              fmt::format("its dissipation, {:.3g} W, grows by {:.3g} W/K, faster than its cooling "
                          "({:.3g} W/K); at this rate it reaches destruction within {}",
                          w.power, w.slope, w.body.lossConductance,
                          formatDuration(c.timeToDestruction))));
        }
      }
    } else {
      w.filtering = false;
    }
    w.lastTime = t;
    w.lastTemperature = temperature;
  }
  return destroyed;
}

}  // namespace disc::detail
