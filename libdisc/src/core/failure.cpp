// The thermal check of a heated body, and the words of failure events.
#include "disc/failure.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>

#include "disc/error.hpp"

namespace disc {

const char* failureModeName(FailureMode mode) {
  return mode == FailureMode::Open ? "open" : "short";
}

FailureMode parseFailureMode(const std::string& word) {
  if (word == "short") return FailureMode::Short;
  if (word == "open") return FailureMode::Open;
  throw InputError(fmt::format("unknown failure mode '{}': use short or open", word));
}

const char* thermalConditionName(ThermalCondition condition) {
  switch (condition) {
    case ThermalCondition::Sound:
      return "sound";
    case ThermalCondition::Runaway:
      return "runaway";
    case ThermalCondition::Destroyed:
      return "destroyed";
  }
  return "?";
}

ThermalCheck checkHeat(const HeatedBody& body, const HeatState& state) {
  if (!std::isfinite(state.dissipation) || !std::isfinite(state.dissipationSlope))
    throw InputError(fmt::format("{}: heat balance is not finite (dissipation {} W, slope {} W/K)",
                                 body.label, state.dissipation, state.dissipationSlope));
  ThermalCheck c;
  c.margin = body.destruction - state.temperature;
  if (!(state.temperature < body.destruction)) {  // also a temperature that is not finite
    c.condition = ThermalCondition::Destroyed;
    c.netHeating = std::numeric_limits<double>::infinity();
    return c;
  }
  const double sink = std::isnan(state.sinkTemperature) ? body.ambient : state.sinkTemperature;
  c.netHeating = state.dissipation - body.lossConductance * (state.temperature - sink);
  // d(net heating)/dT: positive means the body heats faster the hotter it gets.
  const double k = state.dissipationSlope - body.lossConductance;
  c.timeToDestruction = std::numeric_limits<double>::infinity();
  if (c.netHeating > 0.0 && body.heatCapacity > 0.0) {
    // C dT/dt = net0 + k (T - T0), solved for the time to cover the margin.
    const double r = k * c.margin / c.netHeating;
    if (std::abs(r) < 1e-9)
      c.timeToDestruction = body.heatCapacity * c.margin / c.netHeating;
    else if (1.0 + r > 0.0)
      c.timeToDestruction = body.heatCapacity / k * std::log1p(r);
  }
  if (c.netHeating > 0.0 && k >= 0.0) c.condition = ThermalCondition::Runaway;
  return c;
}

std::string formatDuration(double seconds) {
  if (!std::isfinite(seconds)) return "never";
  if (seconds < 59.95) return fmt::format("{:.3g} s", std::max(seconds, 0.0));
  if (seconds < 3600.0 - 0.5) {
    const long total = std::lround(seconds);
    return fmt::format("{} min {} s", total / 60, total % 60);
  }
  const long minutes = std::lround(seconds / 60.0);
  return fmt::format("{} h {} min", minutes / 60, minutes % 60);
}

std::string FailureEvent::verdict() const {
  const bool several = plates > 1;
  const std::string who = fmt::format("{} {}", several ? "plates" : "plate", body);
  if (kind == ThermalCondition::Runaway)
    return fmt::format(
        "{} {} in thermal runaway from {} ({:.1f} degC): {}; it would go on heating until it "
        "fails at {:.0f} degC",
        who, several ? "are" : "is", formatDuration(time), temperature - 273.15, cause,
        destruction - 273.15);
  return fmt::format("{} would fail after {} ({}): at {:.0f} degC {}; {} {}", who,
                     formatDuration(time), cause, destruction - 273.15, mechanism,
                     several ? "they fail" : "it fails", failureModeName(mode));
}

std::vector<std::string> failureVerdicts(const std::vector<FailureEvent>& events) {
  std::vector<const FailureEvent*> chosen;
  for (const auto& e : events) {
    const bool destroyed = std::any_of(events.begin(), events.end(), [&](const FailureEvent& o) {
      return o.body == e.body && o.kind == ThermalCondition::Destroyed;
    });
    if (e.kind == ThermalCondition::Destroyed || !destroyed) chosen.push_back(&e);
  }
  std::stable_sort(chosen.begin(), chosen.end(),
                   [](const FailureEvent* a, const FailureEvent* b) { return a->time < b->time; });
  std::vector<std::string> v;
  for (const auto* e : chosen) v.push_back(e->verdict());
  return v;
}

FailureEvent failureEvent(const HeatedBody& body, ThermalCondition kind, double time,
                          double temperature, std::string cause) {
  FailureEvent e;
  e.kind = kind;
  e.body = body.label;
  e.device = body.device;
  e.plates = body.plates;
  e.time = time;
  e.temperature = temperature;
  e.destruction = body.destruction;
  e.mode = body.mode;
  e.mechanism = body.mechanism;
  e.cause = std::move(cause);
  return e;
}

}  // namespace disc
