// Every example netlist runs, and its report agrees with figures computed independently
// (textbook approximations named beside each check).
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <set>
#include <string>

#include "disc/disc.hpp"

using namespace disc;

namespace {

struct Run {
  Netlist nl;
  RunOutcome out;
  const Result& result() const { return out.analyses.back().result; }
};

Run runExample(const std::string& name) {
  Run r{loadNetlist(std::string(DISC_NETLIST_DIR) + "/" + name), {}};
  // Each resistor's current, for the Joule's-law check of its loss in checkEnergyBalance().
  for (const auto& d : r.nl.circuit.devices())
    if (d->kind() == "resistor") r.nl.record.push_back("i:" + d->name());
  r.out = runNetlist(r.nl);
  REQUIRE(r.out.hasReport);
  return r;
}

double windowMean(const Run& r, const std::string& sig);

/// Input = output + losses + what batteries absorb, within reltol, and efficiency at most 1.
/// Tellegen's theorem: the sum of v i over all branches vanishes for any currents obeying
/// Kirchhoff's current law, so the balance is off only by the solver's residual, reltol (1e-3
/// by default, on every current) times the powers involved.
void checkBalanceSums(const SupplyReport& rep, double losses, double magnitude, double reltol) {
  const auto& o = rep.output;
  // A battery that is neither load nor input absorbs (charging) or delivers (discharging).
  double charging = 0.0, discharging = 0.0;
  for (const auto& b : o.batteries) {
    INFO("battery " << b.name << ": " << b.power << " W");
    CHECK(b.state == (b.power >= 0 ? "charging" : "discharging"));
    losses += b.power;
    magnitude += std::abs(b.power);
    (b.power >= 0 ? charging : discharging) += std::abs(b.power);
  }
  CHECK(std::abs(o.inputPower - o.outputPower - losses) <= reltol * magnitude);
  CHECK(o.efficiency <= 1.0);
  CHECK(o.efficiency == Approx((o.outputPower + charging) / (o.inputPower + discharging)));
}

/// The report's energy balance: input = output + every loss, each loss checked on its own.
void checkEnergyBalance(const Run& r) {
  const auto& o = r.out.report.output;
  const auto& t = r.result().time();
  const double w0 = r.out.report.window0, w1 = r.out.report.window1;
  REQUIRE(o.inputPower > 0.0);
  double losses = 0.0, magnitude = o.inputPower + std::abs(o.outputPower);
  for (const auto& l : o.losses) {
    INFO(l.device << " (" << l.kind << "): " << l.power << " W");
    losses += l.power;
    magnitude += std::abs(l.power);
    if (l.kind == "resistor") {
      // Joule's law from the recorded current: P = R mean(i^2).
      std::vector<double> i2 = r.result()["i:" + l.device];
      for (double& x : i2) x *= x;
      const double rOhm = r.nl.circuit.find(l.device)->parameter("resistance");
      CHECK(l.power == Approx(rOhm * measure::mean(t, i2, w0, w1)).epsilon(1e-6).margin(1e-12));
    } else if (l.kind == "stack") {
      // A stack's loss is its forward plus its reverse dissipation, recorded apart.
      CHECK(l.power == Approx(windowMean(r, "pfwd:" + l.device) + windowMean(r, "prev:" + l.device))
                           .epsilon(1e-6)
                           .margin(1e-12));
      CHECK(l.power > 0.0);
    } else if (l.kind != "capacitor" && l.kind != "inductor") {
      CHECK(l.power > -1e-9);  // passive: absorbs on average
    }
  }
  for (const auto& b : o.batteries)
    CHECK(b.power == Approx(windowMean(r, "p:" + b.name)).epsilon(1e-9).margin(1e-12));
  checkBalanceSums(r.out.report, losses, magnitude, r.nl.analyses.back().transient.tol.reltol);
}

double windowMean(const Run& r, const std::string& sig) {
  return measure::mean(r.result().time(), r.result()[sig], r.out.report.window0,
                       r.out.report.window1);
}

}  // namespace

TEST_CASE("Table radio: half-wave capacitor input", "[netlist][examples]") {
  const Run r = runExample("table-radio-half-wave.disc");
  checkEnergyBalance(r);
  const auto& rep = r.out.report;
  CHECK(rep.settled);
  const double i = rep.output.loadCurrent;
  // The smoothing resistor drops I R (Ohm's law): the output is the reservoir voltage less it.
  // Ohm's law holds at every time point; the means differ only by C2's net current over the
  // settled window, and by the solver's tolerance on the currents (reltol 1e-3): window 1e-3.
  CHECK(rep.output.mean == Approx(windowMean(r, "v:b") - i * 1200.0).epsilon(1e-3));
  // Half-wave capacitor input: ripple about I / (f C) peak-to-peak at the reservoir
  // (J. Millman and C. C. Halkias, Electronic Devices and Circuits, 1967, from memory); an upper
  // bound, as the reservoir recharges for part of the cycle. The lower bound: a half-wave
  // rectifier conducts for less than half the cycle, so the reservoir alone feeds the load for
  // more than half of it and falls by more than I / (2 f C).
  const auto& t = r.result().time();
  const double rippleB = measure::maximum(t, r.result()["v:b"], rep.window0, rep.window1) -
                         measure::minimum(t, r.result()["v:b"], rep.window0, rep.window1);
  CHECK(rippleB < i / (60.0 * 50e-6));
  CHECK(rippleB > 0.5 * i / (60.0 * 50e-6));
  // Peak reverse on the stack is about twice the mains peak (capacitive load, common practice;
  // docs/sources.md): the reservoir's charge plus the opposite mains peak. The reservoir stays
  // below the mains peak by the drops at the charging peak (8 plates at about 1 V, the 22 ohm
  // surge resistor, the mains' 0.5 ohm) and by its ripple, together about a tenth of V_m on a
  // 120 V set: a window of 15 % of 2 V_m.
  CHECK(rep.stacks[0].peakReverse * 8 == Approx(2 * std::numbers::sqrt2 * 120.0).epsilon(0.15));
}

TEST_CASE("Battery chargers: Ohm's law at the battery and the charging-current estimate",
          "[netlist][examples]") {
  for (auto [file, emf, rbat, ratio, r2] :
       {std::tuple{"battery-charger-12v.disc", 12.6, 0.02, 14.4, 0.25},
        std::tuple{"battery-charger-6v.disc", 6.3, 0.01, 25.5, 0.12}}) {
    const Run r = runExample(file);
    const auto& rep = r.out.report;
    INFO(file);
    checkEnergyBalance(r);
    // The battery is the load: it charges, and its power is output, never input (the mains
    // alone feeds the charger).
    CHECK(rep.output.loadState == "charging");
    CHECK(rep.output.inputPower == Approx(-windowMean(r, "p:MAINS")));
    const double i = rep.output.loadCurrent;
    CHECK(rep.output.mean == Approx(emf + rbat * i).epsilon(0.005));
    // Resistance-limited full-wave rectifier into a battery, ideal switches with a threshold:
    // I = (2 Vm cos a - E' (pi - 2 a)) / (pi R), sin a = E'/Vm (Millman and Halkias, from
    // memory). E' adds two plates' knee (0.47 V, the fitted-line intercept of the starting
    // set, derived in docs/sources.md); R gathers the windings
    // (primary referred), leads, battery and two plates' slope (10 ohm cm2 / 85 cm2).
    const double vm = std::numbers::sqrt2 * 230.0 / ratio;
    const double e = emf + 2 * 0.47;
    const double rt = r2 + (2.0 + 0.3) / (ratio * ratio) + 0.05 + rbat + 2 * 10.0 / 85.0;
    const double a = std::asin(e / vm);
    const double estimate =
        (2 * vm * std::cos(a) - e * (std::numbers::pi - 2 * a)) / (std::numbers::pi * rt);
    // The estimate neglects the windings' leakage inductances and straightens the plates' curve
    // (the line fitted over 10-100 % of rated current, while the charger's pulses run several
    // times above it); the run lies 13-16 % below it: a window of 20 %.
    CHECK(i < estimate);
    CHECK(i == Approx(estimate).epsilon(0.2));
  }
}

TEST_CASE("Chargers with a series choke: the choke's mean voltage is its resistive drop",
          "[netlist][examples]") {
  // A selenium bridge, and a silicon bridge with a snubber across each diode (without them the
  // silicon run rings at a megahertz and ends on its step budget: tests/hostile/).
  for (auto [file, emf, rbat] : {std::tuple{"battery-charger-choke.disc", 12.6, 0.02},
                                 std::tuple{"charger-silicon-choke.disc", 12.6, 0.02}}) {
    const Run r = runExample(file);
    INFO(file);
    checkEnergyBalance(r);
    const auto& rep = r.out.report;
    CHECK(rep.output.loadState == "charging");
    const double i = rep.output.loadCurrent;
    CHECK(i > 0.1);
    // Ohm's law at the battery (its own law: emf plus the internal drop), to the report's
    // window-mean rounding of the current (reltol 1e-3 on the battery's 0.02 ohm: 0.5 %).
    CHECK(rep.output.mean == Approx(emf + rbat * i).epsilon(0.005));
    // Over whole periods L di/dt averages to the change of L i, which the settled window
    // keeps small: the choke's mean voltage is its winding resistance times the mean current
    // (Faraday's law). The window still carries the last of the settling (the choke and the
    // battery, L / R of about 0.1 s): 5 % of the drop.
    const double rChoke = r.nl.circuit.find("CHOKE")->parameter("resistance");
    CHECK(windowMean(r, "v:plus,bp") == Approx(rChoke * windowMean(r, "i:CHOKE")).epsilon(0.05));
  }
}

TEST_CASE("Amplifier: choke input holds 0.9 Vrms less the resistive drops", "[netlist][examples]") {
  const Run r = runExample("amplifier-centre-tap-choke.disc");
  checkEnergyBalance(r);
  const auto& rep = r.out.report;
  // Choke input: V_dc = 0.900 V_rms of each half-secondary (Millman and Halkias, from memory),
  // less I times choke, winding and primary-referred resistance, less the stack drop (about
  // 0.7 V per plate at this current density: the starting set's curve, derived in
  // docs/sources.md).
  const double vrms = 230.0 / 0.7667;
  const double i = rep.output.loadCurrent;
  const double expected = 0.9 * vrms - i * (150.0 + 40.0 + 6.0 / (0.7667 * 0.7667)) - 24 * 0.7;
  CHECK(rep.output.mean == Approx(expected).epsilon(0.05));
  // Above the critical inductance R_L / (3 omega) the choke current never stops (Millman and
  // Halkias, from memory).
  const double choke = r.nl.circuit.find("CHOKE")->parameter("inductance");
  const double load = r.nl.circuit.find("RLOAD")->parameter("resistance");
  CHECK(choke > load / (3 * 2 * std::numbers::pi * 50.0));
  const auto& t = r.result().time();
  CHECK(measure::minimum(t, r.result()["i:CHOKE"], rep.window0, rep.window1) > 0.0);
}

TEST_CASE("Signalling supply: ripple bound and uneven but bounded arm sharing",
          "[netlist][examples]") {
  const Run r = runExample("signalling-parallel-stacks.disc");
  checkEnergyBalance(r);
  const auto& rep = r.out.report;
  const double i = rep.output.loadCurrent;
  // Full-wave capacitor input: ripple about I / (2 f C), an upper bound (Millman and Halkias).
  // The lower bound: with omega C R_L well above 10 the conduction angle is far below 90 deg
  // (Schade, Proc. IRE 1943), so the reservoir alone feeds the load for more than half of each
  // half cycle.
  CHECK(rep.output.ripplePeakToPeak < i / (2 * 50.0 * 4700e-6));
  CHECK(rep.output.ripplePeakToPeak > 0.5 * i / (2 * 50.0 * 4700e-6));
  // The window of the arm shares, derived from the plate spread. Each arm is a column of two
  // plates whose Js and Rs are lognormal with log-deviation sigma. In the ohmic limit a column
  // conducts as 1/(R1 + R2), in the exponential limit as sqrt(Js1 Js2) exp(V / (2 n Vt)); in
  // both, to first order, share_a = 1/2 + (sigma / 8)(z1 + z2 - z3 - z4) with z standard
  // normal, a standard deviation of sigma / 4. In between, a plate's drop n Vt ln(I / Js) +
  // I Rs weighs the Js and Rs draws by a and 1 - a, and a^2 + (1 - a)^2 <= 1 keeps sigma / 4 a
  // bound. The seeds fix one draw per stack: it lies within three standard deviations
  // (first-order propagation, JCGM 100:2008 section 5).
  for (const auto& s : rep.stacks) {
    REQUIRE(s.armShare.size() == 2);
    CHECK(s.armShare[0] + s.armShare[1] == Approx(1.0));
    const auto* stack = dynamic_cast<const Stack*>(r.nl.circuit.find(s.name));
    REQUIRE(stack != nullptr);
    const auto& spread = stack->options().spread;
    REQUIRE(stack->options().plates == 2);
    const double sigma = std::max(spread.js, spread.rs);
    CHECK(sigma > 0.0);
    CHECK(std::abs(s.armShare[0] - 0.5) < 3.0 * sigma / 4.0);
  }
}

TEST_CASE("Copper-oxide meter rectifier reads the full-wave average", "[netlist][examples]") {
  const Run r = runExample("meter-rectifier-cuox.disc");
  checkEnergyBalance(r);
  // Full-wave average current 2 sqrt(2) / pi Vrms / R (Millman and Halkias): the discs' drops
  // make the real reading lower (the known non-linearity of rectifier meters on low ranges).
  const double rTotal = r.nl.circuit.find("RMULT")->parameter("resistance") +
                        r.nl.circuit.find("RMETER")->parameter("resistance");
  const double ideal = 2 * std::numbers::sqrt2 / std::numbers::pi * 10.0 / rTotal;
  const double i = r.out.report.output.loadCurrent;
  CHECK(i < ideal);
  // Lower bound: below rated current each disc drops less than its rated drop, at most 1.08 V
  // (docs/sources.md, plate-type starting values), so the current at every instant exceeds
  // that of ideal switches with a threshold E' = 2 x 1.08 V: mean (2 Vm cos a - E' (pi - 2 a)) /
  // (pi R), sin a = E'/Vm (derived, as for the battery chargers).
  const double vm = std::numbers::sqrt2 * 10.0, e = 2 * 1.08, a = std::asin(e / vm);
  CHECK(i > (2 * vm * std::cos(a) - e * (std::numbers::pi - 2 * a)) / (std::numbers::pi * rTotal));
}

TEST_CASE("High-voltage stack: half-wave capacitor input with many discs", "[netlist][examples]") {
  const Run r = runExample("hv-stack-half-wave.disc");
  checkEnergyBalance(r);
  const auto& rep = r.out.report;
  const double i = rep.output.loadCurrent, vm = std::numbers::sqrt2 * 230.0 / 0.575;
  // Half-wave ripple about I / (f C) (Millman and Halkias, from memory), where I is all that
  // drains the reservoir between charging pulses: the load and the stack's own reverse leakage
  // (40 small discs leak a good part of the 0.24 mA load). Upper bound: both for a whole cycle;
  // lower: the load alone for half of it (a half-wave rectifier conducts less than half).
  const auto& t = r.result().time();
  std::vector<double> leak = r.result()["i:SRHV"];
  for (double& x : leak) x = std::max(0.0, -x);
  const double drain = i + measure::mean(t, leak, rep.window0, rep.window1);
  CHECK(rep.output.ripplePeakToPeak < drain / (50.0 * 0.5e-6));
  CHECK(rep.output.ripplePeakToPeak > 0.5 * i / (50.0 * 0.5e-6));
  // The output stays below the secondary peak by the stack's drop at the charging peak (40
  // discs, about 1 V each at rated current: 7 % of Vm), the windings' drop and half the ripple
  // (1 %): above 0.85 Vm.
  CHECK(rep.output.mean < vm);
  CHECK(rep.output.mean > 0.85 * vm);
  // 40 discs share about 2 Vm of reverse voltage (capacitive load; docs/sources.md): less the
  // same shortfall of the reservoir below Vm, so within 15 % of 2 Vm.
  CHECK(rep.stacks[0].peakReverse * 40 == Approx(2 * vm).epsilon(0.15));
}

TEST_CASE("Report files are written and the JSON carries its schema", "[netlist][examples]") {
  const Run r = runExample("meter-rectifier-cuox.disc");
  const std::string dir = std::string(DISC_TEST_OUT_DIR) + "/meter";
  const auto files = writeRunFiles(r.nl, r.out, dir);
  CHECK(files.size() >= 6);
  const std::string json = reportJson(r.out.report);
  CHECK(json.find("\"schema\": 1") != std::string::npos);
  CHECK(reportText(r.out.report).find("CAUTIONS") != std::string::npos);
}

TEST_CASE("Every example netlist runs with either integrator at two tolerances",
          "[netlist][robustness]") {
  // The engine must not depend on one lucky trajectory: small changes of method or tolerance
  // move every step, and each run must still finish (the first 0.3 s: the switch-on and a dozen
  // mains cycles of diode switching).
  // Files that other netlists include are parts, not supplies.
  std::set<std::string> parts;
  for (const auto& entry : std::filesystem::directory_iterator(DISC_NETLIST_DIR)) {
    std::ifstream in(entry.path());
    std::string line;
    while (std::getline(in, line))
      if (line.rfind("include \"", 0) == 0) parts.insert(line.substr(9, line.find('"', 9) - 9));
  }
  REQUIRE(parts.count("charger-common.disc") == 1);
  int runs = 0;
  for (const auto& entry : std::filesystem::directory_iterator(DISC_NETLIST_DIR)) {
    if (entry.path().extension() != ".disc" || parts.count(entry.path().filename().string()))
      continue;
    for (Method method : {Method::Trapezoidal, Method::Bdf2}) {
      for (double reltol : {1e-3, 1e-4}) {
        Netlist nl = loadNetlist(entry.path().string());
        if (nl.analyses.empty() || nl.analyses[0].kind != AnalysisRequest::Kind::Transient)
          continue;  // an include file, or a DC-only netlist
        auto& tr = nl.analyses[0].transient;
        tr.method = method;
        tr.tol.reltol = reltol;
        tr.stop = std::min(tr.stop, 0.3);
        INFO(entry.path().filename().string() << " " << methodName(method) << " reltol " << reltol);
        CHECK_NOTHROW(runNetlist(nl));
        ++runs;
      }
    }
  }
  CHECK(runs >= 40);  // ten or more bundled transient supplies, four ways each
}

TEST_CASE("Bring-up through a series lamp: variac steps, warming valves, a dim lamp",
          "[netlist][examples]") {
  const Run r = runExample("bring-up-series-lamp-variac.disc");
  const auto& t = r.result().time();
  const auto& res = r.result();
  // The line follows the variac's schedule (rms over each step; the 0.5 ohm source drops
  // well under 1 %).
  for (auto [t0, t1, rms] :
       {std::tuple{1.0, 3.0, 115.0}, std::tuple{5.0, 7.0, 175.0}, std::tuple{10.0, 12.0, 230.0}})
    CHECK(measure::rms(t, res["v:line"], t0, t1) == Approx(rms).epsilon(0.01));
  // The cathodes' warm-up from cold: 1 - exp(-t / 4 s) at the end (its closed form).
  CHECK(res["warm:VALVES"].back() == Approx(1.0 - std::exp(-12.0 / 4.0)).epsilon(1e-3));
  // At a steady line the warming valves pull the HT down from the crest they left it at.
  const double surge = measure::maximum(t, res["v:ht"], 0.0, 1.0);
  CHECK(surge > measure::maximum(t, res["v:ht"], 2.5, 3.0) + 5.0);
  // A healthy set leaves the lamp dim: well under its rated power and temperature (common
  // practice: a lamp glowing bright means a fault is drawing current).
  CHECK(measure::mean(t, res["p:LAMP"], 11.0, 12.0) < 0.3 * 60.0);
  CHECK(res["temp:LAMP"].back() < 2000.0);
  checkEnergyBalance(r);
}

bool hasCaution(const SupplyReport& rep, const std::string& words) {
  return std::any_of(rep.cautions.begin(), rep.cautions.end(),
                     [&](const std::string& c) { return c.find(words) != std::string::npos; });
}

TEST_CASE("Voltage doubler: both stacks are judged as one rectifier into a capacitive load",
          "[netlist][examples][figures]") {
  const Run r = runExample("tv-doubler-half-wave.disc");
  checkEnergyBalance(r);
  const auto& rep = r.out.report;
  REQUIRE(rep.stacks.size() == 2);
  // SR1 reaches the pump capacitor only through the surge resistor and gnd, yet it charges
  // that capacitor: both stacks form one rectifier and share its load kind.
  for (const auto& s : rep.stacks) {
    INFO(s.name);
    CHECK(s.loadKind == "capacitive");
    CHECK(s.rectifier == "SR1 SR2");
    // Sine-equivalent rms for a capacitive load: peak / (2 sqrt 2) (the rule of
    // docs/report.md; common practice, docs/sources.md).
    CHECK(s.rmsReverse == Approx(s.peakReverse / (2 * std::numbers::sqrt2)));
    // Each stack of a half-wave doubler blocks the pump capacitor's charge plus the mains
    // crest, about 2 Vm (Millman and Halkias, from memory), less the drops at the charging
    // peaks: within 15 % of 2 Vm over 10 plates (as for the table radio).
    CHECK(s.peakReverse * 10 == Approx(2 * std::numbers::sqrt2 * 120.0).epsilon(0.15));
  }
  // A doubler's output stays below twice the mains crest (its no-load limit).
  CHECK(rep.output.mean < 2 * std::numbers::sqrt2 * 120.0);
  CHECK(rep.output.mean > std::numbers::sqrt2 * 120.0);
  // Transformerless from the mains: the live-chassis caution, and the charged capacitors'.
  CHECK(hasCaution(rep, "no mains transformer"));
  CHECK(hasCaution(rep, "stay charged"));
  CHECK_FALSE(hasCaution(rep, "hydrogen"));
}

TEST_CASE("Float charger: the mains is the input, the floating battery a charging load",
          "[netlist][examples][figures]") {
  const Run r = runExample("exchange-float-charger.disc");
  checkEnergyBalance(r);
  const auto& o = r.out.report.output;
  REQUIRE(o.inputs == std::vector<std::string>{"MAINS"});
  CHECK(o.inputPower == Approx(-windowMean(r, "p:MAINS")));
  REQUIRE(o.batteries.size() == 1);
  CHECK(o.batteries[0].name == "BAT");
  CHECK(o.batteries[0].state == "charging");
  // Ohm's law at the battery: its terminal voltage is the output (REXCH sits across it) and
  // equals emf + R i while it charges.
  CHECK(o.mean == Approx(25.2 + 0.05 * o.batteries[0].current).epsilon(1e-3));
  CHECK(o.batteries[0].current > 0.0);
  for (const auto& s : r.out.report.stacks) {
    INFO(s.name);
    // The density verdict follows the busiest arm: the stack's average current times the
    // largest share over one plate's area (85 cm2, plate-types.json).
    const double busiest = *std::max_element(s.armShare.begin(), s.armShare.end());
    CHECK(s.densityAverage == Approx(s.currentAverage * busiest / 85.0));
    CHECK(busiest > 1.0 / 3.0);
    CHECK(s.loadKind == "resistive");  // no capacitor on the bridge
  }
  CHECK(hasCaution(r.out.report, "hydrogen"));
  CHECK_FALSE(hasCaution(r.out.report, "no mains transformer"));
  CHECK_FALSE(hasCaution(r.out.report, "stay charged"));
}

TEST_CASE("A battery load that discharges is said so, with no efficiency",
          "[netlist][examples][figures]") {
  // A 6 V charger with its transformer tapped far too low for a 12 V battery: the secondary
  // crest (230 sqrt 2 / 40 = 8.1 V) stays below the battery, so the battery discharges through
  // the plates' reverse leakage (invented demonstration values).
  Netlist nl = parseNetlist(R"(
voltage MAINS line gnd mains rms=230V frequency=50Hz
transformer T1 line gnd sa sb ratio=40
stack SR1 sa plus type=se-100mm-square
stack SR2 sb plus type=se-100mm-square
stack SR3 minus sa type=se-100mm-square
stack SR4 minus sb type=se-100mm-square
battery BAT plus minus emf=12.6V resistance=0.02ohm
resistor RREF minus gnd 1ohm
output plus minus load=BAT
run transient stop=0.2s
)");
  const RunOutcome out = runNetlist(nl);
  const auto& o = out.report.output;
  CHECK(o.loadState == "discharging");
  CHECK(o.outputPower < 0.0);
  CHECK(o.efficiency == 0.0);
  CHECK(
      std::any_of(out.report.warnings.begin(), out.report.warnings.end(),
                  [](const std::string& w) { return w.find("discharges") != std::string::npos; }));
  CHECK(reportText(out.report).find("none (the load discharges)") != std::string::npos);
}

TEST_CASE("Cautions follow what the circuit contains", "[netlist][examples][figures]") {
  // A 10 V meter rectifier of copper oxide: no selenium, no mains, no charged capacitor, no
  // battery: only the general caution.
  const Run meter = runExample("meter-rectifier-cuox.disc");
  CHECK(meter.out.report.cautions.size() == 1);
  CHECK_FALSE(hasCaution(meter.out.report, "selenium"));
  CHECK_FALSE(hasCaution(meter.out.report, "Mains"));
  // A 12 V battery charger: selenium, mains (through a transformer) and the battery.
  const Run charger = runExample("battery-charger-12v.disc");
  CHECK(hasCaution(charger.out.report, "selenium"));
  CHECK(hasCaution(charger.out.report, "Mains can kill. Work with the set unplugged"));
  CHECK(hasCaution(charger.out.report, "hydrogen"));
  CHECK_FALSE(hasCaution(charger.out.report, "stay charged"));
  CHECK_FALSE(hasCaution(charger.out.report, "valve"));
}

TEST_CASE("Table radio warm-up: the report from one settled period balances, the plates warm",
          "[netlist][examples][periodic]") {
  // The file's own order: run periodic, then run warm-up. The energy balance is checked on the
  // periodic steady state alone (the warm-up's series holds period averages, not waveforms).
  Run r{loadNetlist(std::string(DISC_NETLIST_DIR) + "/table-radio-warm-up.disc"), {}};
  REQUIRE(r.nl.analyses.size() == 2);
  REQUIRE(r.nl.analyses[0].kind == AnalysisRequest::Kind::Periodic);
  REQUIRE(r.nl.analyses[1].kind == AnalysisRequest::Kind::WarmUp);
  CHECK(r.nl.analyses[1].warmUp.duration == Approx(3600.0));
  Netlist periodicOnly = r.nl;
  periodicOnly.analyses.pop_back();
  Run p{periodicOnly, {}};
  for (const auto& d : p.nl.circuit.devices())
    if (d->kind() == "resistor") p.nl.record.push_back("i:" + d->name());
  p.out = runNetlist(p.nl);
  REQUIRE(p.out.hasReport);
  CHECK(p.out.report.basis == "periodic");
  CHECK(p.out.report.settled);
  for (const auto& st : p.out.report.stacks) CHECK_FALSE(st.surgeKnown);
  checkEnergyBalance(p);

  r.out = runNetlist(r.nl);
  REQUIRE(r.out.hasReport);
  CHECK(r.out.reportAnalysis == 1);
  {
    // The report at the warm-up's end adds up too, to the warm-up's own reltol (1e-3,
    // EnvelopeOptions::reltol): its period is the shooting's last pass, whose start and end
    // differ by up to the shooting's tolerance, so the capacitors' stored energy (no loss of
    // theirs) moves a little over the period and the balance is looser than at a cold start.
    const auto& o = r.out.report.output;
    REQUIRE(o.inputPower > 0.0);
    double losses = 0.0, magnitude = o.inputPower + std::abs(o.outputPower);
    for (const auto& l : o.losses) {
      losses += l.power;
      magnitude += std::abs(l.power);
    }
    checkBalanceSums(r.out.report, losses, magnitude, EnvelopeOptions{}.reltol);
  }
  const WarmUpSummary& w = r.out.analyses[1].warmUp;
  CHECK(w.endTime == Approx(3600.0));
  CHECK(w.failures.empty());
  // The hour warms the plates above the 30 degC ambient, and a selenium plate's reverse leakage
  // grows as it warms (common practice).
  const auto& temp = r.result()["temp:SR1"];
  const auto& leak = r.result()["irev:SR1"];
  CHECK(temp.front() == Approx(303.15).margin(0.5));
  CHECK(temp.back() > temp.front() + 5.0);
  CHECK(leak.back() > leak.front());
  // The report at the end is the warm settled period: its hottest plate is the series' last.
  CHECK(r.out.report.stacks.at(0).temperatureEnd == Approx(temp.back()).margin(0.05));
  CHECK(warmUpText(w).find("WARM-UP over 1 h 0 min") != std::string::npos);
}

TEST_CASE("Shared chassis: two stacks and a core loss warm one heat node, the plates above it",
          "[netlist][examples][thermal]") {
  Run r{loadNetlist(std::string(DISC_NETLIST_DIR) + "/shared-chassis-field-supply.disc"), {}};
  REQUIRE(r.nl.analyses.size() == 2);
  REQUIRE(r.nl.analyses[0].kind == AnalysisRequest::Kind::Transient);
  REQUIRE(r.nl.analyses[1].kind == AnalysisRequest::Kind::WarmUp);
  // The switch-on transient alone: its energy balance, with the core loss (heat, not an
  // electrical loss) left out of the losses.
  Netlist transientOnly = r.nl;
  transientOnly.analyses.pop_back();
  Run t{transientOnly, {}};
  for (const auto& d : t.nl.circuit.devices())
    if (d->kind() == "resistor") t.nl.record.push_back("i:" + d->name());
  t.out = runNetlist(t.nl);
  REQUIRE(t.out.hasReport);
  checkEnergyBalance(t);
  for (const auto& l : t.out.report.output.losses) CHECK(l.device != "CORE");

  // Six hours of warm-up. The network's slowest time constant, from the chassis (900 J/K,
  // 0.8 K/W to the cabinet) and the cabinet (2 kJ/K, 1.2 K/W to the room), is about 62 min
  // (the larger inverse eigenvalue of its two-lump matrix, derived as in
  // tests/devices/thermal_test.cpp): six hours leave e^-5.8, 0.3 % of the rise.
  r.out = runNetlist(r.nl);
  REQUIRE(r.out.hasReport);
  const SupplyReport& rep = r.out.report;
  CHECK(rep.failures.empty());
  REQUIRE(rep.stacks.size() == 2);
  REQUIRE(rep.heatNodes.size() == 2);
  const HeatNodeFigures& chassis = rep.heatNodes[0];
  const HeatNodeFigures& cabinet = rep.heatNodes[1];
  REQUIRE(chassis.name == "CHASSIS");
  REQUIRE(cabinet.name == "CABINET");
  // Steady state by hand: all the heat, both stacks' settled dissipation and the 4 W core
  // loss, flows through the mount (0.8 K/W) and then out of the cabinet (1.2 K/W), thermal
  // resistances in series (Incropera and DeWitt, Fundamentals of Heat and Mass Transfer,
  // section 3.1).
  double p = 0.0;
  for (const auto& s : rep.stacks) p += s.powerForward + s.powerReverse;
  const double ta = r.nl.circuit.ambient(), heat = p + 4.0;
  CHECK(chassis.heatIn == Approx(heat).epsilon(1e-12));
  CHECK(cabinet.heatIn == Approx(0.0).margin(1e-12));
  const double cabinetSteady = ta + heat * 1.2, chassisSteady = cabinetSteady + heat * 0.8;
  CHECK(cabinet.temperatureSteady == Approx(cabinetSteady).epsilon(1e-12));
  CHECK(chassis.temperatureSteady == Approx(chassisSteady).epsilon(1e-12));
  INFO("chassis at the end " << chassis.temperatureEnd - 273.15 << " degC, steady "
                             << chassisSteady - 273.15 << " degC");
  CHECK(std::abs(chassis.temperatureEnd - chassisSteady) < 0.01 * (chassisSteady - ta));
  CHECK(std::abs(cabinet.temperatureEnd - cabinetSteady) < 0.01 * (cabinetSteady - ta));
  // Each stack's hottest plate settles its own dissipation times its thermal resistance above
  // the chassis; the warm-up reached it.
  const double rth = PlateLibrary::builtIn().at("se-45mm-square").thermal.rth;
  for (const auto& s : rep.stacks) {
    INFO(s.name);
    CHECK(s.temperatureSteady == Approx(chassisSteady + s.powerPerPlate * rth).epsilon(2e-3));
    CHECK(s.temperatureEnd > chassis.temperatureEnd + 0.5 * s.powerPerPlate * rth);
    CHECK(s.temperatureEnd < s.temperatureSteady + 0.1);
  }
  const WarmUpSummary& w = r.out.analyses[1].warmUp;
  CHECK(w.endTime == Approx(6 * 3600.0));
  const auto trend = std::find_if(w.trends.begin(), w.trends.end(), [](const auto& x) {
    return x.what == "CHASSIS: heat node temperature";
  });
  REQUIRE(trend != w.trends.end());
  CHECK(trend->start == Approx(ta - 273.15).margin(0.01));
  CHECK(trend->end == Approx(chassis.temperatureEnd - 273.15).margin(1e-9));
}

TEST_CASE("Every bundled supply has a test case that checks its energy balance",
          "[netlist][examples]") {
  // The test cases above call checkEnergyBalance() for exactly these files; a new example
  // netlist must join them.
  const std::set<std::string> balanced = {
      "table-radio-half-wave.disc",      "battery-charger-12v.disc",
      "battery-charger-6v.disc",         "amplifier-centre-tap-choke.disc",
      "signalling-parallel-stacks.disc", "meter-rectifier-cuox.disc",
      "hv-stack-half-wave.disc",         "bring-up-series-lamp-variac.disc",
      "tv-doubler-half-wave.disc",       "exchange-float-charger.disc",
      "table-radio-warm-up.disc",        "battery-charger-choke.disc",
      "charger-silicon-choke.disc",      "shared-chassis-field-supply.disc"};
  int supplies = 0;
  for (const auto& entry : std::filesystem::directory_iterator(DISC_NETLIST_DIR)) {
    if (entry.path().extension() != ".disc") continue;
    std::ifstream in(entry.path());
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    if (text.find("\noutput ") == std::string::npos) continue;  // a part for inclusion
    INFO(entry.path().filename().string());
    CHECK(balanced.count(entry.path().filename().string()) == 1);
    ++supplies;
  }
  CHECK(supplies == static_cast<int>(balanced.size()));
}
