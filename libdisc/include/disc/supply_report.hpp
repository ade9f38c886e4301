// The supply report: what a restorer needs before switching on, computed from a run.
#pragma once

#include <string>
#include <vector>

#include "disc/netlist.hpp"
#include "disc/result.hpp"

namespace disc {

/// A figure judged against a limit.
struct Verdict {
  std::string figure;  ///< what is judged
  double value = 0.0;
  double limit = 0.0;
  std::string unit;
  std::string level;  ///< "ok" (at most 90 % of the limit), "marginal" (90-100 %), "exceeds"
  std::string rule;   ///< the rule used, in words
};

struct StackFigures {
  std::string name, type, material, mode, loadKind;  ///< loadKind: "capacitive" or "resistive"
  int plates = 1, arms = 1;
  double peakReverse = 0;                ///< V per plate, largest over plates, settled window
  double rmsReverse = 0;                 ///< V per plate, sine-equivalent AC rms for the load kind
  double rmsRating = 0, peakRating = 0;  ///< V per plate
  double currentAverage = 0, currentRms = 0, currentPeak = 0;  ///< A, whole stack, forward
  double densityAverage = 0;                  ///< A/cm2, per plate area, average forward per arm
  double densityRating = 0;                   ///< A/cm2, derated for the ambient
  double surgePeak = 0;                       ///< A, largest stack current over the whole run
  double powerForward = 0, powerReverse = 0;  ///< W, whole stack, settled averages
  double powerPerPlate = 0;                   ///< W, average per plate
  double temperatureEnd = 0;                  ///< K, hottest plate at the end of the run
  /// K, steady-state estimate for the hottest plate, at most the destruction temperature
  double temperatureSteady = 0;
  bool noSteadyState = false;         ///< the estimate reached the destruction temperature
  double temperatureLimit = 0;        ///< K, highest rated plate temperature
  double destructionTemperature = 0;  ///< K
  std::vector<double> armShare;       ///< fraction of the stack current per parallel arm
  double formingStart = 1, formingEnd = 1;
  std::vector<Verdict> verdicts;
};

/// Mean power a device absorbs over the settled window (a loss, or for capacitors and
/// inductors the net energy they store: about 0 once settled).
struct PowerShare {
  std::string device, kind;
  double power = 0;  ///< W
};

struct OutputFigures {
  double mean = 0, ripplePeakToPeak = 0, rippleRms = 0, rippleFactor = 0;  ///< V, V, V, -
  /// inputPower: what the sources other than the load deliver (the mains, or a battery that
  /// feeds the circuit); a battery named as the load is output, never input.
  double loadCurrent = 0, outputPower = 0, inputPower = 0, efficiency = 0, powerFactor = 0;
  /// "charging" or "discharging" when the load is a source (a battery), else empty.
  std::string loadState;
  /// Every other device's mean absorbed power: inputPower = outputPower + the sum of these,
  /// within the run's tolerance (Tellegen's theorem).
  std::vector<PowerShare> losses;
  double secondaryRmsCurrent = 0, secondaryVA = 0;  ///< A, VA (0 without a transformer)
  bool hasTransformer = false;
};

struct SupplyReport {
  static constexpr int kSchema = 1;
  std::string title, file;
  double ambient = 0;    ///< K
  double frequency = 0;  ///< Hz of the mains (0 for DC supplies)
  bool settled = false;
  int cycles = 0;                   ///< settled cycles the figures use
  double window0 = 0, window1 = 0;  ///< s
  OutputFigures output;
  std::vector<StackFigures> stacks;
  std::vector<std::string> warnings;
  std::vector<std::string> cautions;
  std::string disclaimer;
  /// Runaways and destructions of the transient; a destruction ended it (window1 is then the
  /// end of the run, not of the requested transient).
  std::vector<FailureEvent> failures;
  std::string worst = "ok";  ///< worst verdict level, "fails" when `failures` is not empty
  RunStats stats;
};

/// Signals a supply report needs, beyond the user's.
std::vector<std::string> reportSignals(const Netlist& netlist);
/// Computes the report from a transient result that recorded reportSignals().
SupplyReport makeSupplyReport(const Netlist& netlist, const Result& transient);

/// The safety cautions every report carries (the selenium-fume caution first when a selenium
/// plate is involved).
std::vector<std::string> safetyCautions(bool selenium);
/// The closing disclaimer of every report: a simulation defers to codes and technicians.
std::string simulationDisclaimer();

}  // namespace disc
