// The `disc` command-line program: a thin front end over libdisc.
#include <unistd.h>

#include <fmt/format.h>
#include <CLI/CLI.hpp>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>

#include "disc/disc.hpp"

namespace {

// Exit codes: 0 success, 2 bad input, 3 simulation failed, 4 ratings exceeded (with --strict).
constexpr int kExitInput = 2;
constexpr int kExitSimulation = 3;
constexpr int kExitRatings = 4;

struct RunArgs {
  std::string file;
  std::string outDir;
  bool strict = false;
  bool quiet = false;
};

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
  return dot == std::string::npos || dot == 0 ? name : name.substr(0, dot);
}

int runFile(const RunArgs& a) {
  disc::Netlist nl = disc::loadNetlist(a.file);
  const std::string dir = a.outDir.empty() ? "out/" + stemOf(a.file) : a.outDir;
  disc::RunOutcome out;
  {
    Progress progress;
    out = disc::runNetlist(nl, [&progress](double t, double stop) { return progress(t, stop); });
  }
  const auto files = disc::writeRunFiles(nl, out, dir);
  if (out.hasReport) {
    if (!a.quiet) fmt::print("{}", disc::reportText(out.report));
  } else if (!a.quiet) {
    fmt::print("{}: no output statement, so no supply report; results written as CSV.\n", a.file);
  }
  if (!a.quiet) fmt::print("\nwritten to {}/ ({} files)\n", dir, files.size());
  if (a.strict && out.hasReport && out.report.worst == "exceeds") return kExitRatings;
  return 0;
}

int checkFile(const std::string& file) {
  disc::Netlist nl = disc::loadNetlist(file);
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
  std::string method = "trap";
  double stop = 1.0;
  int cycles = 1;
  bool json = false;
  bool cold = true;
  double reltol = 1e-3;
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
                        {"reltol", a.reltol},
                        {"wall_s", s.wallSeconds},
                        {"peak_rss_kib", peakRssKib()}};
    std::cout << j.dump(2) << "\n";
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

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"disc: simulate power supplies with selenium and copper-oxide plate rectifiers"};
  app.set_version_flag("--version", std::string("disc ") + disc::kVersion);
  app.require_subcommand(1);

  RunArgs ra;
  auto* run = app.add_subcommand("run", "Simulate a netlist and print the supply report");
  run->add_option("file", ra.file, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  run->add_option("-o,--out", ra.outDir, "Output folder (default out/<file stem>)");
  run->add_flag("--strict", ra.strict, "Exit with code 4 when a rating is exceeded");
  run->add_flag("-q,--quiet", ra.quiet, "Print nothing; only write the files");
  std::string checkPath;
  auto* check = app.add_subcommand("check", "Parse and validate a netlist without simulating");
  check->add_option("file", checkPath, "Netlist (.disc)")->required()->check(CLI::ExistingFile);
  auto* plates = app.add_subcommand("plates", "List the built-in plate types and their ratings");
  app.footer(
      "Exit codes: 0 success, 2 bad input, 3 simulation failed, 4 ratings exceeded (--strict).");

  ExampleArgs ex;
  auto* example = app.add_subcommand("example", "Run a reference circuit built into the library");
  example->add_option("name", ex.name, "Reference circuit (or 'list')")->required();
  example->add_option("--method", ex.method, "Integration method: trap, bdf2 or ida")
      ->check(CLI::IsMember({"trap", "bdf2", "ida"}));
  example->add_option("--stop", ex.stop, "End time of the transient, s")
      ->check(CLI::PositiveNumber);
  example->add_option("--cycles", ex.cycles, "Settled mains cycles to measure over")
      ->check(CLI::Range(1, 1000));
  example->add_flag("--json", ex.json, "Print the figures as JSON");
  example->add_option("--reltol", ex.reltol, "Relative tolerance of Newton and step control")
      ->check(CLI::Range(1e-12, 0.05));
  example->add_flag("!--from-operating-point", ex.cold,
                    "Start from the DC operating point instead of switching on cold");

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : kExitInput;
  }
  try {
    if (run->parsed()) return runFile(ra);
    if (check->parsed()) return checkFile(checkPath);
    if (plates->parsed()) return listPlates();
    if (example->parsed()) {
      if (ex.name == "list") {
        for (const auto& n : disc::reference::names())
          fmt::print("{:18} {}\n", n, disc::reference::describe(n));
        return 0;
      }
      return runExample(ex);
    }
  } catch (const disc::NetlistError& e) {
    fmt::print(stderr, "{}\n", e.what());
    return kExitInput;
  } catch (const disc::InputError& e) {
    fmt::print(stderr, "disc: error: {}\n", e.what());
    return kExitInput;
  } catch (const disc::Error& e) {
    fmt::print(stderr, "disc: simulation failed: {}\n", e.what());
    return kExitSimulation;
  }
  return 0;
}
