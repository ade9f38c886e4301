// The `disc` command-line program: a thin front end over libdisc.
#include <unistd.h>

#include <fmt/format.h>
#include <CLI/CLI.hpp>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>

#include "disc/disc.hpp"

namespace {

// Exit codes: 0 success, 2 bad input, 3 simulation failed, 4 ratings exceeded or a plate fails
// (with --strict).
constexpr int kExitInput = 2;
constexpr int kExitSimulation = 3;
constexpr int kExitRatings = 4;

struct RunArgs {
  std::string file;
  std::string outDir;
  bool strict = false;
  bool quiet = false;
  disc::TransientOverrides overrides;  // for every transient of the file
};

// --sandbox: include and use read only inside the netlist's folder (docs/limits.md).
bool gSandbox = false;

disc::IncludePolicy includePolicy() {
  return gSandbox ? disc::IncludePolicy::Confined : disc::IncludePolicy::Trusted;
}

/// Progress on stderr for runs longer than a second, only when stderr is a terminal.
class Progress {
 public:
  Progress() : tty_(isatty(fileno(stderr)) != 0), start_(std::chrono::steady_clock::now()) {}
  bool operator()(double t, double stop) {
    if (!tty_) return true;
    const auto now = std::chrono::steady_clock::now();
    if (now - start_ < std::chrono::seconds(1) || now - last_ < std::chrono::milliseconds(200))
      return true;
    last_ = now;
    shown_ = true;
    fmt::print(stderr, "\rsimulating: {:5.1f} % ({:.4g} of {:.4g} s)", 100.0 * t / stop, t, stop);
    return true;
  }
  ~Progress() {
    if (shown_) fmt::print(stderr, "\r{:60}\r", "");
  }

 private:
  bool tty_, shown_ = false;
  std::chrono::steady_clock::time_point start_, last_{};
};

std::string stemOf(const std::string& path) {
  std::string name = path.substr(path.find_last_of('/') + 1);
  const auto dot = name.rfind('.');
  return disc::safeFileStem(dot == std::string::npos || dot == 0 ? name : name.substr(0, dot));
}

int runFile(const RunArgs& a) {
  disc::Netlist nl = disc::loadNetlist(a.file, includePolicy(), a.overrides);
  const std::string dir = a.outDir.empty() ? "out/" + stemOf(a.file) : a.outDir;
  // Refused before the run, not after it. Transients stream their CSV into the staged folder
  // as they run (bounded memory on any stop); `dir` keeps its earlier run until the commit.
  disc::StagedFolder folder(dir);
  disc::RunOutcome out;
  {
    Progress progress;
    out = disc::runNetlist(
        nl, [&progress](double t, double stop) { return progress(t, stop); }, &folder);
  }
  const auto files = disc::writeRunFiles(nl, out, folder);
  if (!a.quiet)
    for (const auto& an : out.analyses)
      if (an.request.kind == disc::AnalysisRequest::Kind::WarmUp)
        fmt::print("{}\n", disc::warmUpText(an.warmUp));
  if (out.hasReport) {
    if (!a.quiet) fmt::print("{}", disc::reportText(out.report));
  } else if (!a.quiet) {
    fmt::print("{}: no output statement, so no supply report; results written as CSV.\n", a.file);
  }
  // Runaways and destructions of every analysis (the report shows its own transient's).
  bool failure = false;
  for (std::size_t k = 0; k < out.analyses.size(); ++k) {
    const auto& events = out.analyses[k].result.failures();
    failure = failure || !events.empty();
    const bool reported = out.hasReport && k == out.reportAnalysis;
    if (a.quiet || events.empty() || reported) continue;
    fmt::print("FAILURE in analysis {}:\n", k + 1);
    for (const auto& v : disc::failureVerdicts(events)) fmt::print("  {}\n", v);
  }
  if (!a.quiet) fmt::print("\nwritten to {}/ ({} files)\n", dir, files.size());
  if (a.strict && (failure || (out.hasReport && out.report.worst == "exceeds")))
    return kExitRatings;
  return 0;
}

int checkFile(const std::string& file) {
  disc::Netlist nl = disc::loadNetlist(file, includePolicy());
  fmt::print("{}: ok ({} elements, {} nodes, {} analyses{})\n", file, nl.circuit.devices().size(),
             nl.circuit.nodeCount(), nl.analyses.size(), nl.output.given ? ", output named" : "");
  return 0;
}

int listPlates() {
  fmt::print("{:20} {:13} {:>7} {:>8} {:>8} {:>7} {:>8} {:>6}\n", "type", "material", "area",
             "rms res", "rms cap", "peak", "rated", "limit");
  fmt::print("{:20} {:13} {:>7} {:>8} {:>8} {:>7} {:>8} {:>6}\n", "", "", "cm2", "V", "V", "V",
             "mA", "degC");
  for (const auto& t : disc::PlateLibrary::builtIn().types())
    fmt::print("{:20} {:13} {:7.2f} {:8.1f} {:8.1f} {:7.1f} {:8.1f} {:6.0f}\n", t.name, t.material,
               t.physics.areaCm2, t.ratings.rmsReverseResistive, t.ratings.rmsReverseCapacitive,
               t.ratings.peakReverse, 1e3 * t.ratedCurrent(),
               t.ratings.maxPlateTemperature - 273.15);
  return 0;
}

struct ExampleArgs {
  std::string name;
  std::string method = "trapezoidal";
  double stop = 1.0;
  int cycles = 1;
  bool json = false;
  bool cold = true;
  double reltol = 1e-3;
  double abstol = 0.0;             // V and A; 0: the library's defaults
  double temperatureAbstol = 0.0;  // K; 0: the library's default
};

// Peak resident memory of this process image (VmHWM; getrusage's figure survives exec and
// would report the parent's size).
long peakRssKib() {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line))
    if (line.rfind("VmHWM:", 0) == 0) return std::stol(line.substr(6));
  return -1;
}

void printSafety() {
  fmt::print(
      "\nCaution: mains and the high voltages of valve equipment can kill; reservoir capacitors\n"
      "stay charged after switch-off. These figures are a simulation to plan work, not a\n"
      "substitute for local electrical codes, the maker's data or a qualified technician.\n");
}

int runExample(const ExampleArgs& a) {
  disc::Circuit circuit = disc::reference::build(a.name);
  const std::string out = disc::reference::outputNode(a.name);
  const double f = disc::reference::mainsFrequency(a.name);
  disc::TransientOptions opt;
  opt.stop = a.stop;
  opt.method = disc::parseMethod(a.method);
  opt.start = a.cold ? disc::Start::Cold : disc::Start::OperatingPoint;
  opt.record = {"v:" + out};
  opt.tol.reltol = a.reltol;
  if (a.abstol > 0.0) {
    opt.tol.voltage = a.abstol;
    opt.tol.current = a.abstol;
  }
  if (a.temperatureAbstol > 0.0) opt.tol.temperature = a.temperatureAbstol;
  const disc::Result r = disc::transient(circuit, opt);
  const auto fig = disc::measure::outputFigures(r.time(), r["v:" + out], f, a.cycles);
  const auto& s = r.stats();
  if (a.json) {
    nlohmann::json j = {{"circuit", a.name},
                        {"method", s.method},
                        {"stop_s", a.stop},
                        {"window_s", {fig.window0, fig.window1}},
                        {"output_mean_V", fig.mean},
                        {"ripple_pp_V", fig.ripplePeakToPeak},
                        {"ripple_rms_V", fig.rippleRms},
                        {"accepted_steps", s.acceptedSteps},
                        {"rejected_steps", s.rejectedSteps},
                        {"newton_iterations", s.newtonIterations},
                        {"factorizations", s.factorizations},
                        {"reltol", a.reltol},
                        {"abstol", opt.tol.voltage},
                        {"wall_s", s.wallSeconds},
                        {"peak_rss_kib", peakRssKib()}};
    std::cout << j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) << "\n";
    return 0;
  }
  fmt::print("{}: {}\n", a.name, disc::reference::describe(a.name));
  fmt::print("transient 0 to {} s, {} integration, start {}\n", a.stop, s.method,
             a.cold ? "cold (switch-on)" : "from operating point");
  fmt::print("  output mean          {:10.4f} V   (last {} cycle(s), {:.4f} to {:.4f} s)\n",
             fig.mean, fig.cycles, fig.window0, fig.window1);
  fmt::print("  ripple peak-to-peak  {:10.4f} V\n", fig.ripplePeakToPeak);
  fmt::print("  ripple rms           {:10.4f} V\n", fig.rippleRms);
  fmt::print("  steps {} accepted, {} rejected; {} Newton iterations; {:.3f} s wall\n",
             s.acceptedSteps, s.rejectedSteps, s.newtonIterations, s.wallSeconds);
  printSafety();
  return 0;
}

struct FitArgs {
  std::vector<std::string> traces;
  std::string outDir;
  double temperatureC = 25.0;
  bool staticOnly = false;
  bool quiet = false;
  disc::FitOptions options;
};

/// A progress line on stderr (a terminal), cleared when it goes out of scope, also on an error.
struct StatusLine {
  bool on;
  void show(const std::string& line) const {
    if (on) fmt::print(stderr, "\r{:70}\r{}", "", line);
  }
  ~StatusLine() {
    if (on) fmt::print(stderr, "\r{:70}\r", "");
  }
};

int fitTraces(FitArgs& a) {
  disc::PlateFit fit;
  const std::string dir =
      a.outDir.empty() ? "out/fit-" + disc::safeFileStem(a.options.name) : a.outDir;
  {
    const StatusLine status{isatty(fileno(stderr)) != 0 && !a.quiet};
    std::vector<disc::Trace> traces;
    for (const auto& path : a.traces) {
      status.show("fit: reading " + disc::excerpt(path, 50));
      traces.push_back(disc::loadTrace(path));
    }
    if (status.on)
      a.options.progress = [&status](const std::string& line) {
        status.show(line);
        return true;
      };
    a.options.temperature = a.temperatureC + 273.15;
    a.options.dynamic = !a.staticOnly;
    disc::checkOutputFolder(dir);
    fit = disc::fitPlate(traces, a.options);
  }
  const auto files = disc::writeFitFiles(fit, dir);
  if (!a.quiet) {
    fmt::print("{}", disc::fitReportText(fit));
    fmt::print("\nwritten to {}/ ({} files); use the type in a netlist with: use \"{}/{}.json\"\n",
               dir, files.size(), dir, fit.type.name);
  }
  return 0;
}

struct ReplaceArgs {
  std::string file;
  std::string out;
  std::vector<double> loads = {0.5, 1.0, 1.2};
  bool json = false;
  bool quiet = false;
  disc::ReplaceOptions options;
};

int replaceStacks(ReplaceArgs& a) {
  a.options.loadFractions = a.loads;
  const bool tty = isatty(fileno(stderr)) != 0;
  if (tty && !a.quiet)
    a.options.progress = [](const std::string& line) {
      fmt::print(stderr, "\r{:70}\r{}", "", line);
      return true;
    };
  const disc::ReplacementDesign d = disc::designReplacementFile(a.file, a.options);
  if (tty && !a.quiet) fmt::print(stderr, "\r{:70}\r", "");
  std::string out = a.out;
  if (out.empty()) {
    const auto slash = a.file.find_last_of('/');
    out = (slash == std::string::npos ? std::string() : a.file.substr(0, slash + 1)) +
          stemOf(a.file) + "-silicon.disc";
  }
  const std::string jsonPath =
      out.substr(0, out.rfind(".disc") == out.size() - 5 ? out.size() - 5 : out.size()) + ".json";
  disc::writeFileAtomically(out, d.netlist);
  disc::writeFileAtomically(jsonPath, disc::replacementJson(d));
  if (a.json) {
    std::cout << disc::replacementJson(d);
  } else if (!a.quiet) {
    fmt::print("{}", disc::replacementText(d));
    fmt::print("\nreplacement netlist written to {} (design: {}); {} simulation runs\n", out,
               jsonPath, d.runs);
  }
  return 0;
}

struct PowerUpArgs {
  std::string file, out;
  bool json = false;
  bool quiet = false;
  double maxTimeMinutes = 480;
  disc::PowerUpOptions options;
};

// Exit 0 with a verified schedule; 4 when the stack is to be replaced (or the schedule could not
// be verified): there is no safe way up to follow.
int planPowerUpFile(PowerUpArgs& a) {
  disc::Netlist nl = disc::loadNetlist(a.file, includePolicy());
  a.options.maxTotal = a.maxTimeMinutes * 60.0;
  if (isatty(fileno(stderr)) != 0 && !a.quiet)
    a.options.progress = [](const std::string& line) {
      fmt::print(stderr, "\r{:70}\r{}", "", line);
      return true;
    };
  const disc::PowerUpPlan plan = disc::planPowerUp(nl, a.options);
  if (a.options.progress) fmt::print(stderr, "\r{:70}\r", "");
  if (!a.out.empty()) disc::writeFileAtomically(a.out, disc::powerUpJson(plan));
  if (a.json)
    std::cout << disc::powerUpJson(plan);
  else if (!a.quiet)
    fmt::print("{}", disc::powerUpText(plan));
  return plan.verdict == "re-form" && plan.verified ? 0 : kExitRatings;
}

struct CampaignArgs {
  std::string file, outDir;
  int builds = 0;
  long long seed = -1;
  std::vector<std::string> vary, tolerance;
  bool keepPlates = false;
  bool json = false;
  bool quiet = false;
  std::string basis = "auto";
  disc::CampaignOptions options;
};

int runCampaignFile(const CampaignArgs& a) {
  disc::Netlist nl = disc::loadNetlist(a.file, includePolicy());
  // The options become statements of the language, so they are checked and reported alike.
  std::string extra;
  for (const auto& v : a.vary) extra += "vary " + v + "\n";
  for (const auto& t : a.tolerance) extra += "tolerance " + t + "\n";
  std::string head;
  if (a.builds > 0) head += fmt::format(" builds={}", a.builds);
  if (a.seed >= 0) head += fmt::format(" seed={}", a.seed);
  if (a.keepPlates) head += " plates=keep";
  if (!head.empty()) extra += "campaign" + head + "\n";
  if (!extra.empty()) disc::appendNetlist(nl, extra, "<command line>");
  if (!nl.campaign.given)
    throw disc::InputError(fmt::format(
        "{} declares no campaign: add 'campaign builds=N' (and vary or tolerance statements) "
        "to it, or give --builds, --vary or --tolerance",
        a.file));
  const std::string dir = a.outDir.empty() ? "out/" + stemOf(a.file) + "-campaign" : a.outDir;
  disc::checkOutputFolder(dir);
  disc::CampaignOptions o = a.options;
  o.basis = a.basis == "periodic"    ? disc::CampaignBasis::Periodic
            : a.basis == "transient" ? disc::CampaignBasis::Transient
                                     : disc::CampaignBasis::Automatic;
  const bool tty = isatty(fileno(stderr)) != 0 && !a.quiet;
  if (tty)
    o.progress = [](std::size_t done, std::size_t total) {
      // From worker threads: one line rewritten, no shared state beyond stderr.
      fmt::print(stderr, "\rcampaign: {} of {} variants", done, total);
      return true;
    };
  const disc::CampaignTable table = disc::runCampaign(nl, nl.campaign, o);
  if (tty) fmt::print(stderr, "\r{:50}\r", "");
  const disc::CampaignSummary summary = disc::summariseCampaign(nl, nl.campaign, table);
  const auto files = disc::writeFiles(dir, {{"campaign.csv", disc::campaignCsv(table)},
                                            {"campaign.json", disc::campaignJson(summary)},
                                            {"campaign.html", disc::campaignHtml(summary, table)}});
  if (a.json)
    std::cout << disc::campaignJson(summary) << "\n";
  else if (!a.quiet)
    fmt::print("{}\nwritten to {}/ ({} files)\n", disc::campaignText(summary), dir, files.size());
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  // Ctrl-C during a write leaves no temporary folder or file behind.
  disc::installInterruptCleanup();
  CLI::App app{"disc: simulate power supplies with selenium and copper-oxide plate rectifiers"};
  app.set_version_flag("--version", std::string("disc ") + disc::kVersion);
  app.require_subcommand(1);
  app.add_flag("--sandbox", gSandbox,
               "Let include and use read only files inside the netlist's folder (for netlists "
               "from other people)");

  RunArgs ra;
  auto* run = app.add_subcommand("run", "Simulate a netlist and print the supply report");
  run->add_option("file", ra.file, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  run->add_option("-o,--out", ra.outDir, "Output folder (default out/<file stem>)");
  run->add_flag("--strict", ra.strict,
                "Exit with code 4 when a rating is exceeded or a plate runs away or fails");
  run->add_flag("-q,--quiet", ra.quiet, "Print nothing; only write the files");
  run->add_option("--record-from", ra.overrides.recordFrom,
                  "Write a transient's CSV rows from this time on, s (overrides record-from=)");
  run->add_option("--record-spacing", ra.overrides.recordSpacing,
                  "Keep CSV rows at least this far apart, s (overrides record-spacing=; 0: "
                  "every step)");
  run->add_option("--max-steps", ra.overrides.maxSteps,
                  "Step budget of every transient (overrides max-steps=): raise it to force a "
                  "run refused as too long (docs/limits.md)");
  std::string checkPath;
  auto* check = app.add_subcommand("check", "Parse and validate a netlist without simulating");
  check->add_option("file", checkPath, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  auto* plates = app.add_subcommand("plates", "List the built-in plate types and their ratings");
  app.footer(
      "Exit codes: 0 success, 2 bad input, 3 simulation failed, 4 ratings exceeded or a plate "
      "runs away or fails (--strict).");

  ExampleArgs ex;
  auto* example = app.add_subcommand("example", "Run a reference circuit built into the library");
  example->add_option("name", ex.name, "Reference circuit (or 'list')")->required();
  example
      ->add_option("--method", ex.method, "Integration method: trapezoidal, bdf2, tr-bdf2 or ida")
      ->check(
          [](const std::string& v) {
            try {
              disc::parseMethod(v);
              return std::string();
            } catch (const disc::InputError& e) {
              return std::string(e.what());
            }
          },
          "METHOD");
  example->add_option("--stop", ex.stop, "End time of the transient, s")
      ->check(CLI::PositiveNumber);
  example->add_option("--cycles", ex.cycles, "Settled mains cycles to measure over")
      ->check(CLI::Range(1, 1000));
  example->add_flag("--json", ex.json, "Print the figures as JSON");
  example->add_option("--reltol", ex.reltol, "Relative tolerance of Newton and step control")
      ->check(CLI::Range(1e-12, 0.05));
  example
      ->add_option("--abstol", ex.abstol,
                   "Absolute tolerance of voltages (V) and currents (A); default 1e-6. Below "
                   "about 1e-6 relative accuracy it, not --reltol, limits the error")
      ->check(CLI::Range(1e-15, 1e-3));
  example
      ->add_option("--temperature-abstol", ex.temperatureAbstol,
                   "Absolute tolerance of temperatures (K); default 1e-4")
      ->check(CLI::Range(1e-12, 1.0));
  example->add_flag("!--from-operating-point", ex.cold,
                    "Start from the DC operating point instead of switching on cold");

  FitArgs fa;
  auto* fit = app.add_subcommand(
      "fit", "Fit a plate type to measured I-V traces (CSV) and judge the plate's health");
  fit->add_option("traces", fa.traces, "Trace files (CSV with 'voltage [V], current [mA]' ...)")
      ->required()
      ->check(CLI::ExistingFile);
  fit->add_option("--plates", fa.options.plates, "Plates in series across the trace")
      ->check(CLI::Range(1, 100000));
  fit->add_option("--like", fa.options.like,
                  "Healthy reference type (default by material: se-25mm-square, "
                  "cuox-12mm-meter)");
  fit->add_option("--material", fa.options.material, "selenium or copper-oxide")
      ->check(CLI::IsMember({"selenium", "copper-oxide"}));
  fit->add_option("--area", fa.options.areaCm2,
                  "Active area of one plate, cm2 (default: the reference's)")
      ->check(CLI::PositiveNumber);
  fit->add_option("--name", fa.options.name, "Name of the fitted type");
  fit->add_option("--temperature", fa.temperatureC,
                  "Plate temperature of traces without that column, degC")
      ->check(CLI::Range(-100.0, 300.0));
  fit->add_option("--noise-relative", fa.options.noiseRelative,
                  "Relative measurement noise of the current (weights)")
      ->check(CLI::Range(0.0, 0.5));
  fit->add_option("--noise-floor", fa.options.noiseFloor,
                  "Noise floor of the current, A (default 1e-3 of the largest)")
      ->check(CLI::NonNegativeNumber);
  fit->add_flag("--static-only", fa.staticOnly, "Do not fit capacitance and trap branch");
  fit->add_option("--bin-above", fa.options.binAbove,
                  "Bin traces of more rows than this before the fit (docs/fitting.md, \"Long "
                  "traces\"); 0: never")
      ->capture_default_str();
  fit->add_option("--bins-per-direction", fa.options.binsPerDirection,
                  "Voltage bins per direction of a binned static trace")
      ->capture_default_str()
      ->check(CLI::Range(50, 10000000));
  fit->add_option("--fix", fa.options.fixed,
                  "Hold a parameter at the reference's value (repeat for several)");
  fit->add_option("-o,--out", fa.outDir, "Output folder (default out/fit-<name>)");
  fit->add_flag("-q,--quiet", fa.quiet, "Print nothing; only write the files");

  ReplaceArgs rp;
  auto* replace = app.add_subcommand(
      "replace", "Design a silicon diode and dropping resistor to replace plate stacks");
  replace->add_option("file", rp.file, "Netlist (.disc) with an output statement")
      ->required()
      ->check(CLI::ExistingFile);
  replace->add_option("--stack", rp.options.stacks, "Stack to replace (repeat for several)")
      ->required();
  replace->add_option("--diode", rp.options.diode,
                      "Silicon diode parameters in netlist words, e.g. \"saturation-current=5n "
                      "ideality=1.8 series-resistance=0.05\"");
  replace
      ->add_option("--target", rp.options.target,
                   "What to match: formed (the stacks re-formed; default), design (as new), "
                   "present (as described), or a value such as 240V (4.5A for a charger)")
      ->capture_default_str();
  replace
      ->add_option("--diode-rating", rp.options.diodeCurrentRating,
                   "The diode's rated average forward current, A (default 1)")
      ->check(CLI::PositiveNumber);
  replace
      ->add_option("--diode-surge", rp.options.diodeSurgeRating,
                   "The diode's rated surge current, A (default 30)")
      ->check(CLI::PositiveNumber);
  replace->add_option("--loads", rp.loads, "Load fractions of the comparison table")
      ->delimiter(',')
      ->check(CLI::Range(0.01, 3.0));
  replace->add_option("-o,--out", rp.out,
                      "Replacement netlist to write (default <file stem>-silicon.disc beside "
                      "the netlist, so its include and use paths still resolve)");
  replace->add_flag("--json", rp.json, "Print the design as JSON");
  replace->add_flag("-q,--quiet", rp.quiet, "Print nothing; only write the files");

  PowerUpArgs pu;
  auto* powerUp = app.add_subcommand(
      "power-up", "Plan the variac schedule that brings a stored stack up safely");
  powerUp->add_option("file", pu.file, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  powerUp->add_option("--stack", pu.options.stack, "The stack to bring up")->required();
  powerUp->add_option("--source", pu.options.source,
                      "The variac-fed voltage source (default: the one sine source)");
  powerUp->add_option("--margin", pu.options.margin, "Fraction of each limit to use")
      ->check(CLI::Range(0.05, 1.0))
      ->capture_default_str();
  powerUp->add_option("--first", pu.options.firstLevel, "Lowest first step, fraction of full")
      ->check(CLI::Range(0.01, 1.0))
      ->capture_default_str();
  powerUp
      ->add_option("--max-time", pu.maxTimeMinutes,
                   "Minutes; a stack not brought up by then is to be replaced")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  powerUp->add_option("-o,--out", pu.out, "Write the plan as JSON to this file");
  powerUp->add_flag("--json", pu.json, "Print the plan as JSON");
  powerUp->add_flag("-q,--quiet", pu.quiet, "Print nothing (exit code and --out only)");

  CampaignArgs ca;
  auto* campaign = app.add_subcommand(
      "campaign", "Run a netlist's campaign: a parameter grid and Monte Carlo builds");
  campaign->add_option("file", ca.file, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  campaign->add_option("--builds", ca.builds, "Monte Carlo builds per grid point")
      ->check(CLI::Range(1, 100000000));
  campaign->add_option("--seed", ca.seed, "Campaign seed (the same seed gives the same builds)")
      ->check(CLI::NonNegativeNumber);
  campaign->add_option("--vary", ca.vary,
                       "A grid axis as in the netlist, e.g. \"RLOAD resistance 40 60 80\" "
                       "(repeat for several)");
  campaign->add_option("--tolerance", ca.tolerance,
                       "A tolerance as in the netlist, e.g. \"C1 capacitance -20% +50%\" "
                       "(repeat for several)");
  campaign->add_flag("--keep-plates", ca.keepPlates,
                     "Keep the netlist's plate seeds (vary only the tolerances)");
  campaign->add_option("--threads", ca.options.threads, "Worker threads (default: every core)")
      ->check(CLI::Range(1, 4096));
  campaign
      ->add_option("--stop", ca.options.stop,
                   "Transient end time, s (default: the netlist's run); asks for the transient")
      ->check(CLI::PositiveNumber);
  campaign
      ->add_option("--basis", ca.basis,
                   "Figures from the settled period (periodic; no switch-on surge) or a transient "
                   "from cold; auto: periodic when the circuit has a period and no --stop is given")
      ->check(CLI::IsMember({"auto", "periodic", "transient"}));
  campaign
      ->add_option("--reltol", ca.options.reltol,
                   "Relative tolerance of each variant (default: the netlist's transient's)")
      ->check(CLI::Range(1e-9, 0.1));
  campaign->add_option("-o,--out", ca.outDir, "Output folder (default out/<file stem>-campaign)");
  campaign->add_flag("--json", ca.json, "Print the summary as JSON");
  campaign->add_flag("-q,--quiet", ca.quiet, "Print nothing; only write the files");

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : kExitInput;
  }
  // The one error boundary: every failure becomes a message and exit code 2 (input) or 3
  // (simulation); nothing escapes to std::terminate.
  try {
    if (run->parsed()) return runFile(ra);
    if (check->parsed()) return checkFile(checkPath);
    if (plates->parsed()) return listPlates();
    if (fit->parsed()) return fitTraces(fa);
    if (replace->parsed()) return replaceStacks(rp);
    if (campaign->parsed()) return runCampaignFile(ca);
    if (powerUp->parsed()) return planPowerUpFile(pu);
    if (example->parsed()) {
      if (ex.name == "list") {
        for (const auto& n : disc::reference::names())
          fmt::print("{:18} {}\n", n, disc::reference::describe(n));
        return 0;
      }
      return runExample(ex);
    }
  } catch (const disc::NetlistError& e) {
    fmt::print(stderr, "{}\n", e.what());  // each diagnostic is bounded already
    return kExitInput;
  } catch (const disc::InputError& e) {
    fmt::print(stderr, "disc: error: {}\n", disc::boundedMessage(e.what(), 2000));
    return kExitInput;
  } catch (const disc::Error& e) {
    fmt::print(stderr, "disc: simulation failed: {}\n", disc::boundedMessage(e.what(), 2000));
    return kExitSimulation;
  } catch (const std::bad_alloc&) {
    fmt::print(stderr,
               "disc: simulation failed: out of memory; make the circuit or the run smaller\n");
    return kExitSimulation;
  } catch (const std::exception& e) {
    fmt::print(stderr, "disc: internal error (please report it): {}\n",
               disc::boundedMessage(e.what(), 2000));
    return kExitSimulation;
  } catch (...) {
    fmt::print(stderr, "disc: internal error (please report it): unknown exception\n");
    return kExitSimulation;
  }
  return 0;
}
