// The power-up planner: the schedule a restorer follows on a variac to bring a stored (deformed)
// stack up to its working voltage while every plate and capacitor stays inside its limits.
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "disc/envelope.hpp"
#include "disc/netlist.hpp"
#include "disc/supply_report.hpp"

namespace disc {

/// Options of the power-up planner (docs/power-up.md).
struct PowerUpOptions {
  std::string stack;   ///< the stack to bring up (required)
  std::string source;  ///< the variac-fed source; empty = the circuit's one sine source
  /// Fraction of each limit the schedule may use (limits judged at margin x limit; for the
  /// plate temperature on the rise above ambient).
  double margin = 0.9;
  double firstLevel = 0.1;     ///< lowest first step, fraction of the full voltage
  double smallestStep = 0.05;  ///< smallest increase tried, fraction of the full voltage
  double turn = 10.0;          ///< s, turning the variac from one step to the next (a ramp)
  double minHold = 60.0;       ///< s, shortest hold at a step
  double maxHold = 1800.0;     ///< s, longest hold at a step before going on regardless
  /// Settled, safe to go on: the leakage current changes by less than this fraction per
  /// minute and the hottest plate by less than settleTemperature K per minute.
  double settleLeakage = 0.05;
  double settleTemperature = 0.5;
  double maxTotal = 8 * 3600.0;  ///< s; a stack not brought up by then is to be replaced
  int maxSteps = 12;
  double maxSlowStep = 60.0;  ///< s, slow steps of every envelope run (limits judged at each)
  /// Called with a line of progress; return false to cancel (Cancelled).
  std::function<bool(const std::string&)> progress;
  void validate() const;
};

/// One step of the schedule: turn the variac to `level` (over `turn` s), hold `duration`.
struct PowerUpStep {
  double level = 0;                ///< in the source's own sense (V rms for a mains or rms= source)
  double fraction = 0;             ///< of the full voltage
  double start = 0, duration = 0;  ///< s (duration includes the turn)
  double leakageStart = 0, leakageEnd = 0;  ///< A, the stack's mean reverse current
  double hottest = 0;                       ///< K, hottest plate, highest over the step
  double reversePerPlate = 0;               ///< W, average plate's reverse dissipation, highest
  double capacitorVoltage = 0;  ///< V, highest electrolytic voltage over the step (0: none)
  double formingEnd = 1;        ///< stack's lowest forming state at the step's end
  bool settled = false;         ///< false: held for maxHold without settling
};

/// A limit the schedule is kept under, with the highest value the verified schedule reaches.
struct PowerUpLimit {
  std::string what, unit;
  double peak = 0, limit = 0, allowed = 0;  ///< allowed = margin x limit (rise for temperature)
  std::string rule;
};

struct PowerUpPlan {
  std::string title, file, stack, source, levelUnit;
  double full = 0;     ///< full level, the source's own
  double ambient = 0;  ///< K
  double margin = 0.9;
  double settleLeakage = 0.05, settleTemperature = 0.5;  ///< the hold's settling rates, per minute
  std::vector<PowerUpStep> steps;
  double totalTime = 0;  ///< s
  std::vector<PowerUpLimit> limits;
  /// "re-form" (follow the schedule) or "replace".
  std::string verdict = "re-form";
  std::vector<std::string> reasons;  ///< why replace, or notes on the schedule
  /// The whole schedule run once more through the warm-up envelope; verified = inside every
  /// limit there.
  bool verified = false;
  EnvelopeStats verification;
  int envelopeRuns = 0;               ///< warm-up runs the planner made, the verification included
  std::string schedule;               ///< the schedule in netlist words (a `schedule="..."` value)
  std::vector<std::string> warnings;  ///< the supply report's, at full voltage at the end
  std::vector<std::string> cautions;
  std::string disclaimer;
};

/// Plans the power-up of `options.stack` in `netlist`: each step is the largest increase (from
/// halving the remaining way down to smallestStep) whose warm-up run, from switch-on through
/// the schedule so far, stays inside every limit at margin; it is held until settled. Throws
/// InputError for a missing stack or source.
PowerUpPlan planPowerUp(const Netlist& netlist, const PowerUpOptions& options);

std::string powerUpText(const PowerUpPlan& plan);
std::string powerUpJson(const PowerUpPlan& plan);

}  // namespace disc
