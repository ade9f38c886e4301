// The fit report: parameters with uncertainties, residuals, warnings, the health verdict and
// plots of measured against fitted current.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include "disc/limits.hpp"
#include "disc/plate_fit.hpp"
#include "disc/session.hpp"
#include "disc/supply_report.hpp"

#include "analysis/text_blocks.hpp"

namespace disc {
namespace {

bool isSelenium(const PlateFit& fit) {
  return fit.type.material == "selenium";
}

}  // namespace

std::string fitReportText(const PlateFit& fit) {
  std::string s = fmt::format("PLATE FIT: {} ({})\n", fit.type.name, fit.type.material);
  s += detail::wrapText(fit.type.description, "  ");
  s += fmt::format("  {} points fitted, rms residual {:.4g} mA, rms weighted residual {:.3g}\n",
                   fit.points, 1e3 * fit.rmsCurrent, fit.rmsWeighted);
  s += "\nPARAMETERS (interval: coverage factor k = 2, about 95 %; static stages by profile "
       "likelihood)\n";
  s += fmt::format("  {:24} {:>12} {:>25} {:9} {:>11}  {}\n", "name", "value", "interval", "unit",
                   "start", "stage");
  for (const auto& p : fit.parameters)
    s += fmt::format("  {:24} {:12.5g} {:>25} {:9} {:11.4g}  {}{}\n", p.name, p.value,
                     std::isfinite(p.uncertainty) ? fmt::format("{:.4g} .. {:.4g}", p.low, p.high)
                                                  : std::string("undetermined"),
                     p.unit, p.start, p.stage,
                     p.atBound        ? " (at bound)"
                     : p.identifiable ? ""
                                      : " (not determined)");
  s += "\nSTAGES\n";
  for (const auto& b : fit.binning) s += detail::wrapText("binned " + b, "  ");
  for (const auto& st : fit.stages) s += detail::wrapText(st, "  ");
  const auto& h = fit.health;
  s += fmt::format("\nHEALTH: {} (against {} at {:.0f} degC)\n", h.level, h.reference,
                   h.temperature - 273.15);
  for (const auto& f : h.findings) s += detail::listItem(f);
  s += detail::closingBlock(fit.warnings, safetyCautions(isSelenium(fit)), simulationDisclaimer());
  return s;
}

std::string fitReportJson(const PlateFit& fit) {
  nlohmann::json j;
  j["schema"] = 1;
  j["kind"] = "plate-fit";
  j["type"] = nlohmann::json::parse(PlateLibrary::toJson(fit.type));
  j["points"] = fit.points;
  j["rms_current_A"] = fit.rmsCurrent;
  j["rms_weighted"] = fit.rmsWeighted;
  j["evaluations"] = fit.evaluations;
  auto& ps = j["parameters"] = nlohmann::json::array();
  // JSON has no infinity: an undetermined uncertainty is written as null.
  const auto num = [](double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); };
  for (const auto& p : fit.parameters)
    ps.push_back({{"name", p.name},
                  {"unit", p.unit},
                  {"stage", p.stage},
                  {"value", p.value},
                  {"standard_uncertainty", num(p.uncertainty)},
                  {"expanded_uncertainty_k2", num(p.expanded())},
                  {"log_scale", p.logScale},
                  {"interval_k2", {num(p.low), num(p.high)}},
                  {"interval_method", p.interval},
                  {"start", p.start},
                  {"bounds", {p.lower, p.upper}},
                  {"at_bound", p.atBound},
                  {"identifiable", p.identifiable}});
  j["stages"] = fit.stages;
  j["binning"] = fit.binning;
  j["warnings"] = fit.warnings;
  const auto& h = fit.health;
  j["health"] = {{"level", h.level},
                 {"reference", h.reference},
                 {"temperature_K", h.temperature},
                 {"rated_current_A", h.ratedCurrent},
                 {"forward_drop_V", h.forwardDrop},
                 {"forward_drop_healthy_V", h.forwardDropHealthy},
                 {"reverse_voltage_V", h.reverseVoltage},
                 {"reverse_current_A", h.reverseCurrent},
                 {"reverse_current_healthy_A", h.reverseCurrentHealthy},
                 {"forward_ratio", h.forwardRatio},
                 {"reverse_ratio", h.reverseRatio},
                 {"forming_estimate", h.formingEstimate},
                 {"findings", h.findings}};
  j["cautions"] = safetyCautions(isSelenium(fit));
  j["disclaimer"] = simulationDisclaimer();
  return j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
}

std::vector<std::pair<std::string, std::string>> fitPlots(const PlateFit& fit) {
  std::vector<PlotSeries> fwd, rev, loops;
  for (const auto& c : fit.curves) {
    // Static points in voltage order so the lines read as curves.
    std::vector<std::size_t> order(c.voltage.size());
    for (std::size_t k = 0; k < order.size(); ++k) order[k] = k;
    if (!c.dynamic)
      std::sort(order.begin(), order.end(),
                [&](std::size_t a, std::size_t b) { return c.voltage[a] < c.voltage[b]; });
    PlotSeries mf{c.trace + " measured", {}, {}}, ff{c.trace + " fitted", {}, {}};
    PlotSeries mr = mf, fr = ff;
    for (const auto k : order) {
      auto& m = c.voltage[k] >= 0 ? mf : mr;
      auto& f = c.voltage[k] >= 0 ? ff : fr;
      m.x.push_back(c.voltage[k]);
      m.y.push_back(1e3 * c.measured[k]);
      f.x.push_back(c.voltage[k]);
      f.y.push_back(1e3 * c.fitted[k]);
    }
    if (c.dynamic) {
      PlotSeries ml{c.trace + " measured", c.voltage, {}}, fl{c.trace + " fitted", c.voltage, {}};
      for (std::size_t k = 0; k < c.voltage.size(); ++k) {
        ml.y.push_back(1e3 * c.measured[k]);
        fl.y.push_back(1e3 * c.fitted[k]);
      }
      loops.push_back(std::move(ml));
      loops.push_back(std::move(fl));
      continue;
    }
    fwd.push_back(std::move(mf));
    fwd.push_back(std::move(ff));
    rev.push_back(std::move(mr));
    rev.push_back(std::move(fr));
  }
  std::vector<std::pair<std::string, std::string>> plots;
  if (!fwd.empty())
    plots.emplace_back("fit-forward",
                       svgPlot("Forward: measured and fitted", "V per plate", "mA", fwd));
  if (!rev.empty())
    plots.emplace_back("fit-reverse",
                       svgPlot("Reverse: measured and fitted", "V per plate", "mA", rev));
  if (!loops.empty())
    plots.emplace_back("fit-loops", svgPlot("Loops of the timed traces: measured and fitted",
                                            "V per plate", "mA", loops));
  return plots;
}

std::vector<std::string> writeFitFiles(const PlateFit& fit, const std::string& dir) {
  std::vector<std::pair<std::string, std::string>> files = {
      {safeFileStem(fit.type.name) + ".json", PlateLibrary::toJson(fit.type)},
      {"fit-report.txt", fitReportText(fit)},
      {"fit-report.json", fitReportJson(fit)}};
  for (const auto& [name, svg] : fitPlots(fit)) files.emplace_back(name + ".svg", svg);
  return writeFiles(dir, files);
}

}  // namespace disc
