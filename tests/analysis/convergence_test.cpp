// Tolerance convergence of the supply report's figures on every bundled example (issue 16,
// Validation): each example's transient, cut to 0.1 s from its start, runs at reltol r = 1e-3
// (the default), r/4 and r/16, and the report's main figures (output mean, ripple peak-to-peak
// and rms, load current and power; per stack the average, rms and peak current and the
// dissipation) must converge at the method's order.
//
// The order to expect. The trapezoidal rule and BDF2 are second order, local error
// C h^3 q''' (docs/engine.md; E. Hairer, S. P. Norsett and G. Wanner, Solving Ordinary
// Differential Equations I, chapters II and III, from memory). A step control that holds each
// step's local error at the tolerance takes h ~ tol^(1/3), so the global error, about
// (number of steps) x tol, goes as tol^(2/3) (error per step; the same book, from memory;
// docs/sources.md "Numerical methods"). A figure F(tol) =
// F* + K tol^(2/3) then changes by K r^(2/3) (1 - 4^(-2/3)) from r to r/4 and by 4^(-2/3) of
// that from r/4 to r/16: Richardson's ratio of successive differences is 4^(2/3) = 2.52. Each
// step's error is not a smooth function of the tolerance (the step control's discrete
// choices, Newton's tolerance of 0.2 tolerances), so a single ratio scatters about its value;
// the test asks for a contraction of at least kMinContraction = 1.5 (an observed order of at
// least 0.29) and for both differences in the same direction (monotone approach). A figure
// whose later change is within two of the finest run's tolerances (2 r/16 relative) is
// resolved by these runs and counts as converged (faster than the order is no failure).
//
// Stated exclusions, each with what was measured, are listed per method below; each is
// checked to still fail, so that a fix shows and the exclusion is removed. TR-BDF2 is not
// checked here: on most examples its differences do not contract at all (the copper-oxide
// meter's output mean changes by 1.7e-3, 2.2e-3, 1.4e-3 relative per halving of reltol from
// 1e-3), so its error control does not deliver its order on these circuits; see
// docs/performance.md.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <string>
#include <vector>

#include <disc/disc.hpp>

using namespace disc;

namespace {

constexpr double kBaseReltol = 1e-3;
constexpr double kStop = 0.1;  // s: five 50 Hz cycles, six at 60 Hz
constexpr double kMinContraction = 1.5;

using Figures = std::map<std::string, double>;

Figures mainFigures(const SupplyReport& r) {
  Figures f{{"output.mean", r.output.mean},
            {"output.ripple_pp", r.output.ripplePeakToPeak},
            {"output.ripple_rms", r.output.rippleRms},
            {"output.load_current", r.output.loadCurrent},
            {"output.output_power", r.output.outputPower}};
  for (const StackFigures& s : r.stacks) {
    f[s.name + ".current_average"] = s.currentAverage;
    f[s.name + ".current_rms"] = s.currentRms;
    f[s.name + ".current_peak"] = s.currentPeak;
    f[s.name + ".dissipation"] = s.powerForward + s.powerReverse;
  }
  return f;
}

// The netlist's last transient alone, from its start to kStop, at the method and reltol.
Figures figuresAt(const std::string& path, Method method, double reltol) {
  Netlist nl = loadNetlist(path);
  std::vector<AnalysisRequest> kept;
  for (const AnalysisRequest& a : nl.analyses)
    if (a.kind == AnalysisRequest::Kind::Transient) kept.assign(1, a);
  REQUIRE(kept.size() == 1);
  kept[0].transient.stop = kStop;
  kept[0].transient.method = method;
  kept[0].transient.tol.reltol = reltol;
  nl.analyses = kept;
  const RunOutcome out = runNetlist(nl);
  REQUIRE(out.hasReport);
  return mainFigures(out.report);
}

// Read as text: an included part does not load on its own.
bool hasTransient(const std::string& path) {
  std::ifstream in(path);
  std::string line;
  while (std::getline(in, line))
    if (line.rfind("run transient", 0) == 0) return true;
  return false;
}

// Files of netlists/ that are no transient example, with why.
const std::map<std::string, std::string> kNoTransient = {
    {"charger-common.disc", "the battery chargers' shared part, included by them"},
    {"table-radio-warm-up.disc", "a periodic steady state and a warm-up, no transient"},
};

struct Exclusion {
  std::string example, figure, reason;
};

void checkConvergence(Method method, const std::vector<Exclusion>& exclusions) {
  std::vector<std::string> examples;
  for (const auto& e : std::filesystem::directory_iterator(DISC_NETLIST_DIR))
    if (e.path().extension() == ".disc") examples.push_back(e.path().filename().string());
  std::sort(examples.begin(), examples.end());
  REQUIRE(examples.size() >= 10);
  for (const std::string& name : examples) {
    const std::string path = std::string(DISC_NETLIST_DIR) + "/" + name;
    if (kNoTransient.count(name)) {
      INFO(name << ": listed as no transient example (" << kNoTransient.at(name) << ")");
      CHECK_FALSE(hasTransient(path));
      continue;
    }
    const std::string example = name.substr(0, name.size() - 5);
    const double tols[3] = {kBaseReltol, kBaseReltol / 4, kBaseReltol / 16};
    Figures f[3];
    for (int k = 0; k < 3; ++k) f[k] = figuresAt(path, method, tols[k]);
    for (const auto& [figure, v0] : f[0]) {
      const double v1 = f[1].at(figure), v2 = f[2].at(figure);
      const double scale = std::max({std::abs(v0), std::abs(v1), std::abs(v2)});
      const double d0 = v0 - v1, d1 = v1 - v2, noise = 2.0 * tols[2] * scale;
      const bool resolved = std::abs(d1) <= noise;
      const bool converges = resolved || (d0 / d1 >= kMinContraction);
      const auto ex = std::find_if(exclusions.begin(), exclusions.end(), [&](const Exclusion& x) {
        return x.example == example && x.figure == figure;
      });
      INFO(example << " " << figure << ": " << v0 << ", " << v1 << ", " << v2
                   << "; changes relative " << d0 / scale << ", " << d1 / scale << " (ratio "
                   << d0 / d1 << ", noise " << noise / scale << ")");
      if (ex != exclusions.end()) {
        INFO("stated exclusion (" << ex->reason << ") now converges: remove it");
        CHECK_FALSE(converges);
      } else {
        CHECK(converges);
      }
    }
  }
}

}  // namespace

TEST_CASE("Report figures converge with the tolerance at BDF2's order on every example",
          "[convergence][bdf2]") {
  // Not yet in the asymptotic range at reltol 1e-3: from reltol 1e-4 (1e-4, 2.5e-5, 6.25e-6)
  // the same figures contract at the order (high-voltage stack's currents by 2.25, 2.17 and
  // 2.14, the signalling supply's ripple by 2.84 and 2.37; 2.52 expected), measured with
  // benchmarks/integrator_accuracy.py's runs cut to 0.1 s.
  const std::string hv =
      "changes of 0.9 %, 0.8 % (average), 0.3 %, 0.6 % (peak) from reltol "
      "1e-3: not yet asymptotic, converges at the order from 1e-4";
  const std::string sig =
      "ripple changes of 0.07 %, -0.18 % (pp), -0.12 %, -0.26 % (rms): "
      "not yet asymptotic, converges at the order from 1e-4";
  checkConvergence(Method::Bdf2, {{"hv-stack-half-wave", "SRHV.current_average", hv},
                                  {"hv-stack-half-wave", "SRHV.current_peak", hv},
                                  {"hv-stack-half-wave", "SRHV.current_rms", hv},
                                  {"hv-stack-half-wave", "SRHV.dissipation", hv},
                                  {"signalling-parallel-stacks", "output.ripple_pp", sig},
                                  {"signalling-parallel-stacks", "output.ripple_rms", sig}});
}

TEST_CASE("Report figures converge with the tolerance at the trapezoidal rule's order",
          "[convergence][trapezoidal]") {
  // The trapezoidal rule is A-stable, not L-stable: a junction switching on leaves a stiff
  // mode that it multiplies by about -1 a step (docs/engine.md), so what is left of it in the
  // report's window depends on the step sequence, not smoothly on reltol. The stack currents
  // and the ripple, read at the switchings, scatter by up to 0.3 % between tolerances; BDF2,
  // L-stable, converges at the order on the same figures (above).
  const std::string ring =
      "trapezoidal ringing at junction turn-on: changes by up to 3e-3 relative that do not "
      "contract with reltol, or by less than 1.5 (the television doubler's output, 1.47)";
  std::vector<Exclusion> ex;
  for (const auto& [example, figures] :
       std::vector<std::pair<std::string, std::vector<std::string>>>{
           {"amplifier-centre-tap-choke", {"SRA.current_average", "SRA.current_peak"}},
           {"bring-up-series-lamp-variac",
            {"SR1.current_rms", "SR2.current_rms", "SR3.current_rms", "SR4.current_rms"}},
           {"hv-stack-half-wave", {"SRHV.current_rms", "SRHV.dissipation"}},
           {"shared-chassis-field-supply", {"SRA.dissipation", "output.ripple_pp"}},
           {"signalling-parallel-stacks", {"output.ripple_pp", "output.ripple_rms"}},
           {"table-radio-half-wave",
            {"SR1.current_average", "SR1.current_peak", "SR1.dissipation", "output.ripple_pp",
             "output.ripple_rms"}},
           {"tv-doubler-half-wave",
            {"SR1.current_average", "SR2.current_average", "output.load_current", "output.mean",
             "output.output_power", "output.ripple_pp", "output.ripple_rms"}}})
    for (const std::string& f : figures) ex.push_back({example, f, ring});
  checkConvergence(Method::Trapezoidal, ex);
}
