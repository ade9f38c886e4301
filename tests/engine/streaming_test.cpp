// Rows streamed to a CSV file as a transient runs, the decimation and record-from rules, and a
// Result whose memory stays bounded whatever the stop time.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include <disc/disc.hpp>

using namespace disc;

namespace {

std::string readFile(const std::string& path) {
  std::ifstream f(path, std::ios::binary);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

std::string outDir(const std::string& name) {
  const auto dir = std::filesystem::path(DISC_TEST_OUT_DIR) / "streaming" / name;
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir.string();
}

/// The report's figures as JSON, without the run's wall time (the only figure that differs
/// between two runs of one circuit).
std::string figures(SupplyReport rep) {
  rep.stats.wallSeconds = 0.0;
  return reportJson(rep);
}

/// The times a decimated run keeps, by the rule of TransientOptions::recordSpacing, applied to
/// an undecimated run's times from `from` on.
std::vector<double> expectedTimes(const std::vector<double>& all, double from, double spacing) {
  std::vector<double> kept;
  double last = 0.0;
  for (std::size_t k = 0; k < all.size(); ++k) {
    if (all[k] < from) continue;
    if (kept.empty() || all[k] >= last + spacing * (1.0 - 1e-9)) {
      kept.push_back(all[k]);
      last = all[k];
    } else if (k + 1 == all.size()) {
      kept.push_back(all[k]);  // the run's last row is always kept
    }
  }
  return kept;
}

/// The names a folder's manifest lists.
std::set<std::string> manifestNames(const std::string& dir) {
  std::set<std::string> names;
  std::istringstream in(readFile(dir + "/" + kManifestName));
  std::string line;
  while (std::getline(in, line))
    if (!line.empty() && line[0] != '#') names.insert(line);
  return names;
}

/// The entries of a folder (hidden ones too when `all`), the manifest left out.
std::set<std::string> folderNames(const std::string& dir, bool all) {
  std::set<std::string> names;
  for (const auto& e : std::filesystem::directory_iterator(dir)) {
    const std::string name = e.path().filename().string();
    if (name != kManifestName && (all || name[0] != '.')) names.insert(name);
  }
  return names;
}

}  // namespace

TEST_CASE(
    "A CSV streamed as the run goes is the CSV of the whole run in memory, and the report and "
    "plots are unchanged",
    "[engine][streaming]") {
  Netlist nl = loadNetlist(DISC_NETLIST_DIR "/table-radio-half-wave.disc");
  const RunOutcome whole = runNetlist(nl);
  const std::string dir = outDir("table-radio");
  StagedFolder folder(dir);
  const RunOutcome streamed = runNetlist(nl, {}, &folder);
  REQUIRE(whole.analyses.size() == 1);
  REQUIRE(streamed.analyses.size() == 1);
  CHECK_FALSE(whole.analyses[0].streamed);
  CHECK(streamed.analyses[0].streamed);
  // The rows went to the staged folder; the target stays as it was until the commit.
  CHECK(folder.has("transient-1.csv"));
  CHECK(std::filesystem::is_empty(dir));
  // Every row went to the file; the Result kept them all only in the whole run.
  const Result& kept = streamed.analyses[0].result;
  CHECK(kept.recordedRows() == whole.analyses[0].result.time().size());
  REQUIRE(whole.hasReport);
  REQUIRE(streamed.hasReport);
  CHECK(figures(streamed.report) == figures(whole.report));
  // The settled-window plots from the kept rows are the whole run's, point for point.
  const auto plotsWhole = runPlotList(nl, whole), plotsKept = runPlotList(nl, streamed);
  REQUIRE(plotsWhole.size() == plotsKept.size());
  for (std::size_t p = 0; p < plotsWhole.size(); ++p) {
    INFO(plotsWhole[p].name);
    CHECK(plotsWhole[p].name == plotsKept[p].name);
    if (plotsWhole[p].name == "output-voltage" || plotsWhole[p].name == "temperatures") continue;
    REQUIRE(plotsWhole[p].series.size() == plotsKept[p].series.size());
    for (std::size_t s = 0; s < plotsWhole[p].series.size(); ++s) {
      CHECK(plotsWhole[p].series[s].x == plotsKept[p].series[s].x);
      CHECK(plotsWhole[p].series[s].y == plotsKept[p].series[s].y);
    }
  }
  // writeRunFiles adds the rest and commits: the streamed CSV is in the folder, listed in its
  // manifest with the others, and nothing is left beside the folder.
  const auto files = writeRunFiles(nl, streamed, folder);
  CHECK(std::find(files.begin(), files.end(), dir + "/transient-1.csv") != files.end());
  const std::string csv = readFile(dir + "/transient-1.csv");
  CHECK(csv == resultCsv(whole.analyses[0].result));
  CHECK(std::filesystem::exists(dir + "/report.json"));
  const auto listed = manifestNames(dir);
  CHECK(listed.count("transient-1.csv") == 1);
  CHECK(listed.count("report.json") == 1);
  CHECK(listed == folderNames(dir, false));
  // (The parent holds the other tests' folders too: only this one's prepared folder counts.)
  for (const auto& name : folderNames(std::filesystem::path(dir).parent_path().string(), true))
    CHECK(name.rfind(".table-radio.", 0) == std::string::npos);
}

TEST_CASE("A run that fails half way leaves the folder's earlier run as it was",
          "[engine][streaming]") {
  // Two transients: the first streams its whole CSV, the second is cancelled half way. The
  // earlier run's files stay, byte for byte, and no prepared folder is left beside them.
  const Netlist nl = parseNetlist(
      "voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
      "capacitor C1 b gnd 10uF\nrun transient stop=0.1s\nrun transient stop=0.2s\n");
  const std::string dir = outDir("failed") + "/run";
  writeRunFiles(nl, runNetlist(nl), dir);
  std::map<std::string, std::string> before;
  for (const auto& name : folderNames(dir, false)) before[name] = readFile(dir + "/" + name);
  REQUIRE(before.count("transient-2.csv") == 1);
  bool cancelled = false;
  {
    StagedFolder folder(dir);
    auto cancelHalfWay = [&](double t, double stop) {
      cancelled = stop > 0.15 && t > 0.1;
      return !cancelled;
    };
    CHECK_THROWS_AS(runNetlist(nl, cancelHalfWay, &folder), Cancelled);
    // The first transient's CSV is complete in the staged folder, the second's discarded.
    CHECK(folder.has("transient-1.csv"));
    CHECK_FALSE(folder.has("transient-2.csv"));
  }
  CHECK(cancelled);
  std::map<std::string, std::string> after;
  for (const auto& name : folderNames(dir, false)) after[name] = readFile(dir + "/" + name);
  CHECK(after == before);
  CHECK(folderNames(std::filesystem::path(dir).parent_path().string(), true) ==
        std::set<std::string>{"run"});
}

TEST_CASE("record-from and record-spacing keep the rows their rule names", "[engine][streaming]") {
  // A 50 Hz source into an RC low-pass, fixed largest step: the steps do not depend on what
  // is recorded, so the decimated run's rows are a subset of the full run's.
  Netlist nl = parseNetlist(
      "voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
      "capacitor C1 b gnd 10uF\nrun transient stop=0.1s max-step=0.2ms\n");
  TransientOptions o = nl.analyses.back().transient;
  o.record = {"v:b", "i:R1"};
  const Result all = transient(nl.circuit, o);
  REQUIRE(all.time().size() > 400);
  for (const auto& [from, spacing] : std::vector<std::pair<double, double>>{
           {0.0, 0.0}, {0.0123, 0.0}, {0.0, 1e-3}, {0.0123, 2.5e-3}, {0.05, 0.07}}) {
    INFO("record-from " << from << " s, record-spacing " << spacing << " s");
    TransientOptions d = o;
    d.recordFrom = from;
    d.recordSpacing = spacing;
    const Result r = transient(nl.circuit, d);
    const std::vector<double> want = expectedTimes(all.time(), from, spacing);
    CHECK(r.time() == want);
    // The values are those of the full run at the same times.
    std::size_t j = 0;
    for (std::size_t k = 0; k < r.time().size(); ++k) {
      while (all.time()[j] != r.time()[k]) ++j;
      CHECK(r["v:b"][k] == all["v:b"][j]);
    }
    CHECK(r.time().front() >= from);
    CHECK(r.time().back() == all.time().back());
    // The rows recorded (from record-from, before decimation) are counted all the same, and
    // their extremes cover the rows decimation dropped.
    const auto recorded = static_cast<std::size_t>(
        std::count_if(all.time().begin(), all.time().end(), [&](double t) { return t >= from; }));
    CHECK(r.recordedRows() == recorded);
    double hi = -1e300;
    for (std::size_t k = 0; k < all.time().size(); ++k)
      if (all.time()[k] >= from) hi = std::max(hi, all["i:R1"][k]);
    CHECK(r.extent("i:R1").max == hi);
  }
  // The language reads both keys, and refuses a record-from at or past the stop time.
  Netlist k = parseNetlist(
      "voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a gnd 1k\n"
      "run transient stop=0.1s record-from=20ms record-spacing=1ms\n");
  CHECK(k.analyses.back().transient.recordFrom == Approx(0.02));
  CHECK(k.analyses.back().transient.recordSpacing == Approx(1e-3));
  CHECK_THROWS_WITH(parseNetlist("voltage V1 a gnd sine amplitude=10V frequency=50Hz\n"
                                 "resistor R1 a gnd 1k\nrun transient stop=0.1s record-from=1s\n"),
                    Catch::Contains("record-from") && Catch::Contains("before stop"));
  CHECK_THROWS_WITH(parseNetlist("voltage V1 a gnd sine amplitude=10V frequency=50Hz\n"
                                 "resistor R1 a gnd 1k\nrun transient stop=0.1s "
                                 "record-spacing=-1ms\n"),
                    Catch::Contains("record-spacing must be zero or positive"));
}

TEST_CASE("A streamed transient keeps a bounded number of rows in memory", "[engine][streaming]") {
  // 40 s of the table radio (2400 mains cycles): the rows kept are at most keepSpread before
  // the report's span and the steps of that span, however many the run records.
  Netlist nl = loadNetlist(DISC_NETLIST_DIR "/table-radio-half-wave.disc");
  TransientOptions o = nl.analyses.back().transient;
  o.stop = 40.0;
  o.record = runSignals(nl, {});
  o.keepLast = reportSpan(nl, o);
  o.keepSpread = 500;
  CHECK(o.keepLast == Approx(5.25 / 60.0));
  const std::string dir = outDir("bounded");
  CsvFile csv(dir + "/run.csv");
  o.sink = &csv;
  const Result r = transient(nl.circuit, o);
  const auto& t = r.time();
  const double end = t.back();
  CHECK(end == Approx(40.0));
  const auto inSpan = static_cast<std::size_t>(
      std::count_if(t.begin(), t.end(), [&](double x) { return x >= end - o.keepLast; }));
  const std::size_t before = t.size() - inSpan;
  CHECK(before <= o.keepSpread + 1);  // + the one row just before the span
  CHECK(before >= o.keepSpread / 2);
  // The span holds every step: as many as a few cycles take, not the run's.
  CHECK(inSpan < 3000);
  CHECK(r.recordedRows() > 20 * t.size());
  CHECK(csv.rows() == r.recordedRows());
  CHECK(std::is_sorted(t.begin(), t.end()));
  // The file has every row: a header and one line per recorded row.
  const std::string text = readFile(dir + "/run.csv");
  CHECK(static_cast<std::size_t>(std::count(text.begin(), text.end(), '\n')) ==
        r.recordedRows() + 1);
  // The report of the kept rows: settled, over the last cycles, the surge from every row.
  const SupplyReport rep = makeSupplyReport(nl, r);
  CHECK(rep.settled);
  CHECK(rep.window1 == Approx(40.0));
  CHECK(rep.window0 >= end - o.keepLast);
  REQUIRE(rep.stacks.size() == 1);
  CHECK(rep.stacks[0].surgePeak >= rep.stacks[0].currentPeak);
}

TEST_CASE("A transient past its step budget is refused up front and pointed to the warm-up",
          "[engine][streaming]") {
  // 1e4 s at 60 Hz: at least 1.2e7 steps at a twentieth of a period, past the default budget.
  Netlist nl = loadNetlist(DISC_NETLIST_DIR "/table-radio-half-wave.disc");
  TransientOptions o = nl.analyses.back().transient;
  o.stop = 1e4;
  try {
    checkStepBudget(nl.circuit, o);
    FAIL("a 1e4 s transient was not refused");
  } catch (const InputError& e) {
    const std::string m = e.what();
    INFO(m);
    CHECK_THAT(m, Catch::Contains("1.2e+07 steps") && Catch::Contains("max-steps=") &&
                      Catch::Contains("run warm-up duration=1e+04s"));
  }
  // Raising the budget forces it.
  o.maxSteps = 20'000'000;
  CHECK_NOTHROW(checkStepBudget(nl.circuit, o));
}
