// Fitting a plate type to measured current-voltage traces (docs/fitting.md): weighted
// Levenberg-Marquardt in stages, uncertainties from the Jacobian at the optimum, and a health
// verdict against a healthy plate of the same material and size.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "disc/plate_health.hpp"
#include "disc/plate_type.hpp"
#include "disc/trace.hpp"

namespace disc {

struct FitOptions {
  int plates = 1;  ///< plates in series the traces span (voltages are divided by it)
  /// Healthy reference type: starting values, the parameters not fitted, ratings, and the
  /// health verdict. Empty: by material (selenium: se-25mm-square; copper-oxide:
  /// cuox-12mm-meter).
  std::string like;
  std::string material = "selenium";  ///< used when `like` is empty
  /// A reference type given directly (a fitted or derived one); overrides `like`.
  std::optional<PlateType> reference;
  /// Parameters held at the reference's value (JSON names, e.g. "image_force_per_V4").
  std::vector<std::string> fixed;
  double areaCm2 = 0.0;               ///< active area of one plate; 0: the reference's
  std::string name = "fitted-plate";  ///< name of the fitted type
  double temperature = 298.15;        ///< K, plate temperature of traces without that column
  /// Measurement noise model behind the weights: sigma = relative |I| + floor. Only the shape
  /// matters (the covariance is scaled by the residuals); floor 0 = 1e-3 of each trace's
  /// largest |I|.
  double noiseRelative = 0.01;
  double noiseFloor = 0.0;  ///< A
  bool dynamic = true;      ///< fit capacitance and trap branch from traces with a time column
  /// Long traces are binned before the fit (docs/fitting.md, "Long traces"). A static trace of
  /// more than `binAbove` rows: `binsPerDirection` equal voltage bins (per plate) from 0 to its
  /// largest forward and to its largest reverse voltage, and 0.5 K temperature bins. A timed
  /// trace of more than `binAbove` rows: consecutive groups of equal size, at most `binAbove`
  /// of them. Each bin is one point, the means of its rows, its residual weighted by the square
  /// root of its row count. 0: never bin; else at least 100. Bins per direction: 50 to 1e7.
  std::size_t binAbove = 4000;
  std::size_t binsPerDirection = 1000;
  /// Called about every 0.2 s (and as each stage starts) with a line saying what the fit is
  /// doing, from the thread running the fit; returning false stops it (Cancelled).
  std::function<bool(const std::string&)> progress;
  void validate() const;
};

/// One parameter of the fitted type.
struct FittedParameter {
  std::string name;   ///< the plate-type JSON name, e.g. "rs_ohm_cm2"
  std::string unit;   ///< e.g. "ohm cm2"
  std::string stage;  ///< "forward", "reverse", "static", "thermal" or "dynamic"
  double value = 0.0;
  double start = 0.0;        ///< starting value (from the data or the reference)
  double uncertainty = 0.0;  ///< standard uncertainty (1 sigma); +inf when not determined
  double lower = 0.0, upper = 0.0;
  bool atBound = false;
  bool identifiable = true;  ///< false: the data do not determine it (see warnings)
  /// Fitted on a logarithmic scale (positive quantities spanning decades): the uncertainty is
  /// relative, and its interval is a factor either side.
  bool logScale = false;
  double logUncertainty = 0.0;  ///< standard uncertainty of ln(value), for logScale parameters
  /// Expanded uncertainty, coverage factor k = 2 (about 95 %), as JCGM 100:2008 (GUM) 6.2; for
  /// logScale parameters its linear equivalent value * 2 u(ln value).
  double expanded() const { return 2.0 * uncertainty; }
  /// The interval at coverage factor k = 2 (about 95 %): from the profile likelihood for the
  /// static stages, which follows curved valleys of the cost, or linearised (value -+ 2 u, on
  /// the log scale for logScale parameters) for the dynamic stage. Within the bounds.
  double low = 0.0, high = 0.0;
  std::string interval;  ///< "profile likelihood" or "linearised"
  bool covers(double x) const { return x >= low && x <= high; }
};

/// Measured and fitted current of one trace, per plate, for plots.
struct FitCurve {
  std::string trace;
  bool dynamic = false;
  std::vector<double> time, voltage, measured, fitted;  ///< s, V per plate, A, A
};

struct PlateFit {
  PlateType type;  ///< the fitted type (reference values where not fitted)
  std::vector<FittedParameter> parameters;
  int points = 0;            ///< points fitted (a binned trace's bins, not its rows)
  double rmsWeighted = 0.0;  ///< rms of the weighted residuals (about 1: noise model fits)
  /// A, rms of measured minus fitted current over the points fitted. Of a binned trace these
  /// are the bins' means, whose noise is 1/sqrt(rows) of a row's: the figure then measures the
  /// model's misfit, not the rows' scatter about it (docs/fitting.md, "Long traces").
  double rmsCurrent = 0.0;
  std::vector<std::string> stages;  ///< stages run, in order, with their cost
  /// Per binned trace: its rows, points, bin widths or windows, and their bias bound
  /// (docs/fitting.md, "Long traces"); empty when nothing was binned.
  std::vector<std::string> binning;
  std::vector<std::string> warnings;  ///< what the data do not determine, and why
  PlateHealth health;
  std::vector<FitCurve> curves;
  int evaluations = 0;  ///< model evaluations (static points or transient runs)
  const FittedParameter* find(const std::string& name) const;
};

/// Fits a plate type to one or more traces of one plate (or one stack of `plates` plates).
/// Throws TraceError for traces a fit cannot use (too few points, no reverse or forward part),
/// InputError for bad options, Cancelled when `progress` returns false.
PlateFit fitPlate(const std::vector<Trace>& traces, const FitOptions& options);

/// The fit report: plain text, JSON (schema 1) and an SVG plot per view ("forward",
/// "reverse", "loops" when a trace is dynamic).
std::string fitReportText(const PlateFit& fit);
std::string fitReportJson(const PlateFit& fit);
std::vector<std::pair<std::string, std::string>> fitPlots(const PlateFit& fit);
/// Writes <name>.json (the type, usable with `use` in a netlist), fit-report.txt,
/// fit-report.json and the plots into `dir`; returns the paths written.
std::vector<std::string> writeFitFiles(const PlateFit& fit, const std::string& dir);

}  // namespace disc

namespace disc {

/// The current (A) the model of `type` draws at each point of a trace: the static curve point
/// by point at the point's temperature (or `kelvin`), or, for a trace with a time column, a
/// transient of `plates` plates in series driven by the trace's own voltage, starting from
/// rest (no charge, plate at ambient) (ambient: the trace's mean temperature, or `kelvin`).
std::vector<double> modelCurrent(const PlateType& type, const Trace& trace, int plates = 1,
                                 double kelvin = 298.15, double reltol = 1e-6);

}  // namespace disc
