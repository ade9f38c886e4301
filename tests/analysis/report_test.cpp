// The report a person reads: SI-scaled figures, the overview, grouped plots with legends in
// words and distinct colours, the page's interactive charts.
#include <catch2/catch.hpp>

#include <set>

#include <fmt/format.h>
#include <disc/disc.hpp>

using namespace disc;

TEST_CASE("Figures carry the SI prefix that brings them into 1 to 1000", "[report]") {
  // The prefixes and their factors: SI Brochure, 9th edition (BIPM 2019), table 7; four
  // significant digits as the report prints them.
  CHECK(siValue(0.0008, "A") == "800.0 \u00b5A");
  CHECK(siValue(1.0575, "A") == "1.058 A");
  CHECK(siValue(168.856, "W") == "168.9 W");
  CHECK(siValue(-0.7572, "A") == "-757.2 mA");
  CHECK(siValue(25200, "V") == "25.20 kV");
  CHECK(siValue(4.7e-6, "F") == "4.700 \u00b5F");
  // 0.99996 A is 999.96 mA, which rounds to 1000: the next prefix up.
  CHECK(siValue(0.99996, "A") == "1.000 A");
  CHECK(siValue(0.0, "W") == "0 W");
}

TEST_CASE("Series colours in one plot are all distinct", "[report]") {
  for (std::size_t n : {1u, 4u, 10u, 12u, 24u}) {
    std::set<std::string> seen;
    for (std::size_t k = 0; k < n; ++k) seen.insert(seriesColour(k, n));
    CHECK(seen.size() == n);
  }
}

namespace {

/// The names of every series, for the "legends in words" checks.
std::vector<std::string> legendNames(const std::vector<Plot>& plots) {
  std::vector<std::string> names;
  for (const auto& p : plots)
    for (const auto& s : p.series) names.push_back(s.name);
  return names;
}

}  // namespace

TEST_CASE("Paralleled stacks drawn apart are summed in the overview", "[report]") {
  // Two stacks across the same nodes into one load (invented demonstration values), the first
  // with a deformed plate so the two do not share alike.
  Netlist nl = parseNetlist(R"(
voltage MAINS line gnd mains rms=24V frequency=50Hz resistance=0.2ohm
stack SRA line out type=se-45mm-square plates=2 spread=0.2 seed=3
stack SRB line out type=se-45mm-square plates=2
capacitor C1 out gnd 1000uF
resistor RL out gnd 47ohm
output out gnd load=RL
run transient stop=0.2s
)");
  const RunOutcome out = runNetlist(nl);
  const auto& a = out.report.stacks.at(0);
  const auto& b = out.report.stacks.at(1);
  CHECK(a.paralleled == "SRA SRB");
  CHECK(b.paralleled == "SRA SRB");
  // The shares are each stack's part of the summed average current.
  CHECK(a.parallelShare + b.parallelShare == Approx(1.0).margin(1e-12));
  CHECK(a.parallelShare == Approx(a.currentAverage / (a.currentAverage + b.currentAverage)));
  const std::string text = reportText(out.report);
  const auto overview = text.find("OVERVIEW");
  REQUIRE(overview != std::string::npos);
  CHECK(overview < text.find("OUTPUT"));
  CHECK(text.find(fmt::format("{:.1f} % of SRA SRB", 100 * a.parallelShare)) != std::string::npos);
  CHECK(text.find("hottest plate in") != std::string::npos);
}

TEST_CASE("Plots are grouped, scaled and named in words", "[report]") {
  // The television doubler: two stacks of ten identical plates of one type.
  Netlist nl = loadNetlist(DISC_NETLIST_DIR "/tv-doubler-half-wave.disc");
  const RunOutcome out = runNetlist(nl);
  const auto plots = runPlotList(nl, out);
  std::vector<std::string> stems;
  for (const auto& p : plots) stems.push_back(p.name);
  CHECK(stems == std::vector<std::string>{"output-voltage", "output-ripple", "stack-currents",
                                          "reverse-voltages", "plate-iv-se-45mm-square",
                                          "temperatures"});
  // One plate I-V plot for the one type; ten identical plates are one line each stack.
  const Plot& iv = plots.at(4);
  REQUIRE(iv.series.size() == 2);
  CHECK(iv.series[0].name == "SR1 plates 1-10");
  CHECK(iv.series[1].name == "SR2 plates 1-10");
  // The ripple zoom spans the settled window only.
  const Plot& ripple = plots.at(1);
  CHECK(ripple.series.at(0).x.front() >= out.report.window0);
  CHECK(ripple.series.at(0).x.back() == Approx(out.report.window1));
  // No raw signal names in the legends.
  for (const auto& n : legendNames(plots)) CHECK(n.find(':') == std::string::npos);
  // The stack currents peak near an ampere or two: the axis says A, not kA or mA; the
  // temperature plot is never scaled.
  const std::string svg = svgPlot(plots.at(2));
  CHECK(svg.find("current (A)") != std::string::npos);
  CHECK(svgPlot(plots.at(5)).find("temperature (degC)") != std::string::npos);
}

TEST_CASE("A small current is plotted in milliamperes", "[report]") {
  Plot p{"x", "t", "time", "s", "current", "A", {{"a", {0, 0.5, 1}, {0, 0.002, 0.004}}}, true, ""};
  const std::string svg = svgPlot(p);
  CHECK(svg.find("current (mA)") != std::string::npos);
  // The largest tick is 4 (mA), not 0.004.
  CHECK(svg.find(">4</text>") != std::string::npos);
  CHECK(svg.find("0.004") == std::string::npos);
}

TEST_CASE("The page is one file: the chart library inlined, each chart with its SVG", "[report]") {
  Netlist nl = loadNetlist(DISC_NETLIST_DIR "/meter-rectifier-cuox.disc");
  const RunOutcome out = runNetlist(nl);
  const std::string html = reportHtml(nl, out);
  CHECK(html.find("@license") != std::string::npos);  // dygraphs' notice, inlined
  CHECK(html.find("<script src") == std::string::npos);
  CHECK(html.find("<link") == std::string::npos);
  std::size_t charts = 0, pos = 0;
  while ((pos = html.find("class=\"chart\"", pos)) != std::string::npos) ++charts, ++pos;
  std::size_t timeSeries = 0;
  for (const auto& p : runPlotList(nl, out)) timeSeries += p.timeSeries ? 1 : 0;
  CHECK(charts == timeSeries);
  CHECK(charts > 0);
  CHECK(html.find("Overview") < html.find("Plots"));
}
