// An instrument output: what a rectifier moving-coil meter shows against the true rms of what
// is applied to it, over its range and over frequency.
#pragma once

#include <string>
#include <vector>

namespace disc {

struct Netlist;
struct SupplyReport;

/// One reading of the meter.
struct MeterPoint {
  double frequency = 0.0;  ///< Hz of the applied sine
  double rms = 0.0;        ///< V, true rms across the input source's terminals
  double reading = 0.0;    ///< V, the scale: range x mean movement current / full-scale current
  /// (reading - rms) / range: the error as a fraction of the fiducial value, the range (the
  /// convention of IEC 60051-1 for a scale with its zero at one end).
  double error = 0.0;
};

/// The meter of an output with `full-scale=` and `range=`.
struct MeterFigures {
  double fullScale = 0.0;      ///< A, the movement's full-scale current
  double range = 0.0;          ///< V rms of a sine that full scale marks
  double accuracyClass = 2.5;  ///< IEC 60051 class index: the permitted error, % of range
  std::string movement;        ///< the output's load: the movement (with its multiplier)
  std::string source;          ///< the sine voltage source that drives it
  MeterPoint atInput;          ///< at the netlist's own input
  /// The input's rms set to fractions of the range, at the netlist's frequency; and the
  /// netlist's input at other frequencies. Empty unless swept (sweepMeter, or `disc run`).
  std::vector<MeterPoint> levels, frequencies;
};

/// The sweeps of sweepMeter: fractions of the range, and frequencies in Hz.
struct MeterSweepOptions {
  std::vector<double> levels = {0.1, 0.2, 0.3, 0.5, 0.7, 1.0};
  std::vector<double> frequencies = {25, 50, 100, 200, 500, 1e3, 2e3, 5e3, 1e4, 2e4};
};

/// Fills `report.meter`'s level and frequency sweeps, each point from a periodic steady state of
/// a copy of the netlist with its input source's rms or frequency changed, and adds their
/// verdicts to the meter's part. `report` must come from makeSupplyReport on the same netlist
/// with a meter output. Throws InputError when it has none, ConvergenceError or TimeStepError
/// naming the point whose periodic steady state fails.
void sweepMeter(const Netlist& netlist, SupplyReport& report,
                const MeterSweepOptions& options = {});

}  // namespace disc
