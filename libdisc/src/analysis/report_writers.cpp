// Report text, JSON, HTML, CSV and SVG plots; atomic file writing.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "disc/error.hpp"
#include "disc/limits.hpp"
#include "disc/session.hpp"

#include "analysis/text_blocks.hpp"
#include "analysis/text_fields.hpp"
#include "disc/version.hpp"

namespace disc {
namespace {

double toC(double kelvin) {
  return kelvin - 273.15;
}

}  // namespace

/// HTML text with <, >, & and " escaped.
std::string escapeHtml(const std::string& s) {
  std::string o;
  for (char c : s) {
    switch (c) {
      case '<':
        o += "&lt;";
        break;
      case '>':
        o += "&gt;";
        break;
      case '&':
        o += "&amp;";
        break;
      case '"':
        o += "&quot;";
        break;
      default:
        o += c;
    }
  }
  return o;
}

namespace {

nlohmann::json verdictJson(const Verdict& v) {
  return {{"figure", v.figure}, {"value", v.value}, {"limit", v.limit},
          {"unit", v.unit},     {"level", v.level}, {"rule", v.rule}};
}

/// "Nice" tick positions covering [lo, hi].
std::vector<double> ticks(double lo, double hi) {
  const double span = hi - lo;
  const double raw = span / 5.0;
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  const double norm = raw / mag;
  const double step = (norm < 1.5 ? 1.0 : norm < 3.5 ? 2.0 : norm < 7.5 ? 5.0 : 10.0) * mag;
  std::vector<double> t;
  for (double v = std::ceil(lo / step) * step; v <= hi + 1e-9 * span; v += step) t.push_back(v);
  return t;
}

nlohmann::json failuresJson(const std::vector<FailureEvent>& events) {
  nlohmann::json a = nlohmann::json::array();
  for (const auto& e : events)
    a.push_back({{"kind", thermalConditionName(e.kind)},
                 {"body", e.body},
                 {"device", e.device},
                 {"plates", e.plates},
                 {"time_s", e.time},
                 {"temperature_K", e.temperature},
                 {"destruction_K", e.destruction},
                 {"fails_to", failureModeName(e.mode)},
                 {"mechanism", e.mechanism},
                 {"cause", e.cause},
                 {"verdict", e.verdict()}});
  return a;
}

/// The losses by kind of device, largest first: "12.300 W (stack 10.1 W, resistor 2.2 W)".
std::string lossSummary(const std::vector<PowerShare>& losses) {
  std::vector<std::pair<std::string, double>> kinds;
  double total = 0.0;
  for (const auto& l : losses) {
    total += l.power;
    auto it =
        std::find_if(kinds.begin(), kinds.end(), [&](const auto& k) { return k.first == l.kind; });
    if (it == kinds.end())
      kinds.emplace_back(l.kind, l.power);
    else
      it->second += l.power;
  }
  std::stable_sort(kinds.begin(), kinds.end(),
                   [](const auto& a, const auto& b) { return a.second > b.second; });
  std::string parts;
  for (const auto& [kind, w] : kinds)
    parts += fmt::format("{}{} {:.3f} W", parts.empty() ? "" : ", ", kind, w);
  return fmt::format("{:10.3f} W ({})", total, parts);
}

}  // namespace

std::string reportText(const SupplyReport& r) {
  std::string s;
  auto line = [&](const std::string& l) { s += l + "\n"; };
  line(r.title.empty() ? std::string("libdisc supply report")
                       : fmt::format("libdisc supply report: {}", r.title));
  line(fmt::format("file {}, ambient {:.1f} degC", r.file, toC(r.ambient)));
  if (r.basis == "periodic")
    line(
        fmt::format("figures over one period of the periodic steady state at {:g} Hz (no "
                    "switch-on surge: run a transient from cold for it)",
                    r.frequency));
  else if (r.frequency > 0)
    line(fmt::format("figures over {} settled cycle(s) of {:g} Hz, {:.4f} to {:.4f} s{}", r.cycles,
                     r.frequency, r.window0, r.window1, r.settled ? "" : " (NOT settled)"));
  line("");
  if (!r.failures.empty()) {
    line("FAILURE");
    for (const auto& v : failureVerdicts(r.failures)) s += detail::listItem(v);
    line("");
  }
  const auto& o = r.output;
  line("OUTPUT");
  line(fmt::format("  DC voltage            {:10.3f} V", o.mean));
  line(fmt::format(
      "  ripple                {:10.3f} V peak-to-peak, {:.3f} V rms (ripple factor {:.4f})",
      o.ripplePeakToPeak, o.rippleRms, o.rippleFactor));
  line(fmt::format("  load current          {:10.4f} A", o.loadCurrent));
  line(fmt::format(
      "  output power          {:10.3f} W{}", o.outputPower,
      o.loadState.empty() ? "" : fmt::format(" (the load is a battery, {})", o.loadState)));
  line(fmt::format(
      "  input power           {:10.3f} W from {}   efficiency {}   power factor {:.3f}",
      o.inputPower, o.inputs.empty() ? "no source" : fmt::format("{}", fmt::join(o.inputs, ", ")),
      o.loadState == "discharging" ? std::string("none (the load discharges)")
                                   : fmt::format("{:.1f} %", 100 * o.efficiency),
      o.powerFactor));
  for (const auto& b : o.batteries)
    line(fmt::format("  battery {:<14}{:10.3f} W, {:.4g} A: {}", b.name, b.power, b.current,
                     b.state));
  if (!o.losses.empty()) line("  losses                " + lossSummary(o.losses));
  if (o.hasTransformer)
    line(fmt::format("  transformer secondary {:10.4f} A rms, {:.2f} VA", o.secondaryRmsCurrent,
                     o.secondaryVA));
  for (const auto& st : r.stacks) {
    line("");
    line(fmt::format("STACK {}: {} x {} plate(s) of {} ({}, {}), {} load", st.name, st.arms,
                     st.plates, st.type, st.material, st.mode, st.loadKind));
    line(fmt::format(
        "  forward current       {:.4f} A average, {:.4f} A rms, {:.4f} A peak{}",
        st.currentAverage, st.currentRms, st.currentPeak,
        st.surgeKnown ? fmt::format("; switch-on surge {:.3f} A", st.surgePeak) : std::string()));
    line(fmt::format(
        "  dissipation           {:.3f} W forward + {:.3f} W reverse ({:.3f} W per plate)",
        st.powerForward, st.powerReverse, st.powerPerPlate));
    line(fmt::format(
        "  hottest plate         {:.1f} degC at end of run, {}, limit {:.0f} degC, destroyed at "
        "{:.0f} degC",
        toC(st.temperatureEnd),
        st.noSteadyState
            ? std::string("no steady state below destruction")
            : fmt::format("{:.1f} degC steady-state estimate", toC(st.temperatureSteady)),
        toC(st.temperatureLimit), toC(st.destructionTemperature)));
    if (st.arms > 1) {
      std::string shares;
      for (double a : st.armShare) shares += fmt::format(" {:.1f} %", 100 * a);
      line("  arm current shares   " + shares);
    }
    if (st.formingStart < 0.999 || st.formingEnd < 0.999)
      line(fmt::format("  forming state         {:.3f} at start, {:.3f} at end", st.formingStart,
                       st.formingEnd));
    for (const auto& v : st.verdicts)
      line(fmt::format("  [{:<8}] {}: {:.3g} {} (limit {:.3g} {})", v.level, v.figure, v.value,
                       v.unit, v.limit, v.unit));
  }
  for (const auto& part : r.parts) {
    line("");
    line(fmt::format("{} {}", part.kind, part.name));
    for (const auto& v : part.verdicts)
      line(fmt::format("  [{:<8}] {}: {:.3g} {} (limit {:.3g} {})", v.level, v.figure, v.value,
                       v.unit, v.limit, v.unit));
  }
  line("");
  line(fmt::format("OVERALL: {}", r.worst));
  s += detail::closingBlock(r.warnings, r.cautions, r.disclaimer);
  return s;
}

std::string reportJson(const SupplyReport& r) {
  nlohmann::json j;
  j["schema"] = SupplyReport::kSchema;
  j["generator"] = std::string("libdisc ") + kVersion;
  j["title"] = r.title;
  j["file"] = r.file;
  j["ambient_K"] = r.ambient;
  j["frequency_Hz"] = r.frequency;
  j["basis"] = r.basis;
  j["settled"] = r.settled;
  j["cycles"] = r.cycles;
  j["window_s"] = {r.window0, r.window1};
  const auto& o = r.output;
  nlohmann::json losses = nlohmann::json::object();
  for (const auto& l : o.losses) losses[l.device] = l.power;
  nlohmann::json batteries = nlohmann::json::array();
  for (const auto& b : o.batteries)
    batteries.push_back(
        {{"name", b.name}, {"current_A", b.current}, {"power_W", b.power}, {"state", b.state}});
  j["output"] = {{"mean_V", o.mean},
                 {"ripple_pp_V", o.ripplePeakToPeak},
                 {"ripple_rms_V", o.rippleRms},
                 {"ripple_factor", o.rippleFactor},
                 {"load_current_A", o.loadCurrent},
                 {"output_power_W", o.outputPower},
                 {"input_power_W", o.inputPower},
                 {"efficiency", o.efficiency},
                 {"load_state", o.loadState},
                 {"inputs", o.inputs},
                 {"batteries", batteries},
                 {"losses_W", losses},
                 {"power_factor", o.powerFactor},
                 {"secondary_rms_current_A", o.secondaryRmsCurrent},
                 {"secondary_VA", o.secondaryVA}};
  j["stacks"] = nlohmann::json::array();
  for (const auto& s : r.stacks) {
    nlohmann::json v = nlohmann::json::array();
    for (const auto& x : s.verdicts) v.push_back(verdictJson(x));
    j["stacks"].push_back(
        {{"name", s.name},
         {"type", s.type},
         {"material", s.material},
         {"mode", s.mode},
         {"load_kind", s.loadKind},
         {"rectifier", s.rectifier},
         {"plates_per_arm", s.plates},
         {"arms", s.arms},
         {"peak_reverse_per_plate_V", s.peakReverse},
         {"rms_reverse_per_plate_V", s.rmsReverse},
         {"rms_reverse_rating_V", s.rmsRating},
         {"peak_reverse_rating_V", s.peakRating},
         {"current_average_A", s.currentAverage},
         {"current_rms_A", s.currentRms},
         {"current_peak_A", s.currentPeak},
         {"current_density_average_A_per_cm2", s.densityAverage},
         {"current_density_rating_A_per_cm2", s.densityRating},
         {"switch_on_surge_A", s.surgeKnown ? nlohmann::json(s.surgePeak) : nlohmann::json()},
         {"dissipation_forward_W", s.powerForward},
         {"dissipation_reverse_W", s.powerReverse},
         {"dissipation_per_plate_W", s.powerPerPlate},
         {"temperature_end_K", s.temperatureEnd},
         {"temperature_steady_estimate_K", s.temperatureSteady},
         {"temperature_limit_K", s.temperatureLimit},
         {"no_steady_state", s.noSteadyState},
         {"destruction_temperature_K", s.destructionTemperature},
         {"arm_share", s.armShare},
         {"forming_start", s.formingStart},
         {"forming_end", s.formingEnd},
         {"verdicts", v}});
  }
  j["parts"] = nlohmann::json::array();
  for (const auto& part : r.parts) {
    auto v = nlohmann::json::array();
    for (const auto& x : part.verdicts) v.push_back(verdictJson(x));
    j["parts"].push_back({{"name", part.name}, {"kind", part.kind}, {"verdicts", v}});
  }
  j["failures"] = failuresJson(r.failures);
  j["overall"] = r.worst;
  j["warnings"] = r.warnings;
  j["cautions"] = r.cautions;
  j["disclaimer"] = r.disclaimer;
  j["run"] = {{"method", r.stats.method},
              {"accepted_steps", r.stats.acceptedSteps},
              {"rejected_steps", r.stats.rejectedSteps},
              {"newton_iterations", r.stats.newtonIterations},
              {"wall_s", r.stats.wallSeconds}};
  return j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
}

/// One CSV field per RFC 4180 section 2: quoted when it holds a comma, a double quote or a line
/// break (signal names such as "v:b,gnd" do), with each double quote doubled.
std::string csvField(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string q = "\"";
  for (char c : text) {
    if (c == '"') q += '"';
    q += c;
  }
  return q + '"';
}

std::string resultCsv(const Result& r) {
  // RFC 4180: a header record, then one record per time point, each ended by CRLF.
  std::string s = "time [s]";
  for (const auto& n : r.signals()) s += "," + csvField(fmt::format("{} [{}]", n, r.unit(n)));
  s += "\r\n";
  const auto& t = r.time();
  for (std::size_t k = 0; k < t.size(); ++k) {
    s += fmt::format("{:.12g}", t[k]);
    for (const auto& n : r.signals()) s += fmt::format(",{:.10g}", r[n][k]);
    s += "\r\n";
  }
  return s;
}

std::string svgPlot(const std::string& title, const std::string& xLabel, const std::string& yLabel,
                    const std::vector<PlotSeries>& series) {
  const double W = 720, H = 360, L = 80, R = 150, T = 40, B = 50;
  double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = -INFINITY;
  for (const auto& s : series)
    for (std::size_t k = 0; k < s.x.size(); ++k) {
      x0 = std::min(x0, s.x[k]);
      x1 = std::max(x1, s.x[k]);
      y0 = std::min(y0, s.y[k]);
      y1 = std::max(y1, s.y[k]);
    }
  if (!(x1 > x0)) x1 = x0 + 1.0;
  if (!(y1 > y0)) {
    y0 -= 0.5;
    y1 += 0.5;
  }
  const double pad = 0.05 * (y1 - y0);
  y0 -= pad;
  y1 += pad;
  auto px = [&](double x) { return L + (x - x0) / (x1 - x0) * (W - L - R); };
  auto py = [&](double y) { return H - B - (y - y0) / (y1 - y0) * (H - T - B); };
  static const char* palette[] = {"#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad", "#d68910", "#17a2b8",
                                  "#6d4c41", "#e91e63", "#455a64", "#7cb342", "#ff7043", "#3949ab"};
  std::string s = fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} "
      "{1}\" "
      "font-family=\"sans-serif\" font-size=\"12\">\n<rect width=\"{0}\" height=\"{1}\" "
      "fill=\"white\"/>\n"
      "<text x=\"{2}\" y=\"22\" font-size=\"15\" font-weight=\"bold\">{3}</text>\n",
      W, H, L, escapeHtml(title));
  for (double tx : ticks(x0, x1))
    s += fmt::format(
        "<line x1=\"{0:.1f}\" y1=\"{1}\" x2=\"{0:.1f}\" y2=\"{2}\" stroke=\"#e4e4e4\"/>"
        "<text x=\"{0:.1f}\" y=\"{3}\" text-anchor=\"middle\">{4:g}</text>\n",
        px(tx), T, H - B, H - B + 16, std::abs(tx) < 1e-9 * (x1 - x0) ? 0.0 : tx);
  for (double ty : ticks(y0, y1))
    s += fmt::format(
        "<line x1=\"{0}\" y1=\"{1:.1f}\" x2=\"{2}\" y2=\"{1:.1f}\" stroke=\"#e4e4e4\"/>"
        "<text x=\"{3}\" y=\"{4:.1f}\" text-anchor=\"end\">{5:g}</text>\n",
        L, py(ty), W - R, L - 6, py(ty) + 4, std::abs(ty) < 1e-9 * (y1 - y0) ? 0.0 : ty);
  s += fmt::format(
      "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#444\"/>\n", L, T,
      W - L - R, H - T - B);
  s += fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>\n", (L + W - R) / 2,
                   H - 12, escapeHtml(xLabel));
  s += fmt::format(
      "<text x=\"18\" y=\"{0}\" text-anchor=\"middle\" transform=\"rotate(-90 18 "
      "{0})\">{1}</text>\n",
      (T + H - B) / 2, escapeHtml(yLabel));
  for (std::size_t k = 0; k < series.size(); ++k) {
    const auto& sr = series[k];
    const char* colour = palette[k % 12];
    const std::size_t stride = std::max<std::size_t>(1, sr.x.size() / 3000);
    std::string pts;
    for (std::size_t i = 0; i < sr.x.size(); i += stride)
      pts += fmt::format("{:.1f},{:.1f} ", px(sr.x[i]), py(sr.y[i]));
    s += fmt::format("<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"1.3\" points=\"{}\"/>\n",
                     colour, pts);
    s += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"{3}\" stroke-width=\"2\"/>"
        "<text x=\"{4}\" y=\"{5}\">{6}</text>\n",
        W - R + 10, T + 10 + 16 * k, W - R + 28, colour, W - R + 32, T + 14 + 16 * k,
        escapeHtml(sr.name));
  }
  s += "</svg>\n";
  return s;
}

namespace {

/// A warm-up's plots over minutes: the output's period mean, minimum and maximum, and per stack
/// its hottest plate, lowest forming state and leakage current.
std::vector<std::pair<std::string, std::string>> warmUpPlots(const Netlist& nl,
                                                             const Result& series) {
  std::vector<std::pair<std::string, std::string>> plots;
  std::vector<double> minutes = series.time();
  for (double& m : minutes) m /= 60.0;
  const std::string v = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
  if (series.has(v))
    plots.emplace_back("warm-up-output",
                       svgPlot("Output voltage during the warm-up", "time (min)", "V",
                               {{"period mean", minutes, series[v]},
                                {"period minimum", minutes, series["min(" + v + ")"]},
                                {"period maximum", minutes, series["max(" + v + ")"]}}));
  std::vector<PlotSeries> temps, forming, leakage;
  for (const auto& d : nl.circuit.devices()) {
    const std::string n = d->name();
    if (!series.has("temp:" + n) || !series.has("form:" + n)) continue;
    PlotSeries t{"hottest plate of " + n, minutes, series["temp:" + n]};
    for (double& x : t.y) x -= 273.15;
    temps.push_back(std::move(t));
    forming.push_back({"lowest forming state of " + n, minutes, series["form:" + n]});
    if (series.has("irev:" + n)) {
      PlotSeries l{"mean leakage of " + n, minutes, series["irev:" + n]};
      for (double& x : l.y) x *= 1e3;
      leakage.push_back(std::move(l));
    }
  }
  if (!temps.empty()) {
    plots.emplace_back("warm-up-temperatures", svgPlot("Plate temperatures during the warm-up",
                                                       "time (min)", "degC", temps));
    plots.emplace_back("warm-up-forming",
                       svgPlot("Forming state during the warm-up", "time (min)", "F", forming));
  }
  if (!leakage.empty())
    plots.emplace_back("warm-up-leakage", svgPlot("Reverse (leakage) current during the warm-up",
                                                  "time (min)", "mA", leakage));
  return plots;
}

}  // namespace

std::vector<std::pair<std::string, std::string>> runPlots(const Netlist& nl,
                                                          const RunOutcome& out) {
  std::vector<std::pair<std::string, std::string>> plots;
  if (!out.hasReport) return plots;
  const SupplyReport& rep = out.report;
  const AnalysisOutcome& behind = out.analyses.at(out.reportAnalysis);
  if (behind.request.kind == AnalysisRequest::Kind::WarmUp) return warmUpPlots(nl, behind.result);
  const Result* r = &behind.result;
  const auto& t = r->time();
  auto window = [&](const std::vector<double>& y, std::vector<double>& xs,
                    std::vector<double>& ys) {
    for (std::size_t k = 0; k < t.size(); ++k)
      if (t[k] >= rep.window0) {
        xs.push_back(t[k]);
        ys.push_back(y[k]);
      }
  };
  const std::string outSig = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
  plots.emplace_back("output-voltage",
                     svgPlot("Output voltage", "time (s)", "V", {{outSig, t, (*r)[outSig]}}));
  std::vector<PlotSeries> temps;
  for (const auto& st : rep.stacks) {
    const std::string stem = safeFileStem(st.name);
    PlotSeries cur{"i:" + st.name, {}, {}}, rev{"vrev:" + st.name, {}, {}};
    window((*r)["i:" + st.name], cur.x, cur.y);
    window((*r)["vrev:" + st.name], rev.x, rev.y);
    plots.emplace_back(stem + "-current", svgPlot(st.name + ": current over the settled window",
                                                  "time (s)", "A", {cur}));
    plots.emplace_back(
        stem + "-reverse-voltage",
        svgPlot(st.name + ": largest reverse voltage per plate", "time (s)", "V", {rev}));
    std::vector<PlotSeries> iv;
    const int traced = std::min(st.plates * st.arms, 12);
    for (int n = 1; n <= traced; ++n) {
      const int arm = (n - 1) / st.plates + 1;
      PlotSeries s{fmt::format("plate {}", n), {}, {}};
      std::vector<double> xs, v, ys, i;
      window((*r)[fmt::format("vrev:{}#{}", st.name, n)], xs, v);
      xs.clear();
      window((*r)[fmt::format("iarm:{}#{}", st.name, arm)], xs, i);
      for (double& x : v) x = -x;
      s.x = v;
      s.y = i;
      iv.push_back(std::move(s));
    }
    plots.emplace_back(stem + "-plate-iv",
                       svgPlot(st.name + ": plate I-V trajectories", "plate voltage (V)", "A", iv));
    PlotSeries tp{"hottest plate of " + st.name, t, (*r)["temp:" + st.name]};
    for (double& v : tp.y) v -= 273.15;
    temps.push_back(std::move(tp));
  }
  if (!temps.empty())
    plots.emplace_back("temperatures", svgPlot("Plate temperatures", "time (s)", "degC", temps));
  return plots;
}

std::string reportHtml(const Netlist& nl, const RunOutcome& out) {
  const SupplyReport& r = out.report;
  std::string h = "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>" +
                  escapeHtml(r.title.empty() ? nl.path : r.title) +
                  "</title>\n<style>"
                  "body{font-family:sans-serif;max-width:1000px;margin:2em auto;color:#222}"
                  "table{border-collapse:collapse;margin:0.5em 0}td,th{border:1px solid "
                  "#bbb;padding:3px 8px;text-align:left}"
                  ".ok{background:#e3f1e3}.marginal{background:#fff3cd}.exceeds{background:#f8d7da}"
                  ".fails{background:#e6a0a8}"
                  ".caution{border-left:4px solid #b03a2e;padding-left:8px}</style></head><body>\n";
  h += "<h1>" + escapeHtml(r.title.empty() ? "Supply report" : r.title) + "</h1>\n";
  h += fmt::format(
      "<p>File {}; ambient {:.1f} &deg;C; {} settled cycle(s) at {:g} Hz ({:.4f}-{:.4f} s){}. "
      "Overall: <span class=\"{}\">{}</span>.</p>\n",
      escapeHtml(r.file), toC(r.ambient), r.cycles, r.frequency, r.window0, r.window1,
      r.settled ? "" : " &mdash; not settled", r.worst, r.worst);
  if (!r.failures.empty()) {
    h += "<h2>Failure</h2>\n";
    for (const auto& v : failureVerdicts(r.failures))
      h += "<p class=\"fails\">" + escapeHtml(v) + "</p>\n";
  }
  h += "<h2>Cautions</h2>\n";
  for (const auto& c : r.cautions) h += "<p class=\"caution\">" + escapeHtml(c) + "</p>\n";
  h += "<p><em>" + escapeHtml(r.disclaimer) + "</em></p>\n";
  const auto& o = r.output;
  h += "<h2>Output</h2>\n<table>";
  auto row = [&](const std::string& k, const std::string& v) {
    h += "<tr><th>" + k + "</th><td>" + v + "</td></tr>";
  };
  row("DC voltage", fmt::format("{:.3f} V", o.mean));
  row("ripple", fmt::format("{:.3f} V peak-to-peak, {:.3f} V rms, factor {:.4f}",
                            o.ripplePeakToPeak, o.rippleRms, o.rippleFactor));
  row("load current", fmt::format("{:.4f} A", o.loadCurrent));
  row("output / input power", fmt::format("{:.3f} W / {:.3f} W, efficiency {:.1f} %", o.outputPower,
                                          o.inputPower, 100 * o.efficiency));
  if (!o.loadState.empty()) row("battery load", o.loadState);
  if (!o.inputs.empty()) row("input", escapeHtml(fmt::format("{}", fmt::join(o.inputs, ", "))));
  for (const auto& b : o.batteries)
    row("battery " + escapeHtml(b.name),
        fmt::format("{:.3f} W, {:.4g} A, {}", b.power, b.current, b.state));
  if (!o.losses.empty()) row("losses", escapeHtml(lossSummary(o.losses)));
  row("input power factor", fmt::format("{:.3f}", o.powerFactor));
  if (o.hasTransformer)
    row("transformer secondary",
        fmt::format("{:.4f} A rms, {:.2f} VA", o.secondaryRmsCurrent, o.secondaryVA));
  h += "</table>\n";
  for (const auto& s : r.stacks) {
    h += fmt::format(
        "<h2>Stack {}</h2>\n<p>{} arm(s) of {} plate(s), type {} ({}), {} model, {} "
        "load.</p>\n<table>",
        escapeHtml(s.name), s.arms, s.plates, escapeHtml(s.type), escapeHtml(s.material), s.mode,
        s.loadKind);
    row("forward current", fmt::format("{:.4f} A average, {:.4f} A rms, {:.4f} A peak",
                                       s.currentAverage, s.currentRms, s.currentPeak));
    if (s.surgeKnown) row("switch-on surge", fmt::format("{:.3f} A", s.surgePeak));
    row("dissipation", fmt::format("{:.3f} W forward, {:.3f} W reverse, {:.3f} W per plate",
                                   s.powerForward, s.powerReverse, s.powerPerPlate));
    row("hottest plate",
        fmt::format("{:.1f} &deg;C at end, {:.1f} &deg;C steady estimate, limit {:.0f} &deg;C",
                    toC(s.temperatureEnd), toC(s.temperatureSteady), toC(s.temperatureLimit)));
    if (s.arms > 1) {
      std::string shares;
      for (double a : s.armShare) shares += fmt::format("{:.1f} % ", 100 * a);
      row("arm shares", shares);
    }
    row("forming state",
        fmt::format("{:.3f} at start, {:.3f} at end", s.formingStart, s.formingEnd));
    h += "</table>\n<table><tr><th>figure</th><th>value</th><th>limit</th><th>verdict</"
         "th><th>rule</th></tr>";
    for (const auto& v : s.verdicts)
      h += fmt::format(
          "<tr class=\"{}\"><td>{}</td><td>{:.3g} {}</td><td>{:.3g} "
          "{}</td><td>{}</td><td>{}</td></tr>",
          v.level, escapeHtml(v.figure), v.value, v.unit, v.limit, v.unit, v.level,
          escapeHtml(v.rule));
    h += "</table>\n";
  }
  if (!r.warnings.empty()) {
    h += "<h2>Warnings</h2><ul>";
    for (const auto& w : r.warnings) h += "<li>" + escapeHtml(w) + "</li>";
    h += "</ul>\n";
  }
  h += "<h2>Plots</h2>\n";
  for (const auto& [name, svg] : runPlots(nl, out)) h += "<div>" + svg + "</div>\n";
  h += fmt::format(
      "<p><small>libdisc {}; {} steps, {} rejected, {} Newton iterations, {:.3f} s.</small></p>\n",
      kVersion, r.stats.acceptedSteps, r.stats.rejectedSteps, r.stats.newtonIterations,
      r.stats.wallSeconds);
  h += "</body></html>\n";
  return h;
}

void writeFileAtomically(const std::string& path, const std::string& content) {
  const std::string tmp = path + ".part";
  {
    std::ofstream f(tmp, std::ios::binary);
    if (!f) throw Error(fmt::format("cannot write '{}'", tmp));
    f << content;
    f.flush();
    if (!f) {
      std::remove(tmp.c_str());
      throw Error(fmt::format("failed writing '{}' (disk full?)", tmp));
    }
  }
  if (std::rename(tmp.c_str(), path.c_str()) != 0) {
    std::remove(tmp.c_str());
    throw Error(fmt::format("cannot move '{}' into place", path));
  }
}

std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files) {
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) throw Error(fmt::format("cannot create the output folder '{}': {}", dir, ec.message()));
  std::vector<std::string> written;
  for (const auto& [name, content] : files) {
    // Names are file names, never paths: nothing is written outside `dir`.
    if (name != safeFileStem(name))
      throw InputError(fmt::format("'{}' is not a safe file name", excerpt(name)));
    const std::string path = (std::filesystem::path(dir) / name).string();
    writeFileAtomically(path, content);
    written.push_back(path);
  }
  return written;
}

std::vector<std::string> writeRunFiles(const Netlist& nl, const RunOutcome& out,
                                       const std::string& dir) {
  std::vector<std::pair<std::string, std::string>> files;
  for (std::size_t k = 0; k < out.analyses.size(); ++k) {
    const auto& a = out.analyses[k];
    const char* kind = analysisWord(a.request.kind);
    files.emplace_back(fmt::format("{}-{}.csv", kind, k + 1), resultCsv(a.result));
  }
  if (out.hasReport) {
    files.emplace_back("report.json", reportJson(out.report));
    files.emplace_back("report.html", reportHtml(nl, out));
    for (const auto& [name, svg] : runPlots(nl, out)) files.emplace_back(name + ".svg", svg);
  }
  return writeFiles(dir, files);
}

}  // namespace disc
