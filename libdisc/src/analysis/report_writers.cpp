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

#include "analysis/report_plots.hpp"
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
    parts += fmt::format("{}{} {}", parts.empty() ? "" : ", ", kind, siValue(w, "W"));
  return fmt::format("{:>10} ({})", siValue(total, "W"), parts);
}

/// The overview: one row per stack (header first), the same cells for text and HTML.
std::vector<std::vector<std::string>> overviewRows(const SupplyReport& r) {
  std::vector<std::vector<std::string>> rows = {{"stack", "plates", "forward current",
                                                 "share of paralleled", "arm shares",
                                                 "hottest plate", "worst verdict"}};
  for (const auto& st : r.stacks) {
    std::string arms;
    for (double a : st.armShare)
      arms += fmt::format("{}{:.1f} %", arms.empty() ? "" : " ", 100 * a);
    std::string worst = st.worst;
    for (const auto& v : st.verdicts)
      if (v.level == st.worst && v.level != "ok") {
        worst += ": " + v.figure;
        break;
      }
    const bool paralleled = st.paralleled.find(' ') != std::string::npos;
    rows.push_back({st.name, fmt::format("{} x {} {}", st.arms, st.plates, st.type),
                    siValue(st.currentAverage, "A") + " average",
                    paralleled
                        ? fmt::format("{:.1f} % of {}", 100 * st.parallelShare, st.paralleled)
                        : std::string("-"),
                    st.arms > 1 ? arms : std::string("-"),
                    st.noSteadyState ? std::string("no steady state")
                                     : fmt::format("{:.1f} degC", toC(st.temperatureSteady)),
                    worst});
  }
  return rows;
}

/// The stack with the hottest plate (steady-state estimate), or null without stacks.
/// The meter's readings as rows: applied rms, frequency, reading, error in % of range.
std::vector<std::vector<std::string>> meterRows(const MeterFigures& m) {
  std::vector<std::vector<std::string>> rows{
      {"sweep", "applied", "frequency", "reading", "error, % of range"}};
  auto add = [&](const char* sweep, const MeterPoint& p) {
    rows.push_back({sweep, siValue(p.rms, "V"), siValue(p.frequency, "Hz"), siValue(p.reading, "V"),
                    fmt::format("{:+.2f}", 100 * p.error)});
  };
  add("input", m.atInput);
  for (const auto& p : m.levels) add("range", p);
  for (const auto& p : m.frequencies) add("frequency", p);
  return rows;
}

/// The frequencies, around the netlist's own, over which the meter stays within its class.
std::string meterBand(const MeterFigures& m) {
  if (m.frequencies.empty()) return "";
  const double limit = m.accuracyClass / 100.0;
  const MeterPoint* lo = nullptr;
  const MeterPoint* hi = nullptr;
  // The swept points in rising frequency, the run's own frequency among them.
  std::vector<const MeterPoint*> f;
  for (const auto& p : m.frequencies) f.push_back(&p);
  std::sort(f.begin(), f.end(), [](auto* a, auto* b) { return a->frequency < b->frequency; });
  for (const MeterPoint* p : f) {
    if (std::abs(p->error) <= limit) {
      if (!lo) lo = p;
      hi = p;
    } else if (lo) {
      break;
    }
  }
  if (!lo) return fmt::format("outside class {:g} at every frequency swept", m.accuracyClass);
  std::string s = fmt::format("within class {:g} from {} to {}", m.accuracyClass,
                              siValue(lo->frequency, "Hz"), siValue(hi->frequency, "Hz"));
  if (hi != f.back())
    s += fmt::format("; at {} it reads {:.1f} % of range {}", siValue(f.back()->frequency, "Hz"),
                     100 * std::abs(f.back()->error), f.back()->error < 0 ? "low" : "high");
  return s;
}

std::string meterHeading(const MeterFigures& m) {
  return fmt::format(
      "meter {}: a {} movement marks {} rms at full scale; accuracy class {:g} allows {} "
      "(IEC 60051)",
      m.movement, siValue(m.fullScale, "A"), siValue(m.range, "V"), m.accuracyClass,
      siValue(m.accuracyClass / 100.0 * m.range, "V"));
}

const StackFigures* hottestStack(const SupplyReport& r) {
  const StackFigures* h = nullptr;
  for (const auto& st : r.stacks)
    if (!h || st.temperatureSteady > h->temperatureSteady) h = &st;
  return h;
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
  line("OVERVIEW");
  line(fmt::format("  output {}, {}; overall {}", siValue(r.output.mean, "V"),
                   siValue(r.output.loadCurrent, "A"), r.worst));
  if (const StackFigures* h = hottestStack(r))
    line(fmt::format("  hottest plate in {}: {:.1f} degC steady-state estimate (limit {:.0f} degC)",
                     h->name, toC(h->temperatureSteady), toC(h->temperatureLimit)));
  if (!r.stacks.empty()) {
    const auto rows = overviewRows(r);
    std::vector<std::size_t> width(rows.front().size(), 0);
    for (const auto& row : rows)
      for (std::size_t c = 0; c < row.size(); ++c) width[c] = std::max(width[c], row[c].size());
    for (const auto& row : rows) {
      std::string l = " ";
      for (std::size_t c = 0; c < row.size(); ++c)
        l += " " + (c + 1 < row.size() ? fmt::format("{:<{}}", row[c], width[c]) : row[c]);
      line(l);
    }
  }
  line("");
  if (!r.failures.empty()) {
    line("FAILURE");
    for (const auto& v : failureVerdicts(r.failures)) s += detail::listItem(v);
    line("");
  }
  const auto& o = r.output;
  line("OUTPUT");
  line(fmt::format("  DC voltage            {:>10}", siValue(o.mean, "V")));
  line(fmt::format("  ripple                {:>10} peak-to-peak, {} rms (ripple factor {:.4f})",
                   siValue(o.ripplePeakToPeak, "V"), siValue(o.rippleRms, "V"), o.rippleFactor));
  line(fmt::format("  load current          {:>10}", siValue(o.loadCurrent, "A")));
  line(fmt::format(
      "  output power          {:>10}{}", siValue(o.outputPower, "W"),
      o.loadState.empty() ? "" : fmt::format(" (the load is a battery, {})", o.loadState)));
  line(fmt::format("  input power           {:>10} from {}   efficiency {}   power factor {:.3f}",
                   siValue(o.inputPower, "W"),
                   o.inputs.empty() ? "no source" : fmt::format("{}", fmt::join(o.inputs, ", ")),
                   o.loadState == "discharging" ? std::string("none (the load discharges)")
                                                : fmt::format("{:.1f} %", 100 * o.efficiency),
                   o.powerFactor));
  for (const auto& b : o.batteries)
    line(fmt::format("  battery {:<14}{:>10}, {}: {}", b.name, siValue(b.power, "W"),
                     siValue(b.current, "A"), b.state));
  if (!o.losses.empty()) line("  losses                " + lossSummary(o.losses));
  if (o.hasTransformer)
    line(fmt::format("  transformer secondary {:>10} rms, {:.4g} VA",
                     siValue(o.secondaryRmsCurrent, "A"), o.secondaryVA));
  for (const auto& st : r.stacks) {
    line("");
    line(fmt::format("STACK {}: {} x {} plate(s) of {} ({}, {}), {} load", st.name, st.arms,
                     st.plates, st.type, st.material, st.mode, st.loadKind));
    line(fmt::format(
        "  forward current       {} average, {} rms, {} peak{}", siValue(st.currentAverage, "A"),
        siValue(st.currentRms, "A"), siValue(st.currentPeak, "A"),
        st.surgeKnown ? "; switch-on surge " + siValue(st.surgePeak, "A") : std::string()));
    line(fmt::format("  dissipation           {} forward + {} reverse ({} per plate)",
                     siValue(st.powerForward, "W"), siValue(st.powerReverse, "W"),
                     siValue(st.powerPerPlate, "W")));
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
  if (!r.heatNodes.empty()) {
    line("");
    line("HEAT NODES");
    for (const auto& n : r.heatNodes)
      line(fmt::format(
          "  {:<20} {:.1f} degC at end of run, {:.1f} degC steady-state estimate, {} in", n.name,
          toC(n.temperatureEnd), toC(n.temperatureSteady), siValue(n.heatIn, "W")));
  }
  for (const auto& part : r.parts) {
    line("");
    line(fmt::format("{} {}", part.kind, part.name));
    for (const auto& v : part.verdicts)
      line(fmt::format("  [{:<8}] {}: {:.3g} {} (limit {:.3g} {})", v.level, v.figure, v.value,
                       v.unit, v.limit, v.unit));
  }
  if (r.meter) {
    line("");
    line("METER");
    line("  " + meterHeading(*r.meter));
    const auto rows = meterRows(*r.meter);
    for (const auto& row : rows)
      line(fmt::format("  {:<10} {:>10} {:>10} {:>10} {:>18}", row[0], row[1], row[2], row[3],
                       row[4]));
    if (const std::string band = meterBand(*r.meter); !band.empty()) line("  " + band);
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
  j["heat_nodes"] = nlohmann::json::array();
  for (const auto& n : r.heatNodes)
    j["heat_nodes"].push_back({{"name", n.name},
                               {"temperature_end_K", n.temperatureEnd},
                               {"temperature_steady_estimate_K", n.temperatureSteady},
                               {"heat_in_W", n.heatIn}});
  j["parts"] = nlohmann::json::array();
  for (const auto& part : r.parts) {
    auto v = nlohmann::json::array();
    for (const auto& x : part.verdicts) v.push_back(verdictJson(x));
    j["parts"].push_back({{"name", part.name}, {"kind", part.kind}, {"verdicts", v}});
  }
  if (r.meter) {
    const auto& m = *r.meter;
    auto points = [](const std::vector<MeterPoint>& ps) {
      nlohmann::json a = nlohmann::json::array();
      for (const auto& p : ps)
        a.push_back({{"frequency_Hz", p.frequency},
                     {"rms_V", p.rms},
                     {"reading_V", p.reading},
                     {"error_of_range", p.error}});
      return a;
    };
    j["meter"] = {{"full_scale_A", m.fullScale},
                  {"range_V", m.range},
                  {"accuracy_class", m.accuracyClass},
                  {"movement", m.movement},
                  {"source", m.source},
                  {"at_input", points({m.atInput}).front()},
                  {"levels", points(m.levels)},
                  {"frequencies", points(m.frequencies)}};
  } else {
    j["meter"] = nullptr;
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
std::string escapeJs(const std::string& text) {
  std::string o;
  for (char c : text) {
    if (c == '"' || c == '\\')
      o += std::string("\\") + c;
    else if (c == '<')
      o += "\\u003c";  // never "</script>" inside a script
    else if (static_cast<unsigned char>(c) < 0x20)
      o += fmt::format("\\u{:04x}", static_cast<int>(c));
    else
      o += c;
  }
  return o;
}

std::string csvField(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string q = "\"";
  for (char c : text) {
    if (c == '"') q += '"';
    q += c;
  }
  return q + '"';
}

namespace {

// The CSV header record: "time [s]" and one "name [unit]" per signal (RFC 4180, CRLF).
std::string csvHeader(const Result& r) {
  std::string s = "time [s]";
  for (const auto& n : r.signals()) s += "," + csvField(fmt::format("{} [{}]", n, r.unit(n)));
  return s + "\r\n";
}

// One record: 12 significant digits of time, 10 of each value. A row streamed as the run goes
// and a row of resultCsv are the same text.
template <class Out, class Values>
void csvRow(Out& out, double t, const Values& value, std::size_t n) {
  fmt::format_to(std::back_inserter(out), "{:.12g}", t);
  for (std::size_t k = 0; k < n; ++k) fmt::format_to(std::back_inserter(out), ",{:.10g}", value(k));
  out.push_back('\r');
  out.push_back('\n');
}

}  // namespace

std::string resultCsv(const Result& r) {
  // RFC 4180: a header record, then one record per time point, each ended by CRLF.
  std::string s = csvHeader(r);
  const auto& t = r.time();
  std::vector<const std::vector<double>*> cols;
  for (const auto& n : r.signals()) cols.push_back(&r[n]);
  for (std::size_t k = 0; k < t.size(); ++k)
    csvRow(
        s, t[k], [&](std::size_t c) { return (*cols[c])[k]; }, cols.size());
  return s;
}

CsvFile::CsvFile(StagedFolder& folder, std::string name)
    : folder_(&folder), name_(std::move(name)), path_(folder.pathOf(name_)) {}

CsvFile::CsvFile(std::string path) : path_(std::move(path)) {}

CsvFile::~CsvFile() {
  // A run that failed leaves no half-written file behind (a StagedFile removes its own).
  if (open_ && folder_) folder_->discard(name_);
}

void CsvFile::begin(const Result& layout) {
  if (open_ || file_) throw Error(fmt::format("'{}' is already being written", path_));
  if (folder_)
    folder_->open(name_);
  else
    file_ = std::make_unique<StagedFile>(path_);
  open_ = true;
  signals_ = layout.signals().size();
  buffer_ = csvHeader(layout);
  rows_ = 0;
}

void CsvFile::row(double time, const std::vector<double>& values) {
  if (!open_) throw Error(fmt::format("'{}': a row before the header", path_));
  csvRow(
      buffer_, time, [&](std::size_t c) { return values[c]; }, signals_);
  ++rows_;
  if (buffer_.size() >= kFlushBytes) flush();
}

void CsvFile::flush() {
  if (folder_)
    folder_->append(name_, buffer_);
  else
    file_->append(buffer_);
  buffer_.clear();
}

void CsvFile::end() {
  if (!open_) throw Error(fmt::format("'{}' was never started", path_));
  flush();
  if (folder_)
    folder_->close(name_);
  else
    file_->commit();
  open_ = false;
}

std::string reportHtml(const Netlist& nl, const RunOutcome& out) {
  const SupplyReport& r = out.report;
  std::string h =
      "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
      "<meta name=\"viewport\" content=\"width=device-width\"><title>" +
      escapeHtml(r.title.empty() ? nl.path : r.title) +
      "</title>\n<style>"
      "body{font-family:sans-serif;max-width:1280px;margin:1.5em auto;padding:0 1em;"
      "color:#222}"
      "table{border-collapse:collapse;margin:0.5em 0}td,th{border:1px solid "
      "#bbb;padding:3px 8px;text-align:left}"
      ".ok{background:#e3f1e3}.marginal{background:#fff3cd}.exceeds{background:#f8d7da}"
      ".fails{background:#e6a0a8}"
      ".caution{border-left:4px solid #b03a2e;padding-left:8px}</style>\n" +
      detail::plotStyleHtml() + "</head><body>\n";
  h += "<h1>" + escapeHtml(r.title.empty() ? "Supply report" : r.title) + "</h1>\n";
  h += fmt::format(
      "<p>File {}; ambient {:.1f} &deg;C; {} settled cycle(s) at {:g} Hz ({:.4f}-{:.4f} "
      "s){}.</p>\n",
      escapeHtml(r.file), toC(r.ambient), r.cycles, r.frequency, r.window0, r.window1,
      r.settled ? "" : " &mdash; not settled");
  const auto& o = r.output;
  h += "<h2>Overview</h2>\n";
  h += fmt::format("<p>Output {}, {}. Overall: <span class=\"{}\">{}</span>.", siValue(o.mean, "V"),
                   siValue(o.loadCurrent, "A"), r.worst, r.worst);
  if (const StackFigures* hs = hottestStack(r))
    h += fmt::format(
        " Hottest plate in {}: {:.1f} &deg;C steady-state estimate (limit {:.0f} "
        "&deg;C).",
        escapeHtml(hs->name), toC(hs->temperatureSteady), toC(hs->temperatureLimit));
  h += "</p>\n";
  if (!r.stacks.empty()) {
    const auto rows = overviewRows(r);
    h += "<table class=\"overview\"><tr>";
    for (const auto& c : rows.front()) h += "<th>" + escapeHtml(c) + "</th>";
    h += "</tr>";
    for (std::size_t k = 1; k < rows.size(); ++k) {
      h += "<tr>";
      for (std::size_t c = 0; c < rows[k].size(); ++c)
        h += (c + 1 == rows[k].size() ? "<td class=\"" + r.stacks[k - 1].worst + "\">" : "<td>") +
             escapeHtml(rows[k][c]) + "</td>";
      h += "</tr>";
    }
    h += "</table>\n";
  }
  if (!r.failures.empty()) {
    h += "<h2>Failure</h2>\n";
    for (const auto& v : failureVerdicts(r.failures))
      h += "<p class=\"fails\">" + escapeHtml(v) + "</p>\n";
  }
  h += "<h2>Cautions</h2>\n";
  for (const auto& c : r.cautions) h += "<p class=\"caution\">" + escapeHtml(c) + "</p>\n";
  h += "<p><em>" + escapeHtml(r.disclaimer) + "</em></p>\n";
  h += "<h2>Output</h2>\n<table>";
  auto row = [&](const std::string& k, const std::string& v) {
    h += "<tr><th>" + k + "</th><td>" + v + "</td></tr>";
  };
  auto verdictTable = [&](const std::vector<Verdict>& verdicts) {
    h += "<table><tr><th>figure</th><th>value</th><th>limit</th><th>verdict</th><th>rule</th></tr>";
    for (const auto& v : verdicts)
      h += fmt::format(
          "<tr class=\"{}\"><td>{}</td><td>{:.3g} {}</td><td>{:.3g} "
          "{}</td><td>{}</td><td>{}</td></tr>",
          v.level, escapeHtml(v.figure), v.value, v.unit, v.limit, v.unit, v.level,
          escapeHtml(v.rule));
    h += "</table>\n";
  };
  row("DC voltage", siValue(o.mean, "V"));
  row("ripple",
      fmt::format("{} peak-to-peak, {} rms, factor {:.4f}", siValue(o.ripplePeakToPeak, "V"),
                  siValue(o.rippleRms, "V"), o.rippleFactor));
  row("load current", siValue(o.loadCurrent, "A"));
  row("output / input power",
      fmt::format("{} / {}, efficiency {:.1f} %", siValue(o.outputPower, "W"),
                  siValue(o.inputPower, "W"), 100 * o.efficiency));
  if (!o.loadState.empty()) row("battery load", o.loadState);
  if (!o.inputs.empty()) row("input", escapeHtml(fmt::format("{}", fmt::join(o.inputs, ", "))));
  for (const auto& b : o.batteries)
    row("battery " + escapeHtml(b.name),
        fmt::format("{}, {}, {}", siValue(b.power, "W"), siValue(b.current, "A"), b.state));
  if (!o.losses.empty()) row("losses", escapeHtml(lossSummary(o.losses)));
  row("input power factor", fmt::format("{:.3f}", o.powerFactor));
  if (o.hasTransformer)
    row("transformer secondary",
        fmt::format("{} rms, {:.4g} VA", siValue(o.secondaryRmsCurrent, "A"), o.secondaryVA));
  h += "</table>\n";
  for (const auto& s : r.stacks) {
    h += fmt::format(
        "<h2>Stack {}</h2>\n<p>{} arm(s) of {} plate(s), type {} ({}), {} model, {} "
        "load.</p>\n<table>",
        escapeHtml(s.name), s.arms, s.plates, escapeHtml(s.type), escapeHtml(s.material), s.mode,
        s.loadKind);
    row("forward current",
        fmt::format("{} average, {} rms, {} peak", siValue(s.currentAverage, "A"),
                    siValue(s.currentRms, "A"), siValue(s.currentPeak, "A")));
    if (s.surgeKnown) row("switch-on surge", siValue(s.surgePeak, "A"));
    row("dissipation",
        fmt::format("{} forward, {} reverse, {} per plate", siValue(s.powerForward, "W"),
                    siValue(s.powerReverse, "W"), siValue(s.powerPerPlate, "W")));
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
    h += "</table>\n";
    verdictTable(s.verdicts);
  }
  if (!r.heatNodes.empty()) {
    h += "<h2>Heat nodes</h2>\n<table><tr><th>node</th><th>at end</th><th>steady "
         "estimate</th><th>heat in</th></tr>";
    for (const auto& n : r.heatNodes)
      h +=
          fmt::format("<tr><td>{}</td><td>{:.1f} &deg;C</td><td>{:.1f} &deg;C</td><td>{}</td></tr>",
                      escapeHtml(n.name), toC(n.temperatureEnd), toC(n.temperatureSteady),
                      siValue(n.heatIn, "W"));
    h += "</table>\n";
  }
  for (const auto& part : r.parts) {
    h += fmt::format("<h2>{} {}</h2>\n", escapeHtml(part.kind), escapeHtml(part.name));
    if (part.kind == "meter" && r.meter) {
      h += "<p>" + escapeHtml(meterHeading(*r.meter)) + "</p>\n<table>";
      const auto rows = meterRows(*r.meter);
      for (std::size_t k = 0; k < rows.size(); ++k) {
        h += "<tr>";
        for (const auto& c : rows[k])
          h += (k == 0 ? "<th>" : "<td>") + escapeHtml(c) + (k == 0 ? "</th>" : "</td>");
        h += "</tr>";
      }
      h += "</table>\n";
      if (const std::string band = meterBand(*r.meter); !band.empty())
        h += "<p>" + escapeHtml(band) + "</p>\n";
    }
    verdictTable(part.verdicts);
  }
  if (!r.warnings.empty()) {
    h += "<h2>Warnings</h2><ul>";
    for (const auto& w : r.warnings) h += "<li>" + escapeHtml(w) + "</li>";
    h += "</ul>\n";
  }
  h += "<h2>Plots</h2>\n";
  const auto plots = runPlotList(nl, out);
  for (std::size_t k = 0; k < plots.size(); ++k) {
    // The whole run and its settled window side by side.
    const bool pair = plots[k].name == "output-voltage" && k + 1 < plots.size() &&
                      plots[k + 1].name == "output-ripple";
    if (pair) {
      h += "<div class=\"pair\">" + detail::plotFigureHtml(plots[k], k) +
           detail::plotFigureHtml(plots[k + 1], k + 1) + "</div>\n";
      ++k;
    } else {
      h += detail::plotFigureHtml(plots[k], k);
    }
  }
  h += fmt::format(
      "<p><small>libdisc {}; {} steps, {} rejected, {} Newton iterations, {:.3f} s.</small></p>\n",
      kVersion, r.stats.acceptedSteps, r.stats.rejectedSteps, r.stats.newtonIterations,
      r.stats.wallSeconds);
  h += detail::plotScriptHtml(plots);
  h += "</body></html>\n";
  return h;
}

std::vector<std::string> writeRunFiles(const Netlist& nl, const RunOutcome& out,
                                       StagedFolder& folder) {
  for (std::size_t k = 0; k < out.analyses.size(); ++k) {
    const auto& a = out.analyses[k];
    const std::string name = fmt::format("{}-{}.csv", analysisWord(a.request.kind), k + 1);
    if (a.streamed) {
      // A transient streamed its CSV into the folder as it ran.
      if (!folder.has(name))
        throw Error(fmt::format("'{}' was streamed into another folder than '{}'", name,
                                excerpt(folder.dir())));
      continue;
    }
    folder.add(name, resultCsv(a.result));
  }
  if (out.hasReport) {
    folder.add("report.json", reportJson(out.report));
    folder.add("report.html", reportHtml(nl, out));
    for (const auto& [name, svg] : runPlots(nl, out)) folder.add(name + ".svg", svg);
  }
  return folder.commit();
}

std::vector<std::string> writeRunFiles(const Netlist& nl, const RunOutcome& out,
                                       const std::string& dir) {
  StagedFolder folder(dir);
  return writeRunFiles(nl, out, folder);
}

}  // namespace disc
