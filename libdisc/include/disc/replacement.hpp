// Designing a silicon replacement for plate stacks: a silicon diode and a series dropping
// resistor per stack, chosen so the supply gives the original DC output (docs/replacement.md).
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "disc/error.hpp"
#include "disc/supply_report.hpp"

namespace disc {

struct ReplaceOptions {
  std::vector<std::string> stacks;  ///< the stacks to replace (one diode and resistor each)
  /// The silicon diode's parameters in the netlist's words ("saturation-current=5n ideality=1.8
  /// series-resistance=0.05 breakdown-voltage=1500");
  /// empty: the library's general-purpose 1 A rectifier diode (DiodeParams defaults).
  std::string diode;
  /// What the replacement aims at: "formed" (the original stacks re-formed: forming state 1,
  /// no storage; the default), "design" (the original stacks as new: also no operating hours),
  /// "present" (the stacks as the netlist describes them), or a value of the matched quantity
  /// with its unit ("240V"; "4.5A" when the load is a battery).
  std::string target = "formed";
  /// The silicon diode's ratings, for its verdicts: average forward current (A) and
  /// non-repetitive surge current (A); the defaults are those of a general-purpose 1 A
  /// silicon rectifier (from memory, docs/sources.md).
  double diodeCurrentRating = 1.0, diodeSurgeRating = 30.0;
  double tolerance = 0.001;  ///< the resistor's output matches the original within this fraction
  std::vector<double> loadFractions = {0.5, 1.0, 1.2};  ///< rows of the comparison table
  /// Repetitive peak reverse voltage asked of the diode: this factor times the simulated peak
  /// reverse voltage (common practice: 2, for mains surges and high line).
  double pivFactor = 2.0;
  /// Surge current asked of the diode: this factor times the simulated switch-on peak (common
  /// practice: 1.5, for a switch-on at the crest of a high mains).
  double surgeFactor = 1.5;
  /// Resistor power rating: at least this factor times its dissipation (common practice: 2).
  double powerMargin = 2.0;
  /// Called with a line of progress (each simulation run); return false to cancel.
  std::function<bool(const std::string&)> progress;
  void validate() const;
};

/// The supply at one load: original stacks against the replacement (at the chosen resistor).
struct ReplacementRow {
  double loadFraction = 1.0;
  double outputOriginal = 0, outputReplacement = 0;    ///< V, mean DC output
  double currentOriginal = 0, currentReplacement = 0;  ///< A, mean load current
  double rippleOriginal = 0, rippleReplacement = 0;    ///< V peak to peak
  double surgeOriginal = 0, surgeReplacement = 0;      ///< A, largest rectifier current of the run
  double dissipationOriginal = 0;                      ///< W, the stacks together
  double dissipationReplacement = 0;                   ///< W, diodes and resistors together
};

struct ReplacementDesign {
  std::string file;
  std::vector<std::string> stacks;
  std::string loadName;
  bool loadScalable = true;  ///< the load is a resistor (its fractions can be simulated)
  /// What is matched: "output voltage" (V), or "load current" (A) when the load is a battery,
  /// which pins the voltage (a charger is matched on its charging current).
  std::string quantity = "output voltage", unit = "V";
  /// What was aimed at ("formed", "design", "present" or "value") and its value: the
  /// original's settled value of the matched quantity in that state, or the value given.
  std::string targetKind = "formed";
  double target = 0;
  double present = 0;        ///< the original stacks as the netlist describes them
  double siliconAlone = 0;   ///< the same with silicon diodes and no resistor
  double resistorExact = 0;  ///< ohm, per stack, the root-found value
  double outputExact = 0;    ///< the matched quantity with that value
  double handEstimate = 0;   ///< ohm, from average drops during conduction (common practice)
  double e12 = 0, e24 = 0;   ///< ohm, nearest preferred values (IEC 60063)
  double outputE12 = 0, outputE24 = 0;  ///< the matched quantity with those values
  double resistorPower = 0;             ///< W per resistor at the E24 value and full load
  double resistorRating = 0;            ///< W, a common rating of at least powerMargin times it
  double peakReverse = 0;               ///< V, largest simulated reverse voltage on a diode
  double pivRequired = 0;               ///< V
  double surgeSimulated = 0;            ///< A, largest simulated diode current (switch-on)
  double surgeRequired = 0;             ///< A
  double diodeCurrent = 0;              ///< A, largest settled average forward current of a diode
  /// The silicon parts judged at the chosen resistor: diode reverse voltage against its
  /// breakdown voltage, diode average and surge currents against its ratings, resistor
  /// dissipation against its rating (the levels of the supply report's verdicts).
  std::vector<Verdict> verdicts;
  std::vector<ReplacementRow> rows;
  std::string netlist;  ///< the replacement netlist (E24 value), ready to save and run
  std::vector<std::string> warnings;
  std::vector<std::string> cautions;
  std::string disclaimer;
  int runs = 0;  ///< transient runs made
  double pivFactor = 2, surgeFactor = 1.5, powerMargin = 2;
};

/// Designs the replacement for the stacks of a netlist given as text (`name` anchors includes).
/// Throws InputError (NetlistError for the netlist) when a stack is unknown, the netlist names
/// no output or has no transient, or the stack is defined in an included file.
ReplacementDesign designReplacement(const std::string& text, const std::string& name,
                                    const ReplaceOptions& options);
/// The same for a netlist file.
ReplacementDesign designReplacementFile(const std::string& path, const ReplaceOptions& options);

/// The design as plain text, and as JSON (schema 1).
std::string replacementText(const ReplacementDesign& design);
std::string replacementJson(const ReplacementDesign& design);

/// Nearest of the common resistor power ratings (0.25 W to 50 W; common practice) at or
/// above `watts`; throws InputError above 50 W.
double resistorRatingFor(double watts);

}  // namespace disc
