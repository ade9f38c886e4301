// Plate failure and thermal runaway: the bodies whose heat can destroy a device, the check any
// analysis applies to a body's heat balance, and the events a run reports.
#pragma once

#include <limits>
#include <string>
#include <vector>

namespace disc {

/// What a destroyed plate becomes (docs/plate-model.md, "Failure").
enum class FailureMode {
  Short,  ///< conducts both ways
  Open    ///< conducts no longer
};
/// "short" or "open".
const char* failureModeName(FailureMode mode);
/// Parses "short" or "open"; throws InputError otherwise.
FailureMode parseFailureMode(const std::string& word);

/// A body whose temperature can destroy it: one plate, or one lumped arm of a stack.
struct HeatedBody {
  std::string label;          ///< "SR1#3" (plate 3) or "SR1#8-14" (a lumped arm's plates)
  std::string device;         ///< "SR1"
  int plates = 1;             ///< plates the body stands for (a lumped arm: its plates)
  int unknown = -1;           ///< index of its temperature-rise unknown in the state vector
  double ambient = 298.15;    ///< K; temperature = ambient + x[unknown]
  double serviceLimit = 0.0;  ///< K, highest rated temperature; runaway is watched above it
  double destruction = 0.0;   ///< K; the body is destroyed at or above it
  FailureMode mode = FailureMode::Short;
  std::string mechanism;         ///< what destroys it, in words
  double heatCapacity = 0.0;     ///< J/K
  double lossConductance = 0.0;  ///< W/K, to ambient (its neighbours on a spindle heat alike)
  /// Unknown of the heat node it loses that heat to (its temperature rise above `ambient`),
  /// or -1: the ambient itself.
  int sink = -1;
};

/// A body's heat balance: instantaneous values, or averages over a mains period.
struct HeatState {
  double temperature = 0.0;       ///< K
  double dissipation = 0.0;       ///< W
  double dissipationSlope = 0.0;  ///< W/K, d(dissipation)/d(temperature) at a fixed drive
  /// K, temperature of what the body loses its heat to (a heat node); NaN: the ambient.
  double sinkTemperature = std::numeric_limits<double>::quiet_NaN();
};

enum class ThermalCondition {
  Sound,     ///< below its destruction temperature, with an equilibrium ahead
  Runaway,   ///< still heating, and heating faster the hotter it gets: no equilibrium ahead
  Destroyed  ///< at or past its destruction temperature
};
/// "sound", "runaway" or "destroyed".
const char* thermalConditionName(ThermalCondition condition);

struct ThermalCheck {
  ThermalCondition condition = ThermalCondition::Sound;
  double netHeating = 0.0;  ///< W, dissipation less the loss to ambient
  double margin = 0.0;      ///< K below the destruction temperature (negative past it)
  /// s, time to reach the destruction temperature with the heat balance linearised here
  /// (+inf when the body is not heating, 0 when it is destroyed). For the convex laws of the
  /// plates the linearisation underestimates the heating: the true time is shorter.
  double timeToDestruction = 0.0;
};

/// Judges a body's heat balance: Destroyed at or past its destruction temperature (or at a
/// temperature that is not finite); Runaway when the net heating is positive and the
/// dissipation grows with temperature at least as fast as the loss (then, for dissipation
/// convex in temperature as the plates' Arrhenius laws are, no equilibrium lies above);
/// Sound otherwise.
ThermalCheck checkHeat(const HeatedBody& body, const HeatState& state);

/// Something a run found about a body: runaway detected, or destruction.
struct FailureEvent {
  ThermalCondition kind = ThermalCondition::Destroyed;  ///< Runaway or Destroyed
  std::string body;                                     ///< "SR1#3"
  std::string device;                                   ///< "SR1"
  int plates = 1;                                       ///< plates the body stands for
  double time = 0.0;       ///< s: the located crossing (Destroyed) or the detection (Runaway)
  double temperature = 0;  ///< K at that time
  double destruction = 0;  ///< K, the body's destruction temperature
  FailureMode mode = FailureMode::Short;  ///< what the body becomes when destroyed
  std::string mechanism;                  ///< what destroys it, in words
  std::string cause;  ///< "thermal runaway", "overheating" or, for a runaway, its heat balance
  /// One sentence: "plate SR1#3 would fail after 3 min 20 s: ...".
  std::string verdict() const;
};

/// The event of a body: its names, plates, destruction temperature, mode and mechanism.
FailureEvent failureEvent(const HeatedBody& body, ThermalCondition kind, double time,
                          double temperature, std::string cause);

/// "0.42 s", "3 min 20 s", "2 h 5 min".
std::string formatDuration(double seconds);

/// The verdicts of a run's events: each body's destruction, and each runaway that did not reach
/// destruction before the run ended, in order of time.
std::vector<std::string> failureVerdicts(const std::vector<FailureEvent>& events);

}  // namespace disc
