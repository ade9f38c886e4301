// Supply report figures and verdicts.
#include "disc/supply_report.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include "disc/devices/capacitor.hpp"
#include "disc/devices/electrolytic.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/devices/thermal.hpp"
#include "disc/devices/thermistor.hpp"
#include "disc/devices/transformer.hpp"
#include "disc/measures.hpp"

namespace disc {
namespace {

constexpr int kMaxPlateTraces = 12;  // plates per stack whose I-V trajectories are recorded

std::string vname(const Circuit& c, NodeId id) {
  return c.nodeName(id);
}

double mainsFrequency(const Circuit& c) {
  return mainsSource(c).frequency;
}

int rank(const std::string& level) {
  return level == "fails" ? 3 : level == "exceeds" ? 2 : level == "marginal" ? 1 : 0;
}

}  // namespace

Verdict judgeFigure(std::string figure, double value, double limit, std::string unit,
                    std::string rule) {
  Verdict v{std::move(figure), value, limit, std::move(unit), "ok", std::move(rule)};
  const double ratio = limit > 0.0 ? value / limit : 0.0;
  v.level = ratio > 1.0 ? "exceeds" : ratio > 0.9 ? "marginal" : "ok";
  return v;
}

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
    } else if (dynamic_cast<const Capacitor*>(d.get())) {
      s.push_back(fmt::format("v:{},{}", vname(c, t[0]), vname(c, t[1])));
    } else if (dynamic_cast<const Transformer*>(d.get())) {
      s.push_back("i2:" + d->name());
      s.push_back(fmt::format("v:{},{}", vname(c, t[2]), vname(c, t[3])));
    } else if (dynamic_cast<const Electrolytic*>(d.get())) {
      s.push_back("i:" + d->name());
      s.push_back(fmt::format("v:{},{}", vname(c, t[0]), vname(c, t[1])));
    } else if (dynamic_cast<const Thermistor*>(d.get())) {
      s.push_back("i:" + d->name());
      s.push_back("temp:" + d->name());
    } else if (dynamic_cast<const HeatNode*>(d.get())) {
      s.push_back("temp:" + d->name());
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
  // Every device's electrical power, for the energy balance (a heat source's watts are heat).
  for (const auto& d : c.devices()) {
    if (dynamic_cast<const HeatSource*>(d.get())) continue;
    const auto probes = d->probes();
    const std::string p = "p:" + d->name();
    if (std::find(probes.begin(), probes.end(), "p") != probes.end() &&
        std::find(s.begin(), s.end(), p) == s.end())
      s.push_back(p);
  }
  return s;
}

MainsSource mainsSource(const Circuit& c) {
  MainsSource m;
  for (const auto& d : c.devices()) {
    const Waveform* w = nullptr;
    if (auto* v = dynamic_cast<const VoltageSource*>(d.get())) w = &v->waveform();
    if (auto* i = dynamic_cast<const CurrentSource*>(d.get())) w = &i->waveform();
    if (w && w->frequency() > 0.0 && (m.frequency == 0.0 || w->frequency() < m.frequency))
      m = {d->name(), w->frequency()};
  }
  return m;
}

std::string reportLengthShortfall(const Netlist& nl, double stop, double recordFrom) {
  if (!nl.output.given) return "";
  const MainsSource mains = mainsSource(nl.circuit);
  // The report sees only the recorded rows, which begin at record-from.
  const double from = std::max(0.0, recordFrom);
  const double cycles = (stop - from) * mains.frequency;
  if (mains.frequency == 0.0 || cycles >= SupplyReport::kSettleCycles * (1.0 - 1e-9)) return "";
  const std::string span =
      from > 0.0 ? fmt::format("stop={:g} s with record-from={:g} s records", stop, from)
                 : fmt::format("stop={:g} s covers", stop);
  return fmt::format(
      "{} {:.3g} cycles of '{}' ({:g} Hz), and the supply report needs at least {}: it "
      "measures whole cycles at the end of the run and tells whether the output has settled by "
      "comparing their means; give stop={:g} s or more (a supply started cold usually needs "
      "longer)",
      span, cycles, mains.name, mains.frequency, SupplyReport::kSettleCycles,
      from + SupplyReport::kSettleCycles / mains.frequency);
}

double reportSpan(const Netlist& nl, const TransientOptions& o) {
  // The settling check looks back over at most five mains cycles; without mains the figures
  // use the last tenth of the recorded run. A quarter of a cycle (a hundredth of the run) more
  // is margin.
  const double f = mainsFrequency(nl.circuit);
  return f > 0.0 ? 5.25 / f : 0.11 * (o.stop - o.recordFrom);
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
  // A periodic steady state (alone, or at the end of a warm-up) is one settled period: the
  // figures need no settling check, and it has no switch-on.
  const bool periodicBasis = r.stats().method == "periodic" || r.stats().method == "warm-up";
  rep.basis = periodicBasis ? "periodic" : "transient";
  if (periodicBasis) {
    rep.settled = true;
    rep.cycles = 1;
    rep.window0 = t.front();
    rep.window1 = end;
  } else if (rep.frequency > 0.0) {
    // A transient too short to judge its settling (the parser refuses such a run statement;
    // a library or Python caller learns it here, in the same words).
    if (const std::string why = reportLengthShortfall(nl, end, t.front()); !why.empty())
      throw InputError("supply report: the transient's " + why);
    const double period = 1.0 / rep.frequency;
    const int available = static_cast<int>(std::floor((end - t.front()) / period + 1e-9));
    int settledCycles = 1;
    if (!outSig.empty() && available >= SupplyReport::kSettleCycles) {
      const auto& v = r[outSig];
      double last = measure::mean(t, v, end - period, end);
      for (int k = 2; k <= std::min(available, 5); ++k) {
        const double m = measure::mean(t, v, end - k * period, end - (k - 1) * period);
        if (std::abs(m - last) > 2e-3 * std::max(std::abs(last), 1e-9)) break;
        settledCycles = k;
        last = m;
      }
    }
    rep.settled = settledCycles >= SupplyReport::kSettleCycles;
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
    // A rectifier's output is positive at the output's first node and mostly DC; a negative or
    // mostly-AC output means a stack, or the output statement, the wrong way round.
    bool hasStack = false;
    for (const auto& d : c.devices()) hasStack = hasStack || d->kind() == "stack";
    if (hasStack && (o.mean < 0.0 || o.rippleRms > std::abs(o.mean)))
      rep.warnings.push_back(fmt::format(
          "the output {} {} is {:.4g} V DC with {:.4g} V rms ripple: is a stack reversed? A "
          "stack's first node is its anode (the AC side), the second its cathode (the + DC "
          "side); the output statement names the + node first",
          nl.output.positive, nl.output.negative, o.mean, o.rippleRms));
  }
  // Input: the named source, else the alternating sources (the mains), else every source; a
  // DC source that is not input is a battery: a load that charges or discharges.
  const auto sourceWave = [](const Device& d) -> const Waveform* {
    if (auto* v = dynamic_cast<const VoltageSource*>(&d)) return &v->waveform();
    if (auto* i = dynamic_cast<const CurrentSource*>(&d)) return &i->waveform();
    return nullptr;
  };
  bool anyAlternating = false;
  for (const auto& d : c.devices())
    if (const Waveform* w = sourceWave(*d); w && w->frequency() > 0.0) anyAlternating = true;
  double vrms = 0, irms = 0, charging = 0, discharging = 0;
  std::string firstVoltageInput;
  for (const auto& d : c.devices()) {
    const auto& term = d->terminals();
    const bool isLoad = nl.output.given && d->name() == nl.output.load;
    const Waveform* wave = sourceWave(*d);
    if (isLoad) {
      if (wave) o.loadState = o.outputPower >= 0.0 ? "charging" : "discharging";
      continue;
    }
    const double p = r.has("p:" + d->name()) ? measure::mean(t, r["p:" + d->name()], w0, w1) : 0;
    if (wave) {
      const bool input = !nl.output.input.empty() ? d->name() == nl.output.input
                                                  : !anyAlternating || wave->frequency() > 0.0;
      if (input) {
        o.inputs.push_back(d->name());
        o.inputPower += -p;
        if (vrms == 0.0 && dynamic_cast<const VoltageSource*>(d.get())) {
          vrms = measure::rms(t, r[fmt::format("v:{},{}", vname(c, term[0]), vname(c, term[1]))],
                              w0, w1);
          irms = measure::rms(t, r["i:" + d->name()], w0, w1);
          firstVoltageInput = d->name();
        }
      } else {
        BatteryFigures b{d->name(), measure::mean(t, r["i:" + d->name()], w0, w1), p,
                         p >= 0.0 ? "charging" : "discharging"};
        (p >= 0.0 ? charging : discharging) += std::abs(p);
        o.batteries.push_back(b);
      }
    } else if (r.has("p:" + d->name()) && !dynamic_cast<const HeatSource*>(d.get())) {
      o.losses.push_back({d->name(), std::string(d->kind()), p});
    }
    if (dynamic_cast<const Transformer*>(d.get()) && !o.hasTransformer) {
      o.hasTransformer = true;
      o.secondaryRmsCurrent = measure::rms(t, r["i2:" + d->name()], w0, w1);
      o.secondaryVA =
          o.secondaryRmsCurrent *
          measure::rms(t, r[fmt::format("v:{},{}", vname(c, term[2]), vname(c, term[3]))], w0, w1);
    }
  }
  const double supplied = std::max(0.0, o.inputPower) + discharging;
  const double useful = std::max(0.0, o.outputPower) + charging;
  o.efficiency = supplied > 0 && o.outputPower > 0 ? useful / supplied : 0.0;
  o.powerFactor = vrms * irms > 0 ? o.inputPower / (vrms * irms) : 0.0;
  if (nl.output.meter()) {
    // A moving-coil movement deflects with the mean of its current; the scale is marked in the
    // rms of a sine, so it reads range x mean / full-scale current.
    MeterFigures m;
    m.fullScale = nl.output.fullScale;
    m.range = nl.output.range;
    m.accuracyClass = nl.output.accuracyClass;
    m.movement = nl.output.load;
    m.source = firstVoltageInput;
    m.atInput.frequency = rep.frequency;
    m.atInput.rms = vrms;
    m.atInput.reading = m.range * std::abs(o.loadCurrent) / m.fullScale;
    m.atInput.error = (m.atInput.reading - vrms) / m.range;
    rep.meter = std::move(m);
  }
  if (o.loadState == "discharging")
    rep.warnings.push_back(fmt::format(
        "the load {} is a battery that discharges ({:.3g} A out of it): the supply does not "
        "charge it; check the mains, the transformer's tap and the rectifier",
        nl.output.load, std::abs(o.loadCurrent)));
  for (const auto& b : o.batteries)
    if (b.state == "discharging")
      rep.warnings.push_back(fmt::format("battery {} discharges: it delivers {:.3g} W ({:.3g} A)",
                                         b.name, -b.power, std::abs(b.current)));

  // Rectifiers: stacks joined at a node (ground included) work into the same load, so both
  // halves of a doubler, the four arms of a bridge and paralleled stacks are judged alike. A
  // rectifier works into a capacitive load when a capacitor connects to any of its stacks'
  // terminals other than ground.
  std::vector<const Stack*> stacks;
  for (const auto& d : c.devices())
    if (const auto* st = dynamic_cast<const Stack*>(d.get())) stacks.push_back(st);
  // The thermal network at steady state under the settled heat: each stack's mean
  // dissipation into its heat node, the heat sources at their power. A plate on a node settles
  // above the node's steady temperature, not the ambient's.
  std::map<std::string, double> nodeHeat;
  for (const Stack* st : stacks)
    if (!st->heatNode().empty())
      nodeHeat[st->heatNode()] += measure::mean(t, r["pfwd:" + st->name()], w0, w1) +
                                  measure::mean(t, r["prev:" + st->name()], w0, w1);
  const std::map<std::string, double> nodeRise = steadyHeatNodeRises(c, nodeHeat);
  for (const auto& d : c.devices())
    if (const auto* hn = dynamic_cast<const HeatNode*>(d.get())) {
      HeatNodeFigures f;
      f.name = hn->name();
      f.temperatureEnd = r["temp:" + f.name].back();
      f.temperatureSteady = c.ambient() + nodeRise.at(f.name);
      f.heatIn = nodeHeat.count(f.name) ? nodeHeat.at(f.name) : 0.0;
      for (const auto& e : c.devices())
        if (const auto* hs = dynamic_cast<const HeatSource*>(e.get()); hs && hs->node() == f.name)
          f.heatIn += hs->power();
      rep.heatNodes.push_back(std::move(f));
    }
  std::vector<std::size_t> group(stacks.size());
  for (std::size_t k = 0; k < stacks.size(); ++k) group[k] = k;
  const auto root = [&](std::size_t k) {
    while (group[k] != k) k = group[k] = group[group[k]];
    return k;
  };
  for (std::size_t a = 0; a < stacks.size(); ++a)
    for (std::size_t b = a + 1; b < stacks.size(); ++b)
      for (NodeId na : stacks[a]->terminals())
        for (NodeId nb : stacks[b]->terminals())
          if (na == nb) group[root(a)] = root(b);
  std::vector<bool> groupCapacitive(stacks.size(), false);
  for (const auto& e : c.devices())
    if (dynamic_cast<const Capacitor*>(e.get()) || dynamic_cast<const Electrolytic*>(e.get()))
      for (NodeId n : e->terminals())
        for (std::size_t k = 0; k < stacks.size(); ++k)
          for (NodeId m : stacks[k]->terminals())
            if (n != kGround && n == m) groupCapacitive[root(k)] = true;

  // Stacks.
  for (std::size_t index = 0; index < stacks.size(); ++index) {
    const Stack* st = stacks[index];
    const PlateType& pt = st->type();
    StackFigures s;
    for (std::size_t k = 0; k < stacks.size(); ++k)
      if (root(k) == root(index))
        s.rectifier += (s.rectifier.empty() ? "" : " ") + stacks[k]->name();
    s.name = st->name();
    s.type = pt.name;
    s.material = pt.material;
    s.plates = st->options().plates;
    s.arms = st->options().arms;
    s.mode = st->options().mode == StackMode::Lumped ? "lumped" : "per-plate";
    bool capacitive = groupCapacitive[root(index)];
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
    // Over every recorded row, including those a decimated or bounded run did not keep.
    const Extent ie = r.extent("i:" + n);
    s.surgePeak = std::max(std::abs(ie.min), std::abs(ie.max));
    s.surgeKnown = !periodicBasis;

    const double ta = c.ambient(), tmax = pt.ratings.maxPlateTemperature,
                 tref = pt.ratings.ambientReference;
    const double derate = ta <= tref ? 1.0 : std::clamp((tmax - ta) / (tmax - tref), 0.0, 1.0);
    s.densityRating = pt.ratings.currentDensity * derate;
    s.powerForward = measure::mean(t, r["pfwd:" + n], w0, w1);
    s.powerReverse = measure::mean(t, r["prev:" + n], w0, w1);
    s.powerPerPlate = (s.powerForward + s.powerReverse) / st->plateCount();
    s.temperatureEnd = r["temp:" + n].back();
    // Steady state of the hottest plate: its own average dissipation through its heat path
    // (neighbours at the same temperature exchange nothing), on top of the ambient or of its
    // heat node's steady temperature.
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
    const double base = st->heatNode().empty() ? ta : ta + nodeRise.at(st->heatNode());
    const double steady = std::max(base + s.powerPerPlate * rth, ta + hottestRise);
    s.noSteadyState = !(steady < s.destructionTemperature);
    s.temperatureSteady = s.noSteadyState ? s.destructionTemperature : steady;
    s.temperatureLimit = tmax;
    double armTotal = 0.0;
    for (int m = 1; m <= s.arms; ++m) {
      s.armShare.push_back(measure::mean(t, r[fmt::format("iarm:{}#{}", n, m)], w0, w1));
      armTotal += s.armShare.back();
    }
    for (double& a : s.armShare) a = armTotal != 0.0 ? a / armTotal : 1.0 / s.arms;
    // The busiest arm is judged: its plates carry more than the average.
    s.densityAverage = s.currentAverage * *std::max_element(s.armShare.begin(), s.armShare.end()) /
                       pt.physics.areaCm2;
    s.formingStart = r.extent("form:" + n).first;
    s.formingEnd = r["form:" + n].back();

    s.verdicts.push_back(
        judgeFigure("peak reverse voltage per plate", s.peakReverse, s.peakRating, "V",
                    "largest reverse voltage on any plate against the type's peak rating"));
    s.verdicts.push_back(
        judgeFigure("rms reverse voltage per plate", s.rmsReverse, s.rmsRating, "V",
                    fmt::format("sine-equivalent rms (peak / {}) against the rms rating "
                                "for a {} load",
                                capacitive ? "2 sqrt 2" : "sqrt 2", s.loadKind)));
    s.verdicts.push_back(judgeFigure(
        "average forward current density", s.densityAverage * 1e3, s.densityRating * 1e3, "mA/cm2",
        "average forward current of the busiest arm over the plate area against the "
        "rated density, derated linearly to zero at the plate limit above the "
        "reference ambient"));
    const Verdict tv = judgeFigure(
        "plate temperature rise (steady-state estimate)", s.temperatureSteady - ta, tmax - ta, "K",
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
    for (const auto& v : s.verdicts)
      if (rank(v.level) > rank(s.worst)) s.worst = v.level;
    rep.stacks.push_back(std::move(s));
  }
  // Paralleled stacks: the same anode and cathode nodes; each one's share of their current.
  for (std::size_t a = 0; a < stacks.size(); ++a) {
    double sum = 0.0;
    std::string names;
    for (std::size_t b = 0; b < stacks.size(); ++b)
      if (stacks[b]->terminals() == stacks[a]->terminals()) {
        sum += rep.stacks[b].currentAverage;
        names += (names.empty() ? "" : " ") + stacks[b]->name();
      }
    rep.stacks[a].paralleled = names;
    rep.stacks[a].parallelShare = sum > 0.0 ? rep.stacks[a].currentAverage / sum : 1.0;
  }
  // Electrolytics and thermistors against their own ratings.
  for (const auto& d : c.devices()) {
    PartFigures part{d->name(), std::string(d->kind()), {}};
    if (const auto* e = dynamic_cast<const Electrolytic*>(d.get())) {
      const auto& term = e->terminals();
      const auto& v = r[fmt::format("v:{},{}", vname(c, term[0]), vname(c, term[1]))];
      const auto& i = r["i:" + e->name()];
      part.verdicts.push_back(
          judgeFigure("peak voltage", measure::maximum(t, v, w0, w1), e->params().ratedVoltage, "V",
                      "largest voltage across the capacitor against its DC working voltage"));
      if (measure::minimum(t, v, w0, w1) < -1.0)
        rep.warnings.push_back(fmt::format(
            "{}: the electrolytic is reversed by {:.3g} V; a polarised capacitor takes no more "
            "than about 1 V reversed: check its polarity",
            e->name(), -measure::minimum(t, v, w0, w1)));
      if (e->params().rippleCurrent > 0.0) {
        const double mean = measure::mean(t, i, w0, w1);
        std::vector<double> ac(i.size());
        std::transform(i.begin(), i.end(), ac.begin(), [&](double x) { return x - mean; });
        part.verdicts.push_back(judgeFigure(
            "rms ripple current", measure::rms(t, ac, w0, w1), e->params().rippleCurrent, "A",
            "rms of the capacitor current less its mean against the "
            "rated ripple current"));
      }
      if (e->initialForming() < 0.9)
        rep.warnings.push_back(fmt::format(
            "{}: the electrolytic starts deformed (forming state {:.2f}): its leakage is high "
            "until it re-forms; re-form it first at a limited current, raising the voltage "
            "slowly, and watch for heat",
            e->name(), e->initialForming()));
    } else if (const auto* th = dynamic_cast<const Thermistor*>(d.get())) {
      if (th->params().maxCurrent > 0.0)
        part.verdicts.push_back(judgeFigure("rms current",
                                            measure::rms(t, r["i:" + th->name()], w0, w1),
                                            th->params().maxCurrent, "A",
                                            "rms current over the settled window against the "
                                            "thermistor's rated steady-state current"));
    }
    if (part.verdicts.empty()) continue;
    for (const auto& v : part.verdicts)
      if (v.level != "ok")
        rep.warnings.push_back(fmt::format(
            "{}: {} is {:.3g} {}, {} the {:.3g} {} limit ({})", part.name, v.figure, v.value,
            v.unit, v.level == "exceeds" ? "above" : "close to", v.limit, v.unit, v.rule));
    rep.parts.push_back(std::move(part));
  }
  for (const auto& s : rep.stacks)
    for (const auto& v : s.verdicts)
      if (rank(v.level) > rank(rep.worst)) rep.worst = v.level;
  for (const auto& s : rep.parts)
    for (const auto& v : s.verdicts)
      if (rank(v.level) > rank(rep.worst)) rep.worst = v.level;
  judgeMeter(rep, nl.output.load);
  rep.failures = r.failures();
  if (!rep.failures.empty()) rep.worst = "fails";
  if (r.failed())
    rep.warnings.insert(rep.warnings.begin(),
                        fmt::format("the run stopped at {:.4g} s, where a plate was destroyed: the "
                                    "figures cover the run up to there",
                                    end));

  rep.cautions = safetyCautions(hazardsOf(nl, &r));
  rep.disclaimer = simulationDisclaimer();
  return rep;
}

void judgeMeter(SupplyReport& rep, const std::string& load) {
  if (!rep.meter) return;
  const MeterFigures& m = *rep.meter;
  const double limit = m.accuracyClass / 100.0 * m.range;
  const std::string rule = fmt::format(
      "|reading - true rms| against accuracy class {:g}: {:g} % of the {:g} V range (IEC "
      "60051-1, the error as a percentage of the fiducial value)",
      m.accuracyClass, m.accuracyClass, m.range);
  PartFigures part{load, "meter", {}};
  part.verdicts.push_back(judgeFigure(
      "reading error at the input", std::abs(m.atInput.reading - m.atInput.rms), limit, "V", rule));
  if (!m.levels.empty()) {
    const auto worst = std::max_element(m.levels.begin(), m.levels.end(), [](auto& a, auto& b) {
      return std::abs(a.error) < std::abs(b.error);
    });
    part.verdicts.push_back(judgeFigure(
        fmt::format("largest reading error over the range (at {:.3g} V rms)", worst->rms),
        std::abs(worst->reading - worst->rms), limit, "V", rule));
  }
  // Judged again after a sweep: the verdicts and warnings of the first judgement go.
  std::erase_if(rep.parts, [&](const PartFigures& p) { return p.kind == "meter"; });
  const std::string prefix = fmt::format("meter {}: ", load);
  std::erase_if(rep.warnings, [&](const std::string& w) { return w.starts_with(prefix); });
  for (const auto& v : part.verdicts) {
    if (rank(v.level) > rank(rep.worst)) rep.worst = v.level;
    if (v.level != "ok")
      rep.warnings.push_back(fmt::format(
          "{}{} is {:.3g} {}, {} the {:.3g} {} limit ({})", prefix, v.figure, v.value, v.unit,
          v.level == "exceeds" ? "above" : "close to", v.limit, v.unit, v.rule));
  }
  rep.parts.push_back(std::move(part));
}

Hazards hazardsOf(const Netlist& nl, const Result* r) {
  // Thresholds: the extra-low-voltage band ends at 50 V AC rms and 120 V ripple-free DC (IEC
  // 61140, docs/sources.md); a capacitor holding more than 1 J can burn and startle (common
  // practice).
  constexpr double kAcRms = 50.0, kDc = 120.0, kCapVolts = 50.0, kCapJoules = 1.0;
  const Circuit& c = nl.circuit;
  Hazards h;
  bool transformer = false;
  for (const auto& d : c.devices()) {
    if (const auto* st = dynamic_cast<const Stack*>(d.get()))
      h.selenium = h.selenium || st->type().material == "selenium";
    transformer = transformer || dynamic_cast<const Transformer*>(d.get()) != nullptr;
    h.valves = h.valves || d->kind() == "valve load";
    const Waveform* w = nullptr;
    if (auto* v = dynamic_cast<const VoltageSource*>(d.get())) w = &v->waveform();
    if (auto* i = dynamic_cast<const CurrentSource*>(d.get())) w = &i->waveform();
    if (w && dynamic_cast<const VoltageSource*>(d.get())) {
      // The source's largest EMF: over the run when recorded (a mains switched on late, a
      // schedule), else over its first second.
      double peak = 0.0;
      const auto& t = d->terminals();
      const std::string sig = fmt::format("v:{},{}", c.nodeName(t[0]), c.nodeName(t[1]));
      if (r && r->has(sig)) {
        const Extent e = r->extent(sig);
        peak = std::max(std::abs(e.min), std::abs(e.max));
      } else
        for (int k = 0; k <= 2000; ++k) peak = std::max(peak, std::abs(w->value(k / 2000.0)));
      const bool alternating = w->frequency() > 0.0;
      if (alternating ? peak / std::numbers::sqrt2 > kAcRms : peak > kDc) h.mains = true;
      h.battery = h.battery || (!alternating && peak <= kDc);
    }
  }
  h.transformerless = h.mains && !transformer;
  for (const auto& d : c.devices()) {
    if (!dynamic_cast<const Capacitor*>(d.get()) && !dynamic_cast<const Electrolytic*>(d.get()))
      continue;
    const auto& t = d->terminals();
    const std::string sig = fmt::format("v:{},{}", c.nodeName(t[0]), c.nodeName(t[1]));
    double v = 0.0;
    if (r && r->has(sig)) {
      const Extent e = r->extent(sig);
      v = std::max(std::abs(e.min), std::abs(e.max));
    } else
      v = h.mains || h.valves ? kCapVolts + 1.0 : 0.0;  // not run: assume the worst when HT
    const double farad = d->parameter("capacitance");
    if (v > kCapVolts || 0.5 * farad * v * v > kCapJoules) h.chargedCapacitors = true;
  }
  return h;
}

std::vector<std::string> safetyCautions(const Hazards& h) {
  std::vector<std::string> c;
  if (h.selenium)
    c.push_back(
        "An overheated or failing selenium rectifier releases toxic fumes with a strong foul "
        "smell (the smell is no safe warning): switch off, ventilate, leave the room, do not "
        "inhale, let it cool, and dispose of the plates as hazardous waste (they contain "
        "selenium and cadmium).");
  if (h.mains || h.valves)
    c.push_back(std::string("Mains") +
                (h.valves ? " and the high voltages of valve equipment" : "") + " can kill." +
                (h.transformerless
                     ? " This circuit has no mains transformer: the chassis can be live; work "
                       "through an isolation transformer."
                     : " Work with the set unplugged, or through an isolation transformer."));
  if (h.chargedCapacitors)
    c.push_back(
        "Reservoir and filter capacitors stay charged after switch-off: discharge them through a "
        "resistor and check with a meter before touching.");
  if (h.battery)
    c.push_back(
        "A charging lead-acid battery gives off hydrogen, which explodes with a spark: ventilate, "
        "connect the clamps before switching the charger on and disconnect them after switching "
        "it off; a short circuit across a battery melts tools and rings; acid burns (wear "
        "goggles).");
  c.push_back(
      "Work on live equipment only where you must, with one hand, and know where the switch "
      "is.");
  return c;
}

std::vector<std::string> safetyCautions(bool selenium) {
  Hazards h = Hazards::all();
  h.selenium = selenium;
  return safetyCautions(h);
}

std::string simulationDisclaimer() {
  return "These figures are a simulation to plan work. They are no substitute for local "
         "electrical codes, the equipment maker's data or a qualified technician; model values "
         "are typical, and old parts differ widely.";
}

}  // namespace disc
