// Running a netlist and writing what a run produces (report, tables, plots).
#pragma once

#include <cstdio>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "disc/files.hpp"
#include "disc/netlist.hpp"
#include "disc/result.hpp"
#include "disc/supply_report.hpp"

namespace disc {

/// A rating first reached during a warm-up (the supply report's verdicts, judged at every slow
/// step, and the hottest plate's own temperature against its limit).
struct LimitCrossing {
  std::string what;  ///< "SR1: peak reverse voltage per plate"
  double time = 0;   ///< s, interpolated between the slow steps around the crossing
  double limit = 0;
  std::string unit;
};

/// A figure at the start and at the end of a warm-up.
struct WarmUpTrend {
  std::string what, unit;
  double start = 0, end = 0;
};

/// What a warm-up found, beyond its series.
struct WarmUpSummary {
  double duration = 0, endTime = 0;  ///< s
  std::string stoppedBy;             ///< empty, or why it ended early
  std::vector<LimitCrossing> firstLimits;
  std::vector<WarmUpTrend> trends;
  std::vector<FailureEvent> failures;
  EnvelopeStats stats;
};

struct AnalysisOutcome {
  AnalysisRequest request;
  /// Transient and operating point: the run; periodic: one settled period; warm-up: its series
  /// (one row per slow step: mean, min() and max() of each signal over the settled period).
  Result result;
  WarmUpSummary warmUp;  ///< for a warm-up
  /// A transient whose rows went to its CSV file as it ran (runNetlist with a StagedFolder):
  /// the file is in the folder, and `result` keeps only the rows the report and plots read
  /// (TransientOptions::keepLast).
  bool streamed = false;
};

struct RunOutcome {
  std::vector<AnalysisOutcome> analyses;
  /// A supply report exists: an output statement and a transient, periodic or warm-up analysis
  /// (the last one feeds it; a warm-up's from its settled period at the end).
  bool hasReport = false;
  std::size_t reportAnalysis = 0;  ///< index in `analyses` of the one behind the report
  SupplyReport report;
};

/// A warm-up of the netlist as its `run warm-up` statement makes it: the series records
/// `options.record`, the run's own signals and per stack its temperature, forming, leakage and
/// dissipation (and those of its first plates); the summary gives the trends and the time each
/// rating is first reached (with an output statement). With an output statement and `report`
/// given, `*report` is the supply report of the settled period at the end.
AnalysisOutcome warmUpAnalysis(const Netlist& netlist, EnvelopeOptions options,
                               SupplyReport* report = nullptr);

/// The warm-up block of the text report: trends, first limits, failures.
std::string warmUpText(const WarmUpSummary& summary);

/// Runs every analysis of the netlist; the last transient feeds the supply report when the
/// netlist names its output. `progress(time, stop)` may return false to cancel. With a
/// `folder` each transient writes its rows to transient-N.csv in it as it runs (the name
/// writeRunFiles gives it, which then leaves it) and keeps in memory only what the report
/// and the plots read, so memory stays bounded on any duration; the folder's target is left
/// as it was until writeRunFiles commits it, and a run that throws leaves it so.
RunOutcome runNetlist(const Netlist& netlist, std::function<bool(double, double)> progress = {},
                      StagedFolder* folder = nullptr);

/// The signals a run of this netlist records: `extra`, the file's own, and those the supply
/// report needs when the netlist names its output.
std::vector<std::string> runSignals(const Netlist& netlist, const std::vector<std::string>& extra);

/// The report as plain text for a terminal.
std::string reportText(const SupplyReport& report);
/// The report as JSON (schema SupplyReport::kSchema; fields in docs/report.md).
std::string reportJson(const SupplyReport& report);
/// One self-contained HTML page: summary, tables and inline SVG plots.
std::string reportHtml(const Netlist& netlist, const RunOutcome& outcome);
/// A Result as CSV: a header of "name [unit]" columns, then one row per time point.
std::string resultCsv(const Result& result);
/// The same CSV text written row by row as a run goes (TransientOptions::sink), into a file
/// of a StagedFolder, or into a StagedFile moved over `path` at the end. A run that throws or
/// is cancelled leaves no file (nor a partial one in the folder).
class CsvFile : public RowSink {
 public:
  /// `name` in `folder`, which must outlive the CsvFile.
  CsvFile(StagedFolder& folder, std::string name);
  explicit CsvFile(std::string path);
  ~CsvFile() override;
  CsvFile(const CsvFile&) = delete;
  CsvFile& operator=(const CsvFile&) = delete;
  void begin(const Result& layout) override;
  void row(double time, const std::vector<double>& values) override;
  void end() override;
  /// Where the file is (or will be, once its folder is committed).
  const std::string& path() const { return path_; }
  std::size_t rows() const { return rows_; }  ///< rows written so far

 private:
  void flush();
  static constexpr std::size_t kFlushBytes = 1 << 16;
  StagedFolder* folder_ = nullptr;
  std::string name_, path_, buffer_;
  std::unique_ptr<StagedFile> file_;  // without a folder
  bool open_ = false;
  std::size_t signals_ = 0, rows_ = 0;
};
/// Line plot as SVG. Each series is (name, x, y).
struct PlotSeries {
  std::string name;
  std::vector<double> x, y;
};
/// One plot: axes named by quantity and unit, a unit of V, A, W, s, Hz, F or ohm scaled by the
/// SI prefix that fits the data ("current (mA)").
struct Plot {
  std::string name;  ///< file stem
  std::string title;
  std::string xQuantity, xUnit, yQuantity, yUnit;
  std::vector<PlotSeries> series;
  /// Every series has the first one's x (a time axis): the HTML page draws it interactively.
  bool timeSeries = false;
  std::string note;  ///< a line under the plot, e.g. what it leaves out
};
/// The plot as SVG text (the legend in the plot's right margin, a distinct colour per series).
std::string svgPlot(const Plot& plot);
/// Shorthand for a plot whose axis labels are taken as they are (no SI scaling).
std::string svgPlot(const std::string& title, const std::string& xLabel, const std::string& yLabel,
                    const std::vector<PlotSeries>& series);
/// The plots of a run, grouped (docs/report.md, "Plots").
std::vector<Plot> runPlotList(const Netlist& netlist, const RunOutcome& outcome);
/// The plots of a run: name (file stem) and SVG text.
std::vector<std::pair<std::string, std::string>> runPlots(const Netlist& netlist,
                                                          const RunOutcome& outcome);
/// A value with the SI prefix that brings it into [1, 1000) and `digits` significant digits:
/// siValue(0.0008, "A") is "800.0 µA"... "0.8000 mA" never; 0 is "0 A".
std::string siValue(double value, const std::string& unit, int digits = 4);
/// The colour of series `k` of `n` in a plot: all `n` distinct (CSS colour text).
std::string seriesColour(std::size_t k, std::size_t n);

/// Writes report.json, report.html, one CSV per analysis and the SVG plots as the whole of
/// folder `dir`, swapped into place at once (a StagedFolder, disc/files.hpp).
std::vector<std::string> writeRunFiles(const Netlist& netlist, const RunOutcome& outcome,
                                       const std::string& dir);
/// The same into the folder the run streamed its transients' CSV files into (runNetlist), which
/// it then commits: the streamed files, the others and the manifest swapped into place
/// together. Throws Error when a streamed CSV is not in `folder`.
std::vector<std::string> writeRunFiles(const Netlist& netlist, const RunOutcome& outcome,
                                       StagedFolder& folder);
}  // namespace disc
