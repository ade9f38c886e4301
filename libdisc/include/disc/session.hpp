// Running a netlist and writing what a run produces (report, tables, plots).
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "disc/netlist.hpp"
#include "disc/result.hpp"
#include "disc/supply_report.hpp"

namespace disc {

struct AnalysisOutcome {
  AnalysisRequest request;
  Result result;
};

struct RunOutcome {
  std::vector<AnalysisOutcome> analyses;
  bool hasReport = false;  ///< a supply report exists (an output statement and a transient)
  SupplyReport report;
};

/// Runs every analysis of the netlist; the last transient feeds the supply report when the
/// netlist names its output. `progress(time, stop)` may return false to cancel.
RunOutcome runNetlist(const Netlist& netlist, std::function<bool(double, double)> progress = {});

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
/// Line plot as SVG. Each series is (name, x, y).
struct PlotSeries {
  std::string name;
  std::vector<double> x, y;
};
std::string svgPlot(const std::string& title, const std::string& xLabel, const std::string& yLabel,
                    const std::vector<PlotSeries>& series);
/// The plots of a run: name (file stem) and SVG text.
std::vector<std::pair<std::string, std::string>> runPlots(const Netlist& netlist,
                                                          const RunOutcome& outcome);

/// Writes report.json, report.html, one CSV per analysis and the SVG plots into `dir` (created
/// if missing). Every file is written under a temporary name and renamed into place.
std::vector<std::string> writeRunFiles(const Netlist& netlist, const RunOutcome& outcome,
                                       const std::string& dir);
/// Writes each (name, content) into `dir` (created if missing), atomically; returns the paths.
std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files);
/// Writes a file atomically (temporary name, then rename); throws Error on failure.
void writeFileAtomically(const std::string& path, const std::string& content);

}  // namespace disc
