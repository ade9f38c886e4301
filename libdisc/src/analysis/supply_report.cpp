// Supply report figures and verdicts.
#include "disc/supply_report.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <numbers>

#include "disc/devices/capacitor.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/devices/transformer.hpp"
#include "disc/measures.hpp"

namespace disc {
namespace {

constexpr int kMaxPlateTraces = 12;  // plates per stack whose I-V trajectories are recorded

std::string vname(const Circuit& c, NodeId id) {
  return c.nodeName(id);
}

/// Mains frequency: the lowest sine frequency among the sources (0 for a DC supply).
double mainsFrequency(const Circuit& c) {
  double f = 0.0;
  for (const auto& d : c.devices()) {
    const Waveform* w = nullptr;
    if (auto* v = dynamic_cast<const VoltageSource*>(d.get())) w = &v->waveform();
    if (auto* i = dynamic_cast<const CurrentSource*>(d.get())) w = &i->waveform();
    if (w && w->frequency() > 0.0 && (f == 0.0 || w->frequency() < f)) f = w->frequency();
  }
  return f;
}

Verdict judge(std::string figure, double value, double limit, std::string unit, std::string rule) {
  Verdict v{std::move(figure), value, limit, std::move(unit), "ok", std::move(rule)};
  const double ratio = limit > 0.0 ? value / limit : 0.0;
  v.level = ratio > 1.0 ? "exceeds" : ratio > 0.9 ? "marginal" : "ok";
  return v;
}

int rank(const std::string& level) {
  return level == "fails" ? 3 : level == "exceeds" ? 2 : level == "marginal" ? 1 : 0;
}

}  // namespace

std::vector<std::string> reportSignals(const Netlist& nl) {
  std::vector<std::string> s;
  const Circuit& c = nl.circuit;
  if (nl.output.given) {
    s.push_back(fmt::format("v:{},{}", nl.output.positive, nl.output.negative));
    s.push_back("i:" + nl.output.load);
    s.push_back("p:" + nl.output.load);
  }
  for (const auto& d : c.devices()) {
    const auto& t = d->terminals();
    if (dynamic_cast<const VoltageSource*>(d.get())) {
      s.push_back("p:" + d->name());
      s.push_back("i:" + d->name());
      s.push_back(fmt::format("v:{},{}", vname(c, t[0]), vname(c, t[1])));
    } else if (dynamic_cast<const Transformer*>(d.get())) {
      s.push_back("i2:" + d->name());
      s.push_back(fmt::format("v:{},{}", vname(c, t[2]), vname(c, t[3])));
    } else if (auto* st = dynamic_cast<const Stack*>(d.get())) {
      for (const char* q : {"i", "p", "vrev", "temp", "form", "pfwd", "prev"})
        s.push_back(fmt::format("{}:{}", q, d->name()));
      for (int m = 1; m <= st->options().arms; ++m)
        s.push_back(fmt::format("iarm:{}#{}", d->name(), m));
      const int traced = std::min(st->plateCount(), kMaxPlateTraces);
      for (int n = 1; n <= traced; ++n) {
        s.push_back(fmt::format("vrev:{}#{}", d->name(), n));
        s.push_back(fmt::format("temp:{}#{}", d->name(), n));
      }
    }
  }
  // Every device's power, for the energy balance.
  for (const auto& d : c.devices()) {
    const auto probes = d->probes();
    const std::string p = "p:" + d->name();
    if (std::find(probes.begin(), probes.end(), "p") != probes.end() &&
        std::find(s.begin(), s.end(), p) == s.end())
      s.push_back(p);
  }
  return s;
}

SupplyReport makeSupplyReport(const Netlist& nl, const Result& r) {
  SupplyReport rep;
  const Circuit& c = nl.circuit;
  rep.title = nl.title;
  rep.file = nl.path;
  rep.ambient = c.ambient();
  rep.stats = r.stats();
  rep.frequency = mainsFrequency(c);
  const auto& t = r.time();
  const double end = t.back();

  // Settled window: consecutive whole cycles at the end whose mean output agrees within 0.2 %.
  const std::string outSig =
      nl.output.given ? fmt::format("v:{},{}", nl.output.positive, nl.output.negative) : "";
  if (rep.frequency > 0.0) {
    const double period = 1.0 / rep.frequency;
    const int available = static_cast<int>(std::floor((end - t.front()) / period + 1e-9));
    int settledCycles = 1;
    if (!outSig.empty() && available >= 2) {
      const auto& v = r[outSig];
      double last = measure::mean(t, v, end - period, end);
      for (int k = 2; k <= std::min(available, 5); ++k) {
        const double m = measure::mean(t, v, end - k * period, end - (k - 1) * period);
        if (std::abs(m - last) > 2e-3 * std::max(std::abs(last), 1e-9)) break;
        settledCycles = k;
        last = m;
      }
    }
    rep.settled = settledCycles >= 2;
    rep.cycles = std::max(1, std::min(settledCycles, available));
    rep.window1 = end;
    rep.window0 = end - rep.cycles * period;
  } else {
    rep.settled = false;
    rep.cycles = 0;
    rep.window1 = end;
    rep.window0 = t.front() + 0.9 * (end - t.front());
  }
  const double w0 = rep.window0, w1 = rep.window1;
  if (!rep.settled)
    rep.warnings.push_back(
        rep.frequency > 0.0 ? "the output had not settled by the end of the run: figures use the "
                              "last cycle; run longer for settled figures"
                            : "no mains frequency: figures use the last tenth of the run");

  // Output.
  auto& o = rep.output;
  if (nl.output.given) {
    const auto& v = r[outSig];
    const auto f = measure::outputFigures(t, v, 1.0 / (w1 - w0), 1);
    o.mean = f.mean;
    o.ripplePeakToPeak = f.ripplePeakToPeak;
    o.rippleRms = f.rippleRms;
    o.rippleFactor = std::abs(f.mean) > 0 ? f.rippleRms / std::abs(f.mean) : 0.0;
    o.loadCurrent = measure::mean(t, r["i:" + nl.output.load], w0, w1);
    o.outputPower = measure::mean(t, r["p:" + nl.output.load], w0, w1);
  }
  double vrms = 0, irms = 0;
  for (const auto& d : c.devices()) {
    const auto& term = d->terminals();
    const bool isLoad = nl.output.given && d->name() == nl.output.load;
    const bool isSource = dynamic_cast<const VoltageSource*>(d.get()) != nullptr ||
                          dynamic_cast<const CurrentSource*>(d.get()) != nullptr;
    if (isLoad) {
      if (isSource) o.loadState = o.outputPower >= 0.0 ? "charging" : "discharging";
      continue;
    }
    if (isSource) {
      o.inputPower += -measure::mean(t, r["p:" + d->name()], w0, w1);
    } else if (r.has("p:" + d->name())) {
      o.losses.push_back(
          {d->name(), std::string(d->kind()), measure::mean(t, r["p:" + d->name()], w0, w1)});
    }
    if (dynamic_cast<const VoltageSource*>(d.get())) {
      if (vrms == 0.0) {
        vrms = measure::rms(t, r[fmt::format("v:{},{}", vname(c, term[0]), vname(c, term[1]))], w0,
                            w1);
        irms = measure::rms(t, r["i:" + d->name()], w0, w1);
      }
    } else if (dynamic_cast<const Transformer*>(d.get()) && !o.hasTransformer) {
      o.hasTransformer = true;
      o.secondaryRmsCurrent = measure::rms(t, r["i2:" + d->name()], w0, w1);
      o.secondaryVA =
          o.secondaryRmsCurrent *
          measure::rms(t, r[fmt::format("v:{},{}", vname(c, term[2]), vname(c, term[3]))], w0, w1);
    }
  }
  o.efficiency = o.inputPower > 0 && o.outputPower > 0 ? o.outputPower / o.inputPower : 0.0;
  o.powerFactor = vrms * irms > 0 ? o.inputPower / (vrms * irms) : 0.0;

  // Stacks.
  bool selenium = false;
  for (const auto& d : c.devices()) {
    const auto* st = dynamic_cast<const Stack*>(d.get());
    if (!st) continue;
    const PlateType& pt = st->type();
    selenium = selenium || pt.material == "selenium";
    StackFigures s;
    s.name = st->name();
    s.type = pt.name;
    s.material = pt.material;
    s.plates = st->options().plates;
    s.arms = st->options().arms;
    s.mode = st->options().mode == StackMode::Lumped ? "lumped" : "per-plate";
    // Load kind: capacitive when a capacitor hangs on either end of the stack, unless stated.
    bool capacitive = false;
    for (const auto& e : c.devices())
      if (dynamic_cast<const Capacitor*>(e.get()))
        for (NodeId n : e->terminals())
          if (n != kGround && (n == st->terminals()[0] || n == st->terminals()[1]))
            capacitive = true;
    if (nl.output.kind != OutputSpec::LoadKind::Auto)
      capacitive = nl.output.kind == OutputSpec::LoadKind::Capacitive;
    s.loadKind = capacitive ? "capacitive" : "resistive";
    const std::string n = st->name();
    const auto& i = r["i:" + n];
    s.peakReverse = std::max(0.0, measure::maximum(t, r["vrev:" + n], w0, w1));
    s.rmsReverse = s.peakReverse / (capacitive ? 2.0 * std::numbers::sqrt2 : std::numbers::sqrt2);
    s.rmsRating = capacitive ? pt.ratings.rmsReverseCapacitive : pt.ratings.rmsReverseResistive;
    s.peakRating = pt.ratings.peakReverse;
    std::vector<double> fwd(i.size());
    std::transform(i.begin(), i.end(), fwd.begin(), [](double x) { return std::max(0.0, x); });
    s.currentAverage = measure::mean(t, fwd, w0, w1);
    s.currentRms = measure::rms(t, fwd, w0, w1);
    s.currentPeak = measure::maximum(t, fwd, w0, w1);
    double surge = 0.0;
    for (double x : i) surge = std::max(surge, std::abs(x));
    s.surgePeak = surge;
    s.densityAverage = s.currentAverage / s.arms / pt.physics.areaCm2;
    const double ta = c.ambient(), tmax = pt.ratings.maxPlateTemperature,
                 tref = pt.ratings.ambientReference;
    const double derate = ta <= tref ? 1.0 : std::clamp((tmax - ta) / (tmax - tref), 0.0, 1.0);
    s.densityRating = pt.ratings.currentDensity * derate;
    s.powerForward = measure::mean(t, r["pfwd:" + n], w0, w1);
    s.powerReverse = measure::mean(t, r["prev:" + n], w0, w1);
    s.powerPerPlate = (s.powerForward + s.powerReverse) / st->plateCount();
    s.temperatureEnd = r["temp:" + n].back();
    // Steady state of the hottest plate: its own average dissipation through its heat path
    // (neighbours at the same temperature exchange nothing), on top of the ambient.
    const double rth = pt.thermal.rth / st->options().cooling;
    double hottestRise = 0.0;
    const int traced = std::min(st->plateCount(), kMaxPlateTraces);
    for (int k = 1; k <= traced; ++k) {
      const std::string tk = fmt::format("temp:{}#{}", n, k);
      const double rise = r[tk].back() - ta;
      hottestRise = std::max(hottestRise, rise);
    }
    s.destructionTemperature = pt.failure.destructionTemperature;
    // Past destruction there is no steady state to estimate: the figure stops there.
    const double steady = std::max(ta + s.powerPerPlate * rth, ta + hottestRise);
    s.noSteadyState = !(steady < s.destructionTemperature);
    s.temperatureSteady = s.noSteadyState ? s.destructionTemperature : steady;
    s.temperatureLimit = tmax;
    double armTotal = 0.0;
    for (int m = 1; m <= s.arms; ++m) {
      s.armShare.push_back(measure::mean(t, r[fmt::format("iarm:{}#{}", n, m)], w0, w1));
      armTotal += s.armShare.back();
    }
    for (double& a : s.armShare) a = armTotal != 0.0 ? a / armTotal : 0.0;
    s.formingStart = r["form:" + n].front();
    s.formingEnd = r["form:" + n].back();

    s.verdicts.push_back(
        judge("peak reverse voltage per plate", s.peakReverse, s.peakRating, "V",
              "largest reverse voltage on any plate against the type's peak rating"));
    s.verdicts.push_back(judge("rms reverse voltage per plate", s.rmsReverse, s.rmsRating, "V",
                               fmt::format("sine-equivalent rms (peak / {}) against the rms rating "
                                           "for a {} load",
                                           capacitive ? "2 sqrt 2" : "sqrt 2", s.loadKind)));
    s.verdicts.push_back(judge(
        "average forward current density", s.densityAverage * 1e3, s.densityRating * 1e3, "mA/cm2",
        "average forward current per arm over the plate area against the "
        "rated density, derated linearly to zero at the plate limit above the "
        "reference ambient"));
    const Verdict tv = judge("plate temperature rise (steady-state estimate)",
                             s.temperatureSteady - ta, tmax - ta, "K",
                             "hottest plate's rise above ambient (average dissipation x thermal "
                             "resistance) against the room left below the type's limit");
    s.verdicts.push_back(tv);
    for (const auto& v : s.verdicts) {
      if (v.level == "ok") continue;
      rep.warnings.push_back(fmt::format(
          "{}: {} is {:.3g} {}, {} the {:.3g} {} limit ({})", s.name, v.figure, v.value, v.unit,
          v.level == "exceeds" ? "above" : "close to", v.limit, v.unit, v.rule));
    }
    if (s.arms > 1) {
      const double hi = *std::max_element(s.armShare.begin(), s.armShare.end());
      if (hi > 1.25 / s.arms)
        rep.warnings.push_back(
            fmt::format("{}: one parallel arm carries {:.0f} % of the current "
                        "(equal sharing would be {:.0f} %)",
                        s.name, 100 * hi, 100.0 / s.arms));
    }
    if (s.formingStart < 0.9)
      rep.warnings.push_back(fmt::format(
          "{}: the stack starts deformed (forming state {:.2f}); its leakage is high until it "
          "re-forms (state {:.2f} at the end of the run): raise the voltage slowly, e.g. through a "
          "variac or a series lamp, and watch for heat",
          s.name, s.formingStart, s.formingEnd));
    rep.stacks.push_back(std::move(s));
  }
  for (const auto& s : rep.stacks)
    for (const auto& v : s.verdicts)
      if (rank(v.level) > rank(rep.worst)) rep.worst = v.level;
  rep.failures = r.failures();
  if (!rep.failures.empty()) rep.worst = "fails";
  if (r.failed())
    rep.warnings.insert(rep.warnings.begin(),
                        fmt::format("the run stopped at {:.4g} s, where a plate was destroyed: the "
                                    "figures cover the run up to there",
                                    end));

  rep.cautions = safetyCautions(selenium);
  rep.disclaimer = simulationDisclaimer();
  return rep;
}

std::vector<std::string> safetyCautions(bool selenium) {
  std::vector<std::string> c = {
      "Mains and the high voltages of valve equipment can kill; a transformerless (AC/DC) set can "
      "have a live chassis: work through an isolation transformer.",
      "Reservoir and filter capacitors stay charged after switch-off: discharge them through a "
      "resistor and check with a meter before touching."};
  if (selenium)
    c.insert(c.begin(),
             "An overheated or failing selenium rectifier releases toxic fumes with a strong foul "
             "smell (the smell is no safe warning): switch off, ventilate, leave the room, do not "
             "inhale, let it cool, and dispose of the plates as hazardous waste (they contain "
             "selenium and cadmium).");
  return c;
}

std::string simulationDisclaimer() {
  return "These figures are a simulation to plan work. They are no substitute for local "
         "electrical codes, the equipment maker's data or a qualified technician; model values "
         "are typical, and old parts differ widely.";
}

}  // namespace disc
