// Watches the heated bodies of a circuit during a run: destruction and thermal runaway (private).
#pragma once

#include <vector>

#include "disc/failure.hpp"
#include "system.hpp"

namespace disc::detail {

/// Per-run state of the failure check: the devices hold none of it.
class FailureMonitor {
 public:
  explicit FailureMonitor(const System& sys);
  /// The starting state (operating point or cold start) at ctx.time. True when a body starts
  /// destroyed: the run must not go on.
  bool start(const EvalContext& ctx);
  /// Sets the temperature rise of every body at or past destruction to its destruction
  /// temperature, so a starting state without a physical thermal balance is never reported.
  void holdDestroyed(std::vector<double>& x) const;
  /// After each accepted step, with ctx at the new time: records runaways and destructions; true
  /// when a body was destroyed within the step (its crossing time located by linear
  /// interpolation) and the run must stop.
  bool accepted(const EvalContext& ctx);
  const std::vector<FailureEvent>& events() const { return events_; }

 private:
  struct Watch {
    HeatedBody body;
    const Device* device = nullptr;
    int index = 0;  // in the device's heatedBodies()
    double lastTime = 0.0, lastTemperature = 0.0;
    bool filtering = false;           // above the service limit: dissipation being low-passed
    double since = 0.0;               // s, filtering since
    double tau = 0.0;                 // s, low-pass time constant
    double power = 0.0, slope = 0.0;  // W, W/K, low-passed over mains cycles
    double sink = 0.0;                // K, what it loses heat to (NaN: the ambient)
    bool runaway = false;
  };
  FailureEvent event(const Watch& w, ThermalCondition kind, double time, double temperature,
                     std::string cause) const;
  std::vector<Watch> watches_;
  std::vector<FailureEvent> events_;
};

}  // namespace disc::detail
