// A campaign's summary: statistics of every figure, how often each rating is exceeded, and the
// sharing of paralleled stacks, as text, JSON and HTML with histograms and a scatter plot.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include "analysis/text_fields.hpp"
#include "disc/campaign.hpp"
#include "disc/devices/stack.hpp"
#include "disc/error.hpp"
#include "disc/supply_report.hpp"

namespace disc {
namespace {

/// The p-th quantile of sorted values by linear interpolation between order statistics (the
/// definition numpy and R use by default: Hyndman and Fan 1996, type 7).
double quantile(const std::vector<double>& sorted, double p) {
  if (sorted.empty()) return 0.0;
  const double h = (static_cast<double>(sorted.size()) - 1.0) * p;
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

ColumnSummary summarise(const CampaignColumn& c) {
  ColumnSummary s{c.name, c.unit};
  std::vector<double> v;
  for (double x : c.values)
    if (std::isfinite(x)) v.push_back(x);
  s.count = v.size();
  if (v.empty()) return s;
  std::sort(v.begin(), v.end());
  double sum = 0.0;
  for (double x : v) sum += x;
  s.mean = sum / static_cast<double>(v.size());
  double ss = 0.0;
  for (double x : v) ss += (x - s.mean) * (x - s.mean);
  s.stddev = v.size() > 1 ? std::sqrt(ss / static_cast<double>(v.size() - 1)) : 0.0;
  s.min = v.front();
  s.max = v.back();
  s.p05 = quantile(v, 0.05);
  s.p50 = quantile(v, 0.50);
  s.p95 = quantile(v, 0.95);
  return s;
}

double fractionOf(const CampaignColumn& c, const std::string& level, std::size_t ran) {
  if (ran == 0) return 0.0;
  const auto n = std::count(c.words.begin(), c.words.end(), level);
  return static_cast<double>(n) / static_cast<double>(ran);
}

std::string armLetter(int arm) {
  return std::string(1, static_cast<char>('A' + (arm - 1) % 26));
}

bool isBookkeeping(const std::string& name) {
  return name == "variant" || name == "grid" || name == "build" ||
         (name.size() > 5 && name.compare(name.size() - 5, 5, ".seed") == 0);
}

std::string percent(double f) {
  return f >= 0.1 ? fmt::format("{:.0f} %", 100 * f) : fmt::format("{:.1f} %", 100 * f);
}

}  // namespace

CampaignSummary summariseCampaign(const Netlist& nl, const CampaignSpec& spec,
                                  const CampaignTable& t) {
  CampaignSummary out;
  out.title = nl.title;
  out.file = nl.path;
  out.variants = t.rows();
  out.builds = spec.builds;
  const auto& status = t["status"].words;
  out.failed = static_cast<std::size_t>(
      std::count_if(status.begin(), status.end(), [](const std::string& s) { return s != "ok"; }));
  const std::size_t ran = out.variants - out.failed;
  if (t.has("basis"))
    for (const auto& b : t["basis"].words) {
      if (b == "periodic") ++out.periodicBasis;
      if (b.rfind("transient", 0) == 0) ++out.transientBasis;
    }
  for (const auto& a : spec.axes)
    out.varied.push_back(
        fmt::format("{}.{} over {} values", a.element, a.parameter, a.values.size()));
  for (const auto& tol : spec.tolerances)
    out.varied.push_back(fmt::format(
        "{}.{} within {:+.4g} % / {:+.4g} % ({})", tol.element, tol.parameter, 100 * tol.lower,
        100 * tol.upper, tol.law == CampaignTolerance::Law::Uniform ? "uniform" : "normal"));
  std::vector<const Stack*> stacks;
  for (const auto& d : nl.circuit.devices())
    if (auto* s = dynamic_cast<const Stack*>(d.get())) stacks.push_back(s);
  if (spec.redrawPlates)
    for (const Stack* s : stacks)
      if (t.has(s->name() + ".seed"))
        out.varied.push_back(
            fmt::format("{}: new plates each build (the type's spread)", s->name()));

  for (const auto& c : t.columns)
    if (!c.text && !isBookkeeping(c.name)) out.figures.push_back(summarise(c));
  for (const auto& c : t.columns) {
    if (!c.text || c.name == "status" || c.name == "worst") continue;
    const auto dot = c.name.find('.');
    RatingSummary r{c.name.substr(0, dot), c.name.substr(dot + 1), fractionOf(c, "exceeds", ran),
                    fractionOf(c, "marginal", ran)};
    out.ratings.push_back(std::move(r));
  }

  for (const Stack* s : stacks) {
    const int arms = s->options().arms;
    if (arms < 2 || !t.has(s->name() + ".imbalance")) continue;
    CampaignSummary::Sharing sh;
    sh.stack = s->name();
    sh.arms = arms;
    sh.temperatureLimit = s->type().ratings.maxPlateTemperature;
    std::vector<double> hottestAll(t.rows(), -1.0);
    for (int m = 1; m <= arms; ++m) {
      ArmSummary a;
      a.stack = s->name();
      a.arm = m;
      a.share = summarise(t[fmt::format("{}.arm{}.share", s->name(), m)]);
      const auto& hot = t[fmt::format("{}.arm{}.hottest", s->name(), m)];
      a.hottest = summarise(hot);
      a.fractionOverLimit =
          fractionOf(t[fmt::format("{}.arm{}.verdict", s->name(), m)], "exceeds", ran);
      for (std::size_t r = 0; r < t.rows(); ++r)
        if (std::isfinite(hot.values[r])) hottestAll[r] = std::max(hottestAll[r], hot.values[r]);
      if (a.share.p95 > sh.share95) {
        sh.share95 = a.share.p95;
        sh.heaviestArm = m;
      }
      out.arms.push_back(std::move(a));
    }
    sh.imbalance95 = summarise(t[s->name() + ".imbalance"]).p95;
    hottestAll.erase(std::remove(hottestAll.begin(), hottestAll.end(), -1.0), hottestAll.end());
    std::sort(hottestAll.begin(), hottestAll.end());
    sh.hottest95 = quantile(hottestAll, 0.95);
    // The stack's rated average current with equal sharing: its average forward current over
    // the ratio of the arm-average density to the (ambient-derated) rated density.
    const auto& cur = t[s->name() + ".current_average"].values;
    const auto& ratio = t[s->name() + ".average_forward_current_density.ratio"].values;
    std::vector<double> rated;
    for (std::size_t r = 0; r < t.rows(); ++r)
      if (std::isfinite(cur[r]) && std::isfinite(ratio[r]) && ratio[r] > 0)
        rated.push_back(cur[r] / ratio[r]);
    std::sort(rated.begin(), rated.end());
    sh.ratedCurrent = quantile(rated, 0.5);
    // The heaviest arm carries share95 of the stack in 5 % of builds; it stays within one arm's
    // rating (ratedCurrent / arms) when the stack carries at most this much.
    sh.deratedCurrent = sh.share95 > 0 ? sh.ratedCurrent / arms / sh.share95 : 0.0;
    out.sharing.push_back(sh);
  }

  // The restorer's reading first.
  // Over a grid the figures mix grid points: the reading says so.
  const std::string builds =
      spec.axes.empty()
          ? fmt::format("{} build{}", out.variants, out.variants == 1 ? "" : "s")
          : fmt::format("{} variants ({} grid points x {} builds)", out.variants,
                        out.variants / static_cast<std::size_t>(spec.builds), spec.builds);
  const bool spread = std::any_of(out.varied.begin(), out.varied.end(), [](const std::string& v) {
    return v.find("new plates") != std::string::npos;
  });
  for (const auto& sh : out.sharing) {
    out.reading.push_back(fmt::format(
        "In {}{}, column {} of {} carries {} or more of the stack's current in 5 % of them "
        "(equal sharing: {}); the hottest plate reaches {:.1f} degC or more in 5 % (limit "
        "{:.0f} degC).",
        builds, spread ? " with typical plate spread" : "", armLetter(sh.heaviestArm), sh.stack,
        percent(sh.share95), percent(1.0 / sh.arms), sh.hottest95 - 273.15,
        sh.temperatureLimit - 273.15));
    if (sh.ratedCurrent > 0)
      out.reading.push_back(fmt::format(
          "Derate {} to about {:.3g} A average forward current ({} of its {:.3g} A "
          "equal-sharing rating) to keep its heaviest column within its share of the rating in "
          "95 % of builds (first order, at the simulated load: confirm with a campaign at the "
          "derated load).",
          sh.stack, sh.deratedCurrent, percent(sh.deratedCurrent / sh.ratedCurrent),
          sh.ratedCurrent));
  }
  bool any = false;
  for (const auto& r : out.ratings)
    if (r.fractionExceeds > 0) {
      any = true;
      // An arm's verdict column ("arm2.verdict") reads as its column letter.
      const bool arm = r.figure.rfind("arm", 0) == 0 && r.figure.size() > 11 &&
                       r.figure.compare(r.figure.size() - 8, 8, ".verdict") == 0;
      out.reading.push_back(
          arm ? fmt::format("{} column {} exceeds its rating (hottest plate or current density) "
                            "in {} of builds.",
                            r.stack, armLetter(std::stoi(r.figure.substr(3))),
                            percent(r.fractionExceeds))
              : fmt::format("{}: {} exceeds its rating in {} of builds.", r.stack, r.figure,
                            percent(r.fractionExceeds)));
    }
  if (!any && ran > 0 && !out.ratings.empty())
    out.reading.push_back(fmt::format("No rating is exceeded in any of the {} that ran.", builds));
  if (out.failed > 0)
    out.reading.push_back(fmt::format("{} of {} could not be simulated (see the status column).",
                                      out.failed, builds));
  return out;
}

std::string campaignText(const CampaignSummary& s) {
  std::string o =
      fmt::format("libdisc campaign: {}\nfile {}, {} variant(s), {} build(s) per grid point\n\n",
                  s.title, s.file, s.variants, s.builds);
  if (s.periodicBasis + s.transientBasis > 0) {
    o.pop_back();
    o += fmt::format(
        "figures from the settled period (periodic steady state) in {}, from a transient from "
        "cold in {} (the basis column says why)\n\n",
        s.periodicBasis, s.transientBasis);
  }
  o += "READING\n";
  for (const auto& r : s.reading) o += "  " + r + "\n";
  o += "\nVARIED\n";
  for (const auto& v : s.varied) o += "  " + v + "\n";
  if (!s.sharing.empty()) {
    o += "\nSHARING (per column: share of the stack current; hottest plate, steady-state "
         "estimate)\n";
    for (const auto& a : s.arms)
      o += fmt::format(
          "  {} column {}: share mean {:.1f} %, 5-95 % {:.1f}-{:.1f} %; hottest "
          "mean {:.1f} degC, 95 % {:.1f} degC; over the limit in {}\n",
          a.stack, armLetter(a.arm), 100 * a.share.mean, 100 * a.share.p05, 100 * a.share.p95,
          a.hottest.mean - 273.15, a.hottest.p95 - 273.15, percent(a.fractionOverLimit));
  }
  o += "\nRATINGS (fraction of builds marginal / exceeding)\n";
  for (const auto& r : s.ratings)
    o += fmt::format("  {:<8} {:<52} {:>7} {:>7}\n", r.stack, r.figure, percent(r.fractionMarginal),
                     percent(r.fractionExceeds));
  o += "\nFIGURES                                             mean      std       5 %      50 %    "
       "  95 %\n";
  for (const auto& f : s.figures)
    o += fmt::format("  {:<44} {:>9.4g} {:>9.3g} {:>9.4g} {:>9.4g} {:>9.4g} {}\n", f.name, f.mean,
                     f.stddev, f.p05, f.p50, f.p95, f.unit);
  o += "\n" + simulationDisclaimer() + "\n";
  return o;
}

std::string campaignJson(const CampaignSummary& s) {
  using nlohmann::json;
  auto col = [](const ColumnSummary& c) {
    return json{{"name", c.name},  {"unit", c.unit}, {"count", c.count}, {"mean", c.mean},
                {"std", c.stddev}, {"min", c.min},   {"max", c.max},     {"p05", c.p05},
                {"p50", c.p50},    {"p95", c.p95}};
  };
  json j;
  j["schema"] = kCampaignSchema;
  j["title"] = s.title;
  j["file"] = s.file;
  j["variants"] = s.variants;
  j["failed"] = s.failed;
  j["basis"] = {{"periodic", s.periodicBasis}, {"transient", s.transientBasis}};
  j["builds"] = s.builds;
  j["reading"] = s.reading;
  j["varied"] = s.varied;
  j["figures"] = json::array();
  for (const auto& f : s.figures) j["figures"].push_back(col(f));
  j["ratings"] = json::array();
  for (const auto& r : s.ratings)
    j["ratings"].push_back({{"stack", r.stack},
                            {"figure", r.figure},
                            {"fraction_exceeds", r.fractionExceeds},
                            {"fraction_marginal", r.fractionMarginal}});
  j["sharing"] = json::array();
  for (const auto& sh : s.sharing) {
    json arms = json::array();
    for (const auto& a : s.arms)
      if (a.stack == sh.stack)
        arms.push_back({{"arm", a.arm},
                        {"share", col(a.share)},
                        {"hottest_K", col(a.hottest)},
                        {"fraction_over_limit", a.fractionOverLimit}});
    j["sharing"].push_back({{"stack", sh.stack},
                            {"arms", arms},
                            {"heaviest_arm", sh.heaviestArm},
                            {"share_p95", sh.share95},
                            {"imbalance_p95", sh.imbalance95},
                            {"hottest_p95_K", sh.hottest95},
                            {"temperature_limit_K", sh.temperatureLimit},
                            {"rated_current_A", sh.ratedCurrent},
                            {"derated_current_A", sh.deratedCurrent}});
  }
  return j.dump(2);
}

namespace {

/// A histogram of each series over common bins, as bars side by side.
std::string svgHistogram(const std::string& title, const std::string& xLabel,
                         const std::vector<std::pair<std::string, std::vector<double>>>& series) {
  constexpr double W = 560, H = 260, L = 50, B = 40, T = 25, R = 10;
  double lo = 1e300, hi = -1e300;
  for (const auto& [_, v] : series)
    for (double x : v)
      if (std::isfinite(x)) lo = std::min(lo, x), hi = std::max(hi, x);
  if (!(hi > lo)) hi = lo + 1e-9;
  constexpr int kBins = 30;
  std::vector<std::vector<int>> counts(series.size(), std::vector<int>(kBins, 0));
  int top = 1;
  for (std::size_t k = 0; k < series.size(); ++k)
    for (double x : series[k].second) {
      if (!std::isfinite(x)) continue;
      int b = static_cast<int>((x - lo) / (hi - lo) * kBins);
      b = std::clamp(b, 0, kBins - 1);
      top = std::max(top, ++counts[k][static_cast<std::size_t>(b)]);
    }
  static const char* colours[] = {"#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad", "#d68910"};
  std::string o = fmt::format(
      "<svg xmlns='http://www.w3.org/2000/svg' width='{}' height='{}' font-family='sans-serif' "
      "font-size='11'><text x='{}' y='15' font-weight='bold'>{}</text>",
      W, H, L, escapeHtml(title));
  const double bw = (W - L - R) / kBins;
  for (std::size_t k = 0; k < series.size(); ++k) {
    for (int b = 0; b < kBins; ++b) {
      const double h = (H - T - B) * counts[k][static_cast<std::size_t>(b)] / top;
      const double w = bw / static_cast<double>(series.size());
      o += fmt::format("<rect x='{:.1f}' y='{:.1f}' width='{:.1f}' height='{:.1f}' fill='{}'/>",
                       L + b * bw + k * w, H - B - h, w, h, colours[k % 5]);
    }
    o += fmt::format("<text x='{}' y='{}' fill='{}'>{}</text>", W - R - 120, T + 14 * (k + 1),
                     colours[k % 5], escapeHtml(series[k].first));
  }
  o +=
      fmt::format("<line x1='{}' y1='{}' x2='{}' y2='{}' stroke='black'/>", L, H - B, W - R, H - B);
  o += fmt::format(
      "<text x='{}' y='{}'>{:.4g}</text><text x='{}' y='{}' text-anchor='end'>{:.4g}</text>", L,
      H - B + 14, lo, W - R, H - B + 14, hi);
  o += fmt::format("<text x='{}' y='{}' text-anchor='middle'>{}</text>", (L + W - R) / 2, H - 8,
                   escapeHtml(xLabel));
  o += fmt::format(
      "<text x='12' y='{}' transform='rotate(-90 12 {})' text-anchor='middle'>builds (max "
      "{})</text>",
      (T + H - B) / 2, (T + H - B) / 2, top);
  return o + "</svg>";
}

/// A scatter of (x, y) points per series.
std::string svgScatter(
    const std::string& title, const std::string& xLabel, const std::string& yLabel,
    const std::vector<std::tuple<std::string, std::vector<double>, std::vector<double>>>& series) {
  constexpr double W = 560, H = 300, L = 60, B = 40, T = 25, R = 10;
  double x0 = 1e300, x1 = -1e300, y0 = 1e300, y1 = -1e300;
  for (const auto& [_, xs, ys] : series)
    for (std::size_t k = 0; k < xs.size(); ++k)
      if (std::isfinite(xs[k]) && std::isfinite(ys[k]))
        x0 = std::min(x0, xs[k]), x1 = std::max(x1, xs[k]), y0 = std::min(y0, ys[k]),
        y1 = std::max(y1, ys[k]);
  if (!(x1 > x0)) x1 = x0 + 1e-9;
  if (!(y1 > y0)) y1 = y0 + 1e-9;
  static const char* colours[] = {"#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad", "#d68910"};
  std::string o = fmt::format(
      "<svg xmlns='http://www.w3.org/2000/svg' width='{}' height='{}' font-family='sans-serif' "
      "font-size='11'><text x='{}' y='15' font-weight='bold'>{}</text>",
      W, H, L, escapeHtml(title));
  std::size_t k = 0;
  for (const auto& [name, xs, ys] : series) {
    for (std::size_t i = 0; i < xs.size(); ++i) {
      if (!std::isfinite(xs[i]) || !std::isfinite(ys[i])) continue;
      o += fmt::format("<circle cx='{:.1f}' cy='{:.1f}' r='1.6' fill='{}' fill-opacity='0.6'/>",
                       L + (xs[i] - x0) / (x1 - x0) * (W - L - R),
                       H - B - (ys[i] - y0) / (y1 - y0) * (H - T - B), colours[k % 5]);
    }
    o += fmt::format("<text x='{}' y='{}' fill='{}'>{}</text>", W - R - 120, T + 14 * (k + 1),
                     colours[k % 5], escapeHtml(name));
    ++k;
  }
  o +=
      fmt::format("<line x1='{}' y1='{}' x2='{}' y2='{}' stroke='black'/>", L, H - B, W - R, H - B);
  o += fmt::format("<line x1='{}' y1='{}' x2='{}' y2='{}' stroke='black'/>", L, T, L, H - B);
  o += fmt::format(
      "<text x='{}' y='{}'>{:.4g}</text><text x='{}' y='{}' text-anchor='end'>{:.4g}</text>", L,
      H - B + 14, x0, W - R, H - B + 14, x1);
  o += fmt::format(
      "<text x='{}' y='{}' text-anchor='end'>{:.4g}</text><text x='{}' y='{}' "
      "text-anchor='end'>{:.4g}</text>",
      L - 4, H - B, y0, L - 4, T + 8, y1);
  o += fmt::format("<text x='{}' y='{}' text-anchor='middle'>{}</text>", (L + W - R) / 2, H - 8,
                   escapeHtml(xLabel));
  o += fmt::format(
      "<text x='12' y='{}' transform='rotate(-90 12 {})' text-anchor='middle'>{}</text>",
      (T + H - B) / 2, (T + H - B) / 2, escapeHtml(yLabel));
  return o + "</svg>";
}

}  // namespace

std::string campaignHtml(const CampaignSummary& s, const CampaignTable& t) {
  std::string o = fmt::format(
      "<!DOCTYPE html><html><head><meta charset='utf-8'><title>campaign: {}</title>"
      "<style>body{{font-family:sans-serif;max-width:60em;margin:2em auto}}"
      "td,th{{padding:0 .6em;text-align:right}}td:first-child,th:first-child{{text-align:left}}"
      "</style></head><body><h1>Campaign: {}</h1><p>{} &middot; {} "
      "variant(s)</p><h2>Reading</h2><ul>",
      escapeHtml(s.title), escapeHtml(s.title), escapeHtml(s.file), s.variants);
  for (const auto& r : s.reading) o += "<li>" + escapeHtml(r) + "</li>";
  o += "</ul><h2>Varied</h2><ul>";
  for (const auto& v : s.varied) o += "<li>" + escapeHtml(v) + "</li>";
  o += "</ul>";
  if (!s.sharing.empty()) o += "<h2>Sharing</h2>";
  for (const auto& sh : s.sharing) {
    std::vector<std::pair<std::string, std::vector<double>>> shares;
    std::vector<std::tuple<std::string, std::vector<double>, std::vector<double>>> scatter;
    for (int m = 1; m <= sh.arms; ++m) {
      std::vector<double> pct = t[fmt::format("{}.arm{}.share", sh.stack, m)].values;
      for (double& x : pct) x *= 100.0;
      std::vector<double> degC = t[fmt::format("{}.arm{}.hottest", sh.stack, m)].values;
      for (double& x : degC) x -= 273.15;
      shares.emplace_back("column " + armLetter(m), pct);
      scatter.emplace_back("column " + armLetter(m), pct, degC);
    }
    o += fmt::format("<h3>{}</h3>", escapeHtml(sh.stack));
    o += svgHistogram(sh.stack + ": share of the stack current per column", "share, %", shares);
    o += svgScatter(sh.stack + ": share against the column's hottest plate", "share, %",
                    "hottest plate, degC", scatter);
  }
  o += "<h2>Ratings</h2><table><tr><th>stack</th><th>figure</th><th>marginal</th><th>exceeds</th></"
       "tr>";
  for (const auto& r : s.ratings)
    o += fmt::format("<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>", escapeHtml(r.stack),
                     escapeHtml(r.figure), percent(r.fractionMarginal), percent(r.fractionExceeds));
  o += "</table><h2>Figures</h2><table><tr><th>figure</th><th>mean</th><th>std</th><th>5 %</th>"
       "<th>50 %</th><th>95 %</th><th>unit</th></tr>";
  for (const auto& f : s.figures)
    o += fmt::format(
        "<tr><td>{}</td><td>{:.4g}</td><td>{:.3g}</td><td>{:.4g}</td><td>{:.4g}</td>"
        "<td>{:.4g}</td><td>{}</td></tr>",
        escapeHtml(f.name), f.mean, f.stddev, f.p05, f.p50, f.p95, escapeHtml(f.unit));
  o += "</table><p>" + escapeHtml(simulationDisclaimer()) + "</p></body></html>\n";
  return o;
}

}  // namespace disc
