// The supply report: what a restorer needs before switching on, computed from a run.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/meter.hpp"
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
  /// loadKind: "capacitive" or "resistive", for the stack's whole rectifier (docs/report.md)
  std::string name, type, material, mode, loadKind;
  std::string rectifier;  ///< the stacks joined to this one at a node, itself included, by name
  /// The stacks across the same two nodes the same way round (paralleled stacks, drawn
  /// separately), itself included, by name; `parallelShare` is this stack's fraction of their
  /// summed average forward current (1 for a stack on its own).
  std::string paralleled;
  double parallelShare = 1;
  std::string worst = "ok";  ///< worst level among `verdicts`
  int plates = 1, arms = 1;
  double peakReverse = 0;                ///< V per plate, largest over plates, settled window
  double rmsReverse = 0;                 ///< V per plate, sine-equivalent AC rms for the load kind
  double rmsRating = 0, peakRating = 0;  ///< V per plate
  double currentAverage = 0, currentRms = 0, currentPeak = 0;  ///< A, whole stack, forward
  double densityAverage = 0;  ///< A/cm2, per plate area, average forward current of the busiest arm
  double densityRating = 0;   ///< A/cm2, derated for the ambient
  double surgePeak = 0;       ///< A, largest stack current over the whole run
  /// False when the report comes from a periodic steady state: it has no switch-on, so
  /// surgePeak is only the settled period's peak.
  bool surgeKnown = true;
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

/// An electrolytic capacitor or a surge thermistor judged against its own ratings.
struct PartFigures {
  std::string name, kind;
  std::vector<Verdict> verdicts;
};

/// A heat node of the circuit's thermal network (a heat sink, a chassis, the air in a cabinet).
struct HeatNodeFigures {
  std::string name;
  double temperatureEnd = 0;     ///< K at the end of the run
  double temperatureSteady = 0;  ///< K, the network's steady state under the settled heat
  /// W: the settled mean dissipation of the stacks on it and the heat sources into it
  double heatIn = 0;
};

/// Mean power a device absorbs over the settled window (a loss, or for capacitors and
/// inductors the net energy they store: about 0 once settled).
struct PowerShare {
  std::string device, kind;
  double power = 0;  ///< W
};

/// A battery (a DC source that is neither the load nor the input): a load that charges or
/// discharges.
struct BatteryFigures {
  std::string name;
  double current = 0;  ///< A, mean, into its + terminal (charging) when positive
  double power = 0;    ///< W, mean absorbed (charging) when positive
  std::string state;   ///< "charging" or "discharging"
};

struct OutputFigures {
  double mean = 0, ripplePeakToPeak = 0, rippleRms = 0, rippleFactor = 0;  ///< V, V, V, -
  /// inputPower: what the input delivers: the source named by `output ... input=`, else every
  /// alternating source (the mains), else (a DC-fed circuit) every source other than the load.
  /// A battery is never input unless named or the circuit has no alternating source.
  double loadCurrent = 0, outputPower = 0, inputPower = 0, powerFactor = 0;
  /// Useful power (the load's, when it absorbs, plus the charging batteries') over what the
  /// input and any discharging battery deliver; 0 when the load delivers (a discharging battery).
  double efficiency = 0;
  /// "charging" or "discharging" when the load is a source (a battery), else empty.
  std::string loadState;
  std::vector<std::string> inputs;        ///< the sources counted as input
  std::vector<BatteryFigures> batteries;  ///< the other DC sources
  /// Every other device's mean absorbed power: inputPower = outputPower + the sum of these +
  /// the batteries' power, within the run's tolerance (Tellegen's theorem).
  std::vector<PowerShare> losses;
  double secondaryRmsCurrent = 0, secondaryVA = 0;  ///< A, VA (0 without a transformer)
  bool hasTransformer = false;
};

struct SupplyReport {
  static constexpr int kSchema = 1;
  /// Whole mains cycles a transient needs at least for the report to judge whether its output
  /// settled (the last cycles' means are compared); a shorter run is refused before it starts.
  static constexpr int kSettleCycles = 2;
  std::string title, file;
  double ambient = 0;    ///< K
  double frequency = 0;  ///< Hz of the mains (0 for DC supplies)
  /// "transient", or "periodic" when the figures come from one periodic steady-state period
  /// (run periodic, or the end of a warm-up).
  std::string basis = "transient";
  bool settled = false;
  int cycles = 0;                   ///< settled cycles the figures use
  double window0 = 0, window1 = 0;  ///< s
  OutputFigures output;
  std::vector<StackFigures> stacks;
  std::vector<PartFigures> parts;          ///< electrolytics, thermistors and a meter with ratings
  std::vector<HeatNodeFigures> heatNodes;  ///< the thermal network's nodes, in netlist order
  /// The instrument, when the output is a meter (`full-scale=`, `range=`); its verdicts are
  /// the part named after the load, of kind "meter".
  std::optional<MeterFigures> meter;
  std::vector<std::string> warnings;
  std::vector<std::string> cautions;
  std::string disclaimer;
  /// Runaways and destructions of the transient; a destruction ended it (window1 is then the
  /// end of the run, not of the requested transient).
  std::vector<FailureEvent> failures;
  std::string worst = "ok";  ///< worst verdict level, "fails" when `failures` is not empty
  RunStats stats;
};

/// A figure against its limit: "ok" up to 90 % of it, "marginal" to 100 %, "exceeds" above.
Verdict judgeFigure(std::string figure, double value, double limit, std::string unit,
                    std::string rule);

/// Signals a supply report needs, beyond the user's.
std::vector<std::string> reportSignals(const Netlist& netlist);
/// How much of a transient's end the report reads, in seconds: the five settled cycles it can
/// check (the last tenth of the recorded run without mains), with a margin. The keepLast of a
/// run whose rows go to a sink (TransientOptions), so that its report is that of every row.
double reportSpan(const Netlist& netlist, const TransientOptions& options);
/// The source that sets a supply's mains frequency: the alternating source of the lowest
/// frequency (the report's cycles are its periods). `frequency` 0 and `name` empty: a DC supply.
struct MainsSource {
  std::string name;
  double frequency = 0.0;  ///< Hz
};
MainsSource mainsSource(const Circuit& circuit);
/// Why a transient recording from `recordFrom` to `stop` (s) is too short for the supply report
/// of `netlist`: it covers fewer than kSettleCycles whole mains cycles. "" when it is long
/// enough, the netlist has no output or the supply no mains. The parser refuses such a run
/// statement with this text, and makeSupplyReport refuses such a transient.
std::string reportLengthShortfall(const Netlist& netlist, double stop, double recordFrom);
/// Computes the report from a transient result that recorded reportSignals().
SupplyReport makeSupplyReport(const Netlist& netlist, const Result& transient);

/// The meter's verdicts from `report.meter` (the reading at the input, and the worst of the
/// level sweep when present), as the part named after the load; the report's worst level
/// follows.
void judgeMeter(SupplyReport& report, const std::string& load);

/// What in a circuit can hurt someone: chooses the cautions of a report.
struct Hazards {
  bool selenium = false;           ///< a selenium plate (fumes when overheated)
  bool mains = false;              ///< a source above 50 V rms or 120 V DC, or a mains waveform
  bool transformerless = false;    ///< mains with no transformer: the chassis may be live
  bool valves = false;             ///< a valve load (HT)
  bool chargedCapacitors = false;  ///< a capacitor above 50 V or holding more than 1 J
  bool battery = false;            ///< a battery (gassing, short-circuit current)
  /// Everything, for work whose circuit is not known (a fitted plate).
  static Hazards all() { return {true, true, true, true, true, false}; }
};
/// What the circuit contains and the run reached (`transient` may be null: from the netlist).
Hazards hazardsOf(const Netlist& netlist, const Result* transient);
/// The safety cautions for those hazards (the selenium-fume caution first); the general
/// electrical caution always.
std::vector<std::string> safetyCautions(const Hazards& hazards);
/// All cautions, with or without the selenium one (a plate of unknown circuit).
std::vector<std::string> safetyCautions(bool selenium);
/// The closing disclaimer of every report: a simulation defers to codes and technicians.
std::string simulationDisclaimer();

}  // namespace disc
