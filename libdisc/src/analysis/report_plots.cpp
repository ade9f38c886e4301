// The report's plots: grouped, SI-scaled, legends in words; SVG for files and print, and
// interactive charts (Debian's dygraphs, inlined) for the HTML page.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "disc/limits.hpp"
#include "disc/session.hpp"

#include "analysis/report_plots.hpp"
#include "analysis/text_fields.hpp"

namespace disc {

// The dygraphs library (dygraph.min.js and dygraph.min.css of Debian's libjs-dygraphs, MIT
// licence, its notice kept at the head of the script), embedded at build time.
extern const unsigned char kDygraphsJs[];
extern const std::size_t kDygraphsJsSize;
extern const unsigned char kDygraphsCss[];
extern const std::size_t kDygraphsCssSize;

namespace {

constexpr int kMaxPlateTraces = 12;       // plates per stack whose traces are recorded
constexpr std::size_t kMaxSeries = 24;    // series in one plot; the rest named in its note
constexpr std::size_t kMaxPoints = 3000;  // points drawn per series (the files keep them all)

struct SiScale {
  double factor = 1;  ///< multiply the value by this
  std::string prefix;
};

bool scalable(const std::string& unit) {
  static const std::set<std::string> units = {"V", "A", "W", "s", "Hz", "F", "ohm"};
  return units.count(unit) > 0;
}

/// The prefix that brings `magnitude` into [1, 1000), from pico to mega.
SiScale siScale(double magnitude) {
  static const std::pair<double, const char*> steps[] = {
      {1e6, "M"}, {1e3, "k"}, {1.0, ""}, {1e-3, "m"}, {1e-6, "\u00b5"}, {1e-9, "n"}, {1e-12, "p"}};
  if (!(magnitude > 0.0) || !std::isfinite(magnitude)) return {};
  for (const auto& [size, prefix] : steps)
    if (magnitude >= size) return {1.0 / size, prefix};
  return {1e12, "p"};
}

/// "current (mA)"; a quantity with no unit stands alone.
std::string axisLabel(const std::string& quantity, const std::string& prefix,
                      const std::string& unit) {
  return unit.empty() ? quantity : fmt::format("{} ({}{})", quantity, prefix, unit);
}

/// The largest magnitude on an axis, for its prefix: the span's end furthest from zero.
double axisMagnitude(const std::vector<PlotSeries>& series, bool xAxis) {
  double m = 0.0;
  for (const auto& s : series)
    for (double v : xAxis ? s.x : s.y)
      if (std::isfinite(v)) m = std::max(m, std::abs(v));
  return m;
}

/// "Nice" tick positions covering [lo, hi].
std::vector<double> ticks(double lo, double hi) {
  const double span = hi - lo;
  const double raw = span / 6.0;
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  const double norm = raw / mag;
  const double step = (norm < 1.5 ? 1.0 : norm < 3.5 ? 2.0 : norm < 7.5 ? 5.0 : 10.0) * mag;
  std::vector<double> t;
  for (double v = std::ceil(lo / step) * step; v <= hi + 1e-9 * span; v += step) t.push_back(v);
  return t;
}

/// A plot's axes after scaling: the series multiplied by the prefix factors, and the labels.
struct ScaledPlot {
  std::vector<PlotSeries> series;
  std::string xLabel, yLabel;
};

ScaledPlot scaled(const Plot& p) {
  ScaledPlot s{p.series, axisLabel(p.xQuantity, "", p.xUnit), axisLabel(p.yQuantity, "", p.yUnit)};
  if (scalable(p.xUnit)) {
    const SiScale k = siScale(axisMagnitude(p.series, true));
    for (auto& sr : s.series)
      for (double& v : sr.x) v *= k.factor;
    s.xLabel = axisLabel(p.xQuantity, k.prefix, p.xUnit);
  }
  if (scalable(p.yUnit)) {
    const SiScale k = siScale(axisMagnitude(p.series, false));
    for (auto& sr : s.series)
      for (double& v : sr.y) v *= k.factor;
    s.yLabel = axisLabel(p.yQuantity, k.prefix, p.yUnit);
  }
  return s;
}

/// A dash pattern that tells apart series whose hues are neighbours in a crowded plot.
const char* dashFor(std::size_t k, std::size_t n) {
  return n > 10 && k % 2 == 1 ? " stroke-dasharray=\"6 3\"" : "";
}

}  // namespace

std::string seriesColour(std::size_t k, std::size_t n) {
  // Up to ten: a qualitative palette whose neighbours differ in hue and lightness; beyond, hues
  // spread evenly round the circle with alternating lightness, so no two coincide.
  static const char* ten[] = {"#1f77b4", "#d62728", "#2ca02c", "#ff7f0e", "#9467bd",
                              "#8c564b", "#e377c2", "#17becf", "#7f7f7f", "#bcbd22"};
  if (n <= 10) return ten[k % 10];
  const double hue = 360.0 * static_cast<double>(k) / static_cast<double>(n);
  return fmt::format("hsl({:.0f},75%,{}%)", hue, k % 2 == 0 ? 38 : 52);
}

std::string siValue(double value, const std::string& unit, int digits) {
  if (value == 0.0 || !std::isfinite(value)) return fmt::format("{:g} {}", value, unit);
  SiScale k = siScale(std::abs(value));
  double x = value * k.factor;
  const auto decimals = [&](double v) {
    return std::max(0, digits - 1 - static_cast<int>(std::floor(std::log10(std::abs(v)))));
  };
  // Rounding may carry 999.96 to 1000: then the next prefix up.
  const double rounded = std::abs(std::stod(fmt::format("{:.{}f}", x, decimals(x))));
  if (rounded >= 1000.0 && k.prefix != "M") {
    k = siScale(rounded / k.factor);
    x = value * k.factor;
  }
  // After a carry, x is just below 1 in its prefix: it prints as 1.000.
  return fmt::format("{:.{}f} {}{}", x, decimals(std::max(std::abs(x), 1.0)), k.prefix, unit);
}

std::string svgPlot(const Plot& plot) {
  const ScaledPlot sp = scaled(plot);
  const auto& series = sp.series;
  const std::size_t n = series.size();
  // Page width; the legend in a right margin, one line per series.
  const double W = 1200, R = 250, L = 80, T = 40, B = 50 + (plot.note.empty() ? 0 : 18);
  const double H = std::max(420.0, T + 18.0 * static_cast<double>(n) + 30 + B);
  double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = -INFINITY;
  for (const auto& s : series)
    for (std::size_t k = 0; k < s.x.size() && k < s.y.size(); ++k) {
      if (!std::isfinite(s.x[k]) || !std::isfinite(s.y[k])) continue;
      x0 = std::min(x0, s.x[k]);
      x1 = std::max(x1, s.x[k]);
      y0 = std::min(y0, s.y[k]);
      y1 = std::max(y1, s.y[k]);
    }
  if (!(x0 <= x1)) x0 = 0, x1 = 1;
  if (!(y0 <= y1)) y0 = 0, y1 = 1;
  if (!(x1 > x0)) x1 = x0 + 1.0;
  if (!(y1 > y0)) {
    const double half = std::max(0.5, 0.05 * std::abs(y0));
    y0 -= half;
    y1 += half;
  }
  const double pad = 0.05 * (y1 - y0);
  y0 -= pad;
  y1 += pad;
  auto px = [&](double x) { return L + (x - x0) / (x1 - x0) * (W - L - R); };
  auto py = [&](double y) { return H - B - (y - y0) / (y1 - y0) * (H - T - B); };
  std::string s = fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} "
      "{1}\" font-family=\"sans-serif\" font-size=\"13\">\n"
      "<rect width=\"{0}\" height=\"{1}\" fill=\"white\"/>\n"
      "<text x=\"{2}\" y=\"24\" font-size=\"16\" font-weight=\"bold\">{3}</text>\n",
      W, H, L, escapeHtml(plot.title));
  for (double tx : ticks(x0, x1))
    s += fmt::format(
        "<line x1=\"{0:.1f}\" y1=\"{1}\" x2=\"{0:.1f}\" y2=\"{2}\" stroke=\"#e4e4e4\"/>"
        "<text x=\"{0:.1f}\" y=\"{3}\" text-anchor=\"middle\">{4:g}</text>\n",
        px(tx), T, H - B, H - B + 17, std::abs(tx) < 1e-9 * (x1 - x0) ? 0.0 : tx);
  for (double ty : ticks(y0, y1))
    s += fmt::format(
        "<line x1=\"{0}\" y1=\"{1:.1f}\" x2=\"{2}\" y2=\"{1:.1f}\" stroke=\"#e4e4e4\"/>"
        "<text x=\"{3}\" y=\"{4:.1f}\" text-anchor=\"end\">{5:g}</text>\n",
        L, py(ty), W - R, L - 6, py(ty) + 4, std::abs(ty) < 1e-9 * (y1 - y0) ? 0.0 : ty);
  s += fmt::format(
      "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#444\"/>\n", L, T,
      W - L - R, H - T - B);
  s += fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>\n", (L + W - R) / 2,
                   H - B + 36, escapeHtml(sp.xLabel));
  s += fmt::format(
      "<text x=\"18\" y=\"{0}\" text-anchor=\"middle\" transform=\"rotate(-90 18 "
      "{0})\">{1}</text>\n",
      (T + H - B) / 2, escapeHtml(sp.yLabel));
  if (!plot.note.empty())
    s += fmt::format("<text x=\"{}\" y=\"{}\" font-size=\"12\" fill=\"#555\">{}</text>\n", L,
                     H - 10, escapeHtml(plot.note));
  for (std::size_t k = 0; k < n; ++k) {
    const auto& sr = series[k];
    const std::string colour = seriesColour(k, n);
    const std::size_t stride = std::max<std::size_t>(1, sr.x.size() / kMaxPoints);
    std::string pts;
    for (std::size_t i = 0; i < sr.x.size() && i < sr.y.size(); i += stride)
      if (std::isfinite(sr.x[i]) && std::isfinite(sr.y[i]))
        pts += fmt::format("{:.1f},{:.1f} ", px(sr.x[i]), py(sr.y[i]));
    s += fmt::format(
        "<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"1.4\"{} points=\"{}\"/>\n", colour,
        dashFor(k, n), pts);
    const double ly = T + 12 + 18.0 * static_cast<double>(k);
    s += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"{3}\" stroke-width=\"2.5\"{4}/>"
        "<text x=\"{5}\" y=\"{6}\">{7}</text>\n",
        W - R + 12, ly, W - R + 36, colour, dashFor(k, n), W - R + 42, ly + 4, escapeHtml(sr.name));
  }
  s += "</svg>\n";
  return s;
}

std::string svgPlot(const std::string& title, const std::string& xLabel, const std::string& yLabel,
                    const std::vector<PlotSeries>& series) {
  return svgPlot(Plot{"", title, xLabel, "", yLabel, "", series, false, ""});
}

namespace {

/// Groups of series with the same points (within a millionth of the plot's span): one line is
/// drawn per group, and `label(first, members)` names it.
std::vector<std::vector<std::size_t>> identicalGroups(const std::vector<PlotSeries>& series) {
  double span = 0.0;
  for (const auto& s : series)
    for (double v : s.y) span = std::max(span, std::abs(v));
  const double tol = 1e-6 * std::max(span, 1e-300);
  std::vector<std::vector<std::size_t>> groups;
  for (std::size_t k = 0; k < series.size(); ++k) {
    bool placed = false;
    for (auto& g : groups) {
      const auto& a = series[g.front()];
      const auto& b = series[k];
      if (a.x.size() != b.x.size() || a.y.size() != b.y.size()) continue;
      bool same = true;
      for (std::size_t i = 0; same && i < a.y.size(); ++i)
        same = std::abs(a.y[i] - b.y[i]) <= tol && std::abs(a.x[i] - b.x[i]) <= tol;
      if (same) {
        g.push_back(k);
        placed = true;
        break;
      }
    }
    if (!placed) groups.push_back({k});
  }
  return groups;
}

/// "1-3, 5": plate numbers in ranges.
std::string numberRanges(const std::vector<int>& numbers) {
  std::string out;
  for (std::size_t k = 0; k < numbers.size();) {
    std::size_t e = k;
    while (e + 1 < numbers.size() && numbers[e + 1] == numbers[e] + 1) ++e;
    out += (out.empty() ? "" : ", ") +
           (e == k ? fmt::format("{}", numbers[k]) : fmt::format("{}-{}", numbers[k], numbers[e]));
    k = e + 1;
  }
  return out;
}

/// At most kMaxSeries series; the note names how many were left out.
void capSeries(Plot& p, const std::string& what) {
  if (p.series.size() <= kMaxSeries) return;
  const std::size_t left = p.series.size() - kMaxSeries;
  p.series.resize(kMaxSeries);
  p.note = fmt::format("{} more {} not drawn (all are in the CSV file)", left, what);
}

/// A warm-up's plots over minutes: the output's period mean, minimum and maximum, and per stack
/// its hottest plate, lowest forming state and leakage current.
std::vector<Plot> warmUpPlots(const Netlist& nl, const Result& series) {
  std::vector<Plot> plots;
  std::vector<double> minutes = series.time();
  for (double& m : minutes) m /= 60.0;
  const std::string v = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
  if (series.has(v))
    plots.push_back({"warm-up-output",
                     "Output voltage during the warm-up",
                     "time",
                     "min",
                     "output voltage",
                     "V",
                     {{"mean over a period", minutes, series[v]},
                      {"lowest in a period", minutes, series["min(" + v + ")"]},
                      {"highest in a period", minutes, series["max(" + v + ")"]}},
                     true,
                     ""});
  Plot temps{"warm-up-temperatures",
             "Plate temperatures during the warm-up",
             "time",
             "min",
             "temperature",
             "degC",
             {},
             true,
             ""};
  Plot forming{"warm-up-forming",
               "Forming state during the warm-up",
               "time",
               "min",
               "forming state F",
               "",
               {},
               true,
               ""};
  Plot leakage{"warm-up-leakage",
               "Reverse (leakage) current during the warm-up",
               "time",
               "min",
               "mean reverse current",
               "A",
               {},
               true,
               ""};
  for (const auto& d : nl.circuit.devices()) {
    const std::string n = d->name();
    if (!series.has("temp:" + n) || !series.has("form:" + n)) continue;
    PlotSeries t{n + " hottest plate", minutes, series["temp:" + n]};
    for (double& x : t.y) x -= 273.15;
    temps.series.push_back(std::move(t));
    forming.series.push_back({n + " lowest forming state", minutes, series["form:" + n]});
    if (series.has("irev:" + n))
      leakage.series.push_back({n + " leakage", minutes, series["irev:" + n]});
  }
  for (Plot* p : {&temps, &forming, &leakage}) {
    capSeries(*p, "stacks");
    if (!p->series.empty()) plots.push_back(std::move(*p));
  }
  return plots;
}

}  // namespace

std::vector<Plot> runPlotList(const Netlist& nl, const RunOutcome& out) {
  std::vector<Plot> plots;
  if (!out.hasReport) return plots;
  const SupplyReport& rep = out.report;
  const AnalysisOutcome& behind = out.analyses.at(out.reportAnalysis);
  if (behind.request.kind == AnalysisRequest::Kind::WarmUp) return warmUpPlots(nl, behind.result);
  const Result& r = behind.result;
  const auto& t = r.time();
  std::size_t first = 0;
  while (first < t.size() && t[first] < rep.window0) ++first;
  const std::vector<double> tw(t.begin() + static_cast<std::ptrdiff_t>(first), t.end());
  auto window = [&](const std::vector<double>& y) {
    return std::vector<double>(y.begin() + static_cast<std::ptrdiff_t>(first), y.end());
  };
  const std::string outSig = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
  const bool periodic = rep.basis == "periodic";
  if (!periodic)
    plots.push_back({"output-voltage",
                     "Output voltage over the whole run",
                     "time",
                     "s",
                     "output voltage",
                     "V",
                     {{"output voltage", t, r[outSig]}},
                     true,
                     ""});
  plots.push_back({"output-ripple",
                   periodic ? "Output voltage over one settled period"
                            : "Output voltage over the settled window (the ripple)",
                   "time",
                   "s",
                   "output voltage",
                   "V",
                   {{"output voltage", tw, window(r[outSig])}},
                   true,
                   ""});
  Plot currents{"stack-currents",
                "Stack currents over the settled window",
                "time",
                "s",
                "current",
                "A",
                {},
                true,
                ""};
  Plot reverse{"reverse-voltages",
               "Largest reverse voltage on a plate, settled window",
               "time",
               "s",
               "reverse voltage per plate",
               "V",
               {},
               true,
               ""};
  Plot temps{"temperatures",
             "Hottest plate of each stack",
             "time",
             "s",
             "temperature",
             "degC",
             {},
             true,
             ""};
  std::map<std::string, Plot> iv;  // by plate type
  std::vector<std::string> ivOrder;
  for (const auto& st : rep.stacks) {
    currents.series.push_back({st.name + " current", tw, window(r["i:" + st.name])});
    reverse.series.push_back({st.name + " reverse voltage", tw, window(r["vrev:" + st.name])});
    PlotSeries tp{st.name + " hottest plate", t, r["temp:" + st.name]};
    for (double& v : tp.y) v -= 273.15;
    temps.series.push_back(std::move(tp));

    // The plates of the busiest arm, the one the current-density verdict judges.
    const int busiest = static_cast<int>(std::max_element(st.armShare.begin(), st.armShare.end()) -
                                         st.armShare.begin());
    const int traced = std::min(st.plates * st.arms, kMaxPlateTraces);
    int arm = busiest + 1;
    if (busiest * st.plates + 1 > traced) arm = 1;
    std::vector<PlotSeries> plates;
    std::vector<int> numbers;
    for (int k = (arm - 1) * st.plates + 1; k <= std::min(arm * st.plates, traced); ++k) {
      const std::string vs = fmt::format("vrev:{}#{}", st.name, k);
      const std::string is = fmt::format("iarm:{}#{}", st.name, arm);
      if (!r.has(vs) || !r.has(is)) continue;
      PlotSeries s{"", window(r[vs]), window(r[is])};
      for (double& x : s.x) x = -x;
      plates.push_back(std::move(s));
      numbers.push_back(k);
    }
    if (!iv.count(st.type)) {
      ivOrder.push_back(st.type);
      iv[st.type] = Plot{"plate-iv-" + safeFileStem(st.type),
                         "Plate I-V trajectories, type " + st.type + " (busiest arm of each stack)",
                         "plate voltage",
                         "V",
                         "plate current",
                         "A",
                         {},
                         false,
                         ""};
    }
    for (const auto& g : identicalGroups(plates)) {
      std::vector<int> members;
      for (std::size_t k : g) members.push_back(numbers[k]);
      PlotSeries s = plates[g.front()];
      s.name = fmt::format("{}{} plate{} {}", st.name,
                           st.arms > 1 ? fmt::format(" arm {},", arm) : std::string(),
                           members.size() > 1 ? "s" : "", numberRanges(members));
      iv[st.type].series.push_back(std::move(s));
    }
  }
  if (!rep.stacks.empty()) {
    capSeries(currents, "stacks");
    capSeries(reverse, "stacks");
    plots.push_back(std::move(currents));
    plots.push_back(std::move(reverse));
    for (const auto& type : ivOrder) {
      capSeries(iv[type], "plate trajectories");
      plots.push_back(std::move(iv[type]));
    }
    capSeries(temps, "stacks");
    plots.push_back(std::move(temps));
  }
  return plots;
}

std::vector<std::pair<std::string, std::string>> runPlots(const Netlist& nl,
                                                          const RunOutcome& out) {
  std::vector<std::pair<std::string, std::string>> svgs;
  for (const auto& p : runPlotList(nl, out)) svgs.emplace_back(p.name, svgPlot(p));
  return svgs;
}

namespace detail {

std::string plotStyleHtml() {
  std::string css(reinterpret_cast<const char*>(kDygraphsCss), kDygraphsCssSize);
  return "<style>" + css +
         "figure.plot{margin:1em 0}figure.plot svg{width:100%;height:auto}"
         ".chartbox{display:flex;gap:0.5em}.chart{flex:1 1 0;min-width:0;height:420px}"
         ".legend{flex:0 0 14em;font-size:0.85em}.legend "
         ".dygraph-legend{position:static;width:auto}"
         ".hint{color:#555;font-size:0.85em}"
         ".pair{display:flex;gap:1em}.pair>figure{flex:1 1 0;min-width:0}"
         ".js .static{display:none}html:not(.js) .chartbox,html:not(.js) .hint{display:none}"
         "@media print{.chartbox,.hint{display:none!important}.static{display:block!important}"
         ".pair{display:block}}</style>\n";
}

std::string plotFigureHtml(const Plot& plot, std::size_t index) {
  const std::string svg = svgPlot(plot);
  if (!plot.timeSeries) return "<figure class=\"plot\">" + svg + "</figure>\n";
  return fmt::format(
      "<figure class=\"plot\"><div class=\"chartbox\"><div class=\"chart\" id=\"chart{0}\">"
      "</div><div class=\"legend\" id=\"chart{0}-legend\"></div></div>"
      "<p class=\"hint\">Drag across the plot to zoom, shift-drag to pan, double-click to see "
      "it all.</p><div class=\"static\">{1}</div></figure>\n",
      index, svg);
}

std::string plotScriptHtml(const std::vector<Plot>& plots) {
  std::string data = "[";
  for (std::size_t k = 0; k < plots.size(); ++k) {
    const Plot& p = plots[k];
    if (!p.timeSeries || p.series.empty()) continue;
    const ScaledPlot sp = scaled(p);
    const auto& x = sp.series.front().x;
    const std::size_t stride = std::max<std::size_t>(1, x.size() / kMaxPoints);
    std::string rows, labels = "\"" + escapeJs(sp.xLabel) + "\"", colours;
    for (std::size_t s = 0; s < sp.series.size(); ++s) {
      labels += ",\"" + escapeJs(sp.series[s].name) + "\"";
      colours += fmt::format("{}\"{}\"", s ? "," : "", seriesColour(s, sp.series.size()));
    }
    for (std::size_t i = 0; i < x.size(); i += stride) {
      rows += fmt::format("{}[{:.7g}", rows.empty() ? "" : ",", x[i]);
      for (const auto& s : sp.series)
        rows += i < s.y.size() && std::isfinite(s.y[i]) ? fmt::format(",{:.6g}", s.y[i])
                                                        : std::string(",null");
      rows += "]";
    }
    data += fmt::format(
        "{}{{\"id\":\"chart{}\",\"title\":\"{}\",\"x\":\"{}\",\"y\":\"{}\",\"labels\":[{}],"
        "\"colors\":[{}],\"rows\":[{}]}}",
        data.size() > 1 ? "," : "", k, escapeJs(p.title), escapeJs(sp.xLabel), escapeJs(sp.yLabel),
        labels, colours, rows);
  }
  data += "]";
  std::string js(reinterpret_cast<const char*>(kDygraphsJs), kDygraphsJsSize);
  return "<script>\n" + js +
         "\n</script>\n<script>\n"
         "document.documentElement.classList.add('js');\n"
         "for (const c of " +
         data +
         ") {\n"
         "  new Dygraph(document.getElementById(c.id), c.rows, {labels: c.labels, colors: "
         "c.colors,\n"
         "    title: c.title, xlabel: c.x, ylabel: c.y, legend: 'always', labelsSeparateLines: "
         "true,\n    labelsDiv: document.getElementById(c.id + '-legend'),\n"
         "    strokeWidth: 1.4, axisLabelWidth: 70, yLabelWidth: 20});\n"
         "}\n</script>\n";
}

}  // namespace detail
}  // namespace disc
