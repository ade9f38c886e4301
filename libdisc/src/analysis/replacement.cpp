// Silicon replacement design. The netlist's text is rewritten (each stack statement becomes a
// diode and a resistor, the original kept as a comment), so the replacement is a netlist a user
// can keep, read and run. The resistor is found by bracketed regula falsi (Illinois variant)
// on the settled DC output with the transient engine in the loop.
#include "disc/replacement.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "disc/constants.hpp"
#include "disc/devices/diode.hpp"
#include "disc/devices/resistor.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/measures.hpp"
#include "disc/netlist.hpp"
#include "disc/preferred_values.hpp"
#include "disc/session.hpp"
#include "disc/supply_report.hpp"

#include "analysis/text_blocks.hpp"

namespace disc {
namespace {

constexpr int kMaxExtensions = 3;     // doublings of the run's stop time to settle
constexpr double kConduction = 0.05;  // of the peak: the stack conducts above this current
// The design compares DC levels to 0.1 %: at the default reltol 1e-3 the DC level on a large
// reservoir carries errors of about 0.3 % (docs/replacement.md), so the runs are tightened.
constexpr double kDesignRelTol = 1e-5;
constexpr double kRatings[] = {0.25, 0.5, 1, 2, 3, 5, 7, 10, 15, 20, 25, 50};  // W

struct Site {
  std::string name, anode, cathode, type;
  int plates = 1, arms = 1;
  int first = 0, last = 0;  // 0-based line range of the statement
  std::string diode, resistor, mid;
};

struct Figures {
  double output = 0, ripple = 0, surge = 0, dissipation = 0, peakReverse = 0;
  double loadCurrent = 0;  // A, settled mean magnitude
  double matched = 0;      // the quantity the design matches: output voltage or load current
  double resistorPower = 0;
  double diodeAverage = 0;  // A, largest settled average forward current of a diode
  double conductionDrop = 0, conductionCurrent = 0;  // averages while conducting, per stack
};

std::vector<std::string> splitLines(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) lines.push_back(line);
  return lines;
}

bool continues(const std::string& line) {
  auto end = line.find_last_not_of(" \t\r");
  return end != std::string::npos && line[end] == '\\';
}

/// Settled mean of v: per-cycle means at the end of the run and Aitken's delta-squared
/// extrapolation of their geometric approach (A. C. Aitken, 1926). `settled` is false when the
/// approach is not yet geometric or the extrapolation still moves the value by more than `tol`.
double settledMean(const std::vector<double>& t, const std::vector<double>& v, double f, double tol,
                   bool& settled) {
  const double end = t.back();
  const double period = f > 0 ? 1.0 / f : 0.1 * (end - t.front());
  const int cycles = static_cast<int>((end - t.front()) / period + 1e-9);
  const auto cycleMean = [&](int fromEnd) {
    return measure::mean(t, v, end - (fromEnd + 1) * period, end - fromEnd * period);
  };
  const double last = cycleMean(0);
  settled = false;
  if (cycles < 6) return last;
  const int s = std::max(1, cycles / 6);
  const double a = cycleMean(2 * s), b = cycleMean(s), c = last;
  const double d1 = b - a, d2 = c - b;
  const double scale = std::max(std::abs(c), 1e-12);
  // A geometric approach (Aitken's extrapolation) only where the window shows it: successive
  // differences shrinking by at least kMaxRatio. A nearly straight drift (a stack warming over
  // minutes) has a ratio near one, and its "limit" c + d2 r / (1 - r) would be a wild guess
  // far beyond the run; it counts as not settled instead.
  constexpr double kMaxRatio = 0.9;
  const bool geometric = d1 * d2 > 0 && std::abs(d2) <= kMaxRatio * std::abs(d1);
  if (std::abs(d2) <= 0.5 * tol * scale) {
    settled = true;
    return geometric ? c - d2 * d2 / (d2 - d1) : c;
  }
  if (geometric) {
    const double extrapolated = c - d2 * d2 / (d2 - d1);
    settled = std::abs(extrapolated - c) <= tol * scale;
    return extrapolated;
  }
  return c;
}

/// A target value with its unit ("240V", "240 V", "4.5A"); the unit must be the matched one.
double parseTargetValue(const std::string& text, const std::string& unit) {
  std::size_t used = 0;
  double v = NAN;
  try {
    v = std::stod(text, &used);
  } catch (const std::exception&) {
    used = 0;
  }
  std::string rest = text.substr(used);
  rest.erase(0, rest.find_first_not_of(' '));
  if (used == 0 || !(v > 0) || !std::isfinite(v) || (!rest.empty() && rest != unit))
    throw InputError(fmt::format(
        "replace: the target is formed, design, present or a value in {} (e.g. 240{}), got '{}'",
        unit, unit, text));
  return v;
}

class Designer {
 public:
  Designer(const std::string& text, std::string name, const ReplaceOptions& o)
      : lines_(splitLines(text)), name_(std::move(name)), o_(o) {
    Netlist nl = parseNetlist(text, name_);
    if (!nl.output.given)
      throw InputError(name_ +
                       ": the netlist names no output: add an `output` statement with "
                       "its load (the replacement must match the DC output there)");
    if (nl.analyses.empty() || nl.analyses.back().kind != AnalysisRequest::Kind::Transient)
      throw InputError(name_ +
                       ": the netlist's last analysis must be a transient (`run "
                       "transient stop=...`): the output is measured on it");
    load_ = nl.output.load;
    loadScalable_ = dynamic_cast<const Resistor*>(nl.circuit.find(load_)) != nullptr;
    // A battery pins the output voltage: a charger is matched on its charging current.
    byCurrent_ = dynamic_cast<const VoltageSource*>(nl.circuit.find(load_)) != nullptr;
    for (const auto& s : o.stacks) {
      const auto* st = dynamic_cast<const Stack*>(nl.circuit.find(s));
      if (!st) throw InputError(fmt::format("{}: no stack named '{}' in the netlist", name_, s));
      const auto where = nl.elementWhere.at(s);
      if (where.file != nl.path)
        throw InputError(
            fmt::format("{}: stack {} is written in the included file {}; replace "
                        "it there (or copy its statement into this file)",
                        name_, s, where.file));
      Site site;
      site.name = s;
      site.anode = nl.circuit.nodeName(st->terminals()[0]);
      site.cathode = nl.circuit.nodeName(st->terminals()[1]);
      site.type = st->type().name;
      site.plates = st->options().plates;
      site.arms = st->options().arms;
      site.first = where.line - 1;
      site.last = site.first;
      while (site.last + 1 < static_cast<int>(lines_.size()) && continues(lines_[site.last]))
        ++site.last;
      site.diode = freeName(nl, s + "_SI");
      site.resistor = freeName(nl, s + "_DROP");
      site.mid = s + "_X";
      while (nl.nodeRefs.count(site.mid)) site.mid += "X";
      sites_.push_back(site);
    }
    if (sites_.empty()) throw InputError("replace: name at least one stack to replace");
  }

  /// The netlist text: the original (`ohms` NaN), silicon alone (0) or silicon with a resistor.
  std::string text(double ohms, bool forRun) const {
    std::string out;
    const bool original = std::isnan(ohms);
    for (int k = 0; k < static_cast<int>(lines_.size()); ++k) {
      const Site* site = nullptr;
      for (const auto& s : sites_)
        if (k >= s.first && k <= s.last) site = &s;
      if (original || !site) {
        if (!original && isRecordOf(lines_[k])) {
          out += "# (replaced) " + lines_[k] + "\n";
          continue;
        }
        out += lines_[k] + "\n";
        continue;
      }
      out += "# " + lines_[k] + "\n";
      if (k != site->last) continue;
      out += fmt::format("# {}: {} x {} plates of {} replaced by silicon (disc replace)\n",
                         site->name, site->arms, site->plates, site->type);
      if (ohms > 0) {
        out += fmt::format("diode {} {} {}{}\n", site->diode, site->anode, site->mid, diodeWords());
        out += fmt::format("resistor {} {} {} {:.6g}ohm\n", site->resistor, site->mid,
                           site->cathode, ohms);
      } else {
        out += fmt::format("diode {} {} {}{}\n", site->diode, site->anode, site->cathode,
                           diodeWords());
      }
    }
    if (forRun) {
      // Signals the design reads, beyond the supply report's own.
      std::string rec = "record";
      for (const auto& s : sites_) {
        if (original) {
          rec += fmt::format(" vstack:{} i:{}", s.name, s.name);
        } else {
          rec += fmt::format(" i:{} p:{} v:{},{}", s.diode, s.diode, s.anode,
                             ohms > 0 ? s.mid : s.cathode);
          if (ohms > 0) rec += fmt::format(" p:{}", s.resistor);
        }
      }
      out += rec + "\n";
    }
    return out;
  }

  /// The state the original stacks are run in: as written, re-formed, or as new.
  enum class State { Present, Formed, Design };
  void setState(State s) { state_ = s; }

  Figures run(double ohms, double loadFraction) {
    for (;;) {
      Netlist nl = parseNetlist(text(ohms, true), name_);
      if (std::isnan(ohms) && state_ != State::Present)
        for (const auto& s : sites_) {
          auto& st = dynamic_cast<Stack&>(nl.circuit.at(s.name));
          StackOptions so = st.options();
          so.forming = 1.0;
          so.storedYears = 0.0;
          if (state_ == State::Design) so.ageHours = 0.0;
          st.setOptions(so);
        }
      auto& tr = nl.analyses.back().transient;
      tr.stop *= stopScale_;
      tr.tol.reltol = std::min(tr.tol.reltol, kDesignRelTol);
      if (loadFraction != 1.0) {
        auto& r = dynamic_cast<Resistor&>(nl.circuit.at(load_));
        r.setResistance(r.resistance() / loadFraction);
      }
      const std::string label = std::isnan(ohms) ? "original stacks"
                                : ohms > 0       ? fmt::format("silicon + {:.4g} ohm", ohms)
                                                 : std::string("silicon alone");
      if (o_.progress && !o_.progress(fmt::format("run {}: {} at {:.0f} % load", runs_ + 1, label,
                                                  100.0 * loadFraction)))
        throw Cancelled("replace: cancelled");
      if (ohms == 0.0) {
        const auto* diode = dynamic_cast<const Diode*>(nl.circuit.find(sites_.front().diode));
        if (diode) silicon_ = diode->params();
        siliconKelvin_ = nl.circuit.ambient();
      }
      const RunOutcome out = runNetlist(nl);
      ++runs_;
      if (std::isnan(ohms)) cautions_ = out.report.cautions;
      const Result& r = out.analyses.back().result;
      bool settled = false;
      Figures f;
      const std::string vout = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
      bool currentSettled = false;
      f.output = settledMean(r.time(), r[vout], out.report.frequency, o_.tolerance, settled);
      f.loadCurrent = std::abs(settledMean(r.time(), r["i:" + load_], out.report.frequency,
                                           o_.tolerance, currentSettled));
      f.matched = byCurrent_ ? f.loadCurrent : f.output;
      if (byCurrent_) settled = currentSettled;
      if (!settled && extensions_ < kMaxExtensions) {
        stopScale_ *= 2.0;
        ++extensions_;
        continue;
      }
      if (!settled)
        unsettled_ = fmt::format(
            "the output had not settled after {:.3g} s ({} runs): "
            "figures use an extrapolation; lengthen the netlist's run",
            tr.stop, runs_);
      f.ripple = out.report.output.ripplePeakToPeak;
      const double w0 = out.report.window0, w1 = out.report.window1;
      const auto& t = r.time();
      for (const auto& s : sites_) {
        if (std::isnan(ohms)) {
          for (const auto& st : out.report.stacks)
            if (st.name == s.name) {
              f.surge = std::max(f.surge, st.surgePeak);
              f.dissipation += st.powerForward + st.powerReverse;
            }
          // Over the last cycle: the settled window may reach back into the approach.
          const double c1 = t.back(),
                       c0 = c1 - (out.report.frequency > 0 ? 1.0 / out.report.frequency : w1 - w0);
          conduction(t, r["vstack:" + s.name], r["i:" + s.name], c0, c1, f);
        } else {
          const auto& i = r["i:" + s.diode];
          f.surge = std::max(f.surge, measure::maximum(t, i, t.front(), t.back()));
          f.diodeAverage = std::max(f.diodeAverage, measure::mean(t, i, w0, w1));
          f.dissipation += measure::mean(t, r["p:" + s.diode], w0, w1);
          const auto& v = r[fmt::format("v:{},{}", s.anode, ohms > 0 ? s.mid : s.cathode)];
          f.peakReverse = std::max(f.peakReverse, -measure::minimum(t, v, t.front(), t.back()));
          if (ohms > 0) {
            const double pr = measure::mean(t, r["p:" + s.resistor], w0, w1);
            f.dissipation += pr;
            f.resistorPower = std::max(f.resistorPower, pr);
          }
        }
      }
      const double n = static_cast<double>(sites_.size());
      f.conductionDrop /= n;
      f.conductionCurrent /= n;
      return f;
    }
  }

  /// Static forward drop of the silicon diode at `amps` (Shockley law with series resistance,
  /// at the circuit's ambient).
  double siliconDrop(double amps) const {
    const double vt = constants::thermalVoltage(siliconKelvin_);
    return silicon_.ideality * vt * std::log1p(amps / silicon_.saturationCurrent) +
           amps * silicon_.seriesResistance;
  }

  const DiodeParams& silicon() const { return silicon_; }
  /// The cautions of the original circuit's report (what the circuit contains).
  const std::vector<std::string>& cautions() const { return cautions_; }
  std::string diodeWords() const { return o_.diode.empty() ? "" : " " + o_.diode; }

  double stopScale() const { return stopScale_; }
  const std::string& load() const { return load_; }
  bool loadScalable() const { return loadScalable_; }
  bool byCurrent() const { return byCurrent_; }
  int runs() const { return runs_; }
  const std::string& unsettled() const { return unsettled_; }

 private:
  static std::string freeName(const Netlist& nl, std::string name) {
    while (nl.circuit.find(name)) name += "_";
    return name;
  }

  bool isRecordOf(const std::string& line) const {
    const auto first = line.find_first_not_of(" \t");
    if (first == std::string::npos || line.compare(first, 6, "record") != 0) return false;
    for (const auto& s : sites_)
      for (auto at = line.find(":" + s.name); at != std::string::npos;
           at = line.find(":" + s.name, at + 1)) {
        // The whole name (SR1, not the start of SR10), possibly with a plate index (#3).
        const auto end = at + 1 + s.name.size();
        if (end == line.size() || std::string(" \t,#").find(line[end]) != std::string::npos)
          return true;
      }
    return false;
  }

  /// Averages of drop and current while the rectifier conducts (above kConduction of its peak).
  static void conduction(const std::vector<double>& t, const std::vector<double>& v,
                         const std::vector<double>& i, double w0, double w1, Figures& f) {
    const double peak = measure::maximum(t, i, w0, w1);
    double sv = 0, si = 0, st = 0;
    for (std::size_t k = 1; k < t.size(); ++k) {
      if (t[k] <= w0 || t[k - 1] >= w1) continue;
      const double ik = 0.5 * (i[k] + i[k - 1]);
      if (ik <= kConduction * peak) continue;
      const double dt = t[k] - t[k - 1];
      sv += 0.5 * (v[k] + v[k - 1]) * dt;
      si += ik * dt;
      st += dt;
    }
    if (st > 0) {
      f.conductionDrop += sv / st;
      f.conductionCurrent += si / st;
    }
  }

  std::vector<std::string> lines_;
  std::string name_;
  const ReplaceOptions& o_;
  std::vector<Site> sites_;
  std::string load_;
  bool loadScalable_ = true;
  bool byCurrent_ = false;
  double stopScale_ = 1.0;
  int extensions_ = 0;
  int runs_ = 0;
  std::string unsettled_;
  State state_ = State::Formed;
  std::vector<std::string> cautions_;
  DiodeParams silicon_;
  double siliconKelvin_ = 300.0;
};

}  // namespace

void ReplaceOptions::validate() const {
  if (stacks.empty()) throw InputError("replace: name at least one stack to replace");
  for (std::size_t k = 0; k < stacks.size(); ++k)
    for (std::size_t j = k + 1; j < stacks.size(); ++j)
      if (stacks[k] == stacks[j])
        throw InputError("replace: stack '" + stacks[k] + "' is named twice");
  if (!(tolerance > 0 && tolerance <= 0.005))
    throw InputError("replace: the output tolerance must lie in (0, 0.005] (0.5 % at most)");
  for (double f : loadFractions)
    if (!(f > 0 && f <= 3))
      throw InputError("replace: load fractions must lie in (0, 3] (1 = the netlist's load)");
  if (!(diodeCurrentRating > 0 && diodeSurgeRating > 0))
    throw InputError("replace: the diode's current and surge ratings must be positive (A)");
  if (!(pivFactor >= 1 && surgeFactor >= 1 && powerMargin >= 1))
    throw InputError("replace: the safety factors must be at least 1");
}

double resistorRatingFor(double watts) {
  for (double r : kRatings)
    if (r >= watts) return r;
  throw InputError(
      fmt::format("a dropping resistor dissipating {:.3g} W needs more than the "
                  "largest common rating (50 W): use a bucking winding or series "
                  "diodes instead",
                  watts));
}

ReplacementDesign designReplacement(const std::string& text, const std::string& name,
                                    const ReplaceOptions& o) {
  o.validate();
  Designer d(text, name, o);
  ReplacementDesign r;
  r.file = name;
  r.stacks = o.stacks;
  r.loadName = d.load();
  r.loadScalable = d.loadScalable();
  r.pivFactor = o.pivFactor;
  r.surgeFactor = o.surgeFactor;
  r.powerMargin = o.powerMargin;
  r.quantity = d.byCurrent() ? "load current" : "output voltage";
  r.unit = d.byCurrent() ? "A" : "V";
  double targetValue = NAN;
  if (o.target == "formed" || o.target == "design" || o.target == "present") {
    r.targetKind = o.target;
    d.setState(o.target == "present"  ? Designer::State::Present
               : o.target == "design" ? Designer::State::Design
                                      : Designer::State::Formed);
  } else {
    r.targetKind = "value";
    d.setState(Designer::State::Present);
    targetValue = parseTargetValue(o.target, r.unit);
  }

  // The search runs at one run length; when a candidate needs a longer run to settle, the
  // target is measured again at that length and the search repeated.
  Figures original, alone;
  std::string noResistor;
  for (int attempt = 0;; ++attempt) {
    const double scale = d.stopScale();
    r.resistorExact = r.outputExact = 0.0;
    original = d.run(NAN, 1.0);
    r.target = std::isnan(targetValue) ? original.matched : targetValue;
    alone = d.run(0.0, 1.0);
    r.siliconAlone = alone.matched;
    // Rule of thumb (common practice): the resistor makes up the difference between the stack's
    // and the diode's drops, averaged while the stack conducts, at its average conduction current.
    if (original.conductionCurrent > 0)
      r.handEstimate =
          std::max(0.0, (original.conductionDrop - d.siliconDrop(original.conductionCurrent)) /
                            original.conductionCurrent);
    const double tol = o.tolerance * std::abs(r.target);
    noResistor.clear();
    if (alone.matched <= r.target + tol) {
      noResistor = (fmt::format(
          "silicon alone gives {:.4g} {}, not above the original {:.4g} {}: no dropping resistor "
          "is needed",
          alone.matched, r.unit, r.target, r.unit));
    } else {
      // Output falls as R rises: lo keeps output above the target, hi below.
      double lo = 0, flo = alone.matched - r.target;
      double hi = std::max(r.handEstimate, 1.0), fhi = d.run(hi, 1.0).matched - r.target;
      for (int grow = 0; fhi > 0 && grow < 12; ++grow) {
        lo = hi;
        flo = fhi;
        hi *= 2.0;
        fhi = d.run(hi, 1.0).matched - r.target;
      }
      if (fhi > 0)
        throw Error(
            fmt::format("replace: no resistor up to {:.4g} ohm brings the output down to "
                        "{:.4g} V",
                        hi, r.target));
      double best = std::abs(flo) < std::abs(fhi) ? lo : hi;
      double fbest = std::abs(flo) < std::abs(fhi) ? flo : fhi;
      int side = 0;
      for (int it = 0; it < 30 && std::abs(fbest) > tol; ++it) {
        const double x = hi - fhi * (hi - lo) / (fhi - flo);
        const double fx = d.run(x, 1.0).matched - r.target;
        if (std::abs(fx) < std::abs(fbest)) {
          best = x;
          fbest = fx;
        }
        if (fx > 0) {
          lo = x;
          flo = fx;
          if (side == -1) fhi *= 0.5;  // Illinois: halve the stale end's value
          side = -1;
        } else {
          hi = x;
          fhi = fx;
          if (side == 1) flo *= 0.5;
          side = 1;
        }
      }
      r.resistorExact = best;
      r.outputExact = r.target + fbest;
    }
    if (d.stopScale() == scale || attempt >= 3) break;
  }
  if (!noResistor.empty()) r.warnings.push_back(noResistor);
  if (r.targetKind == "formed" || r.targetKind == "design") {
    d.setState(Designer::State::Present);
    r.present = d.run(NAN, 1.0).matched;
    d.setState(r.targetKind == "design" ? Designer::State::Design : Designer::State::Formed);
    if (std::abs(r.present - r.target) > o.tolerance * std::abs(r.target))
      r.warnings.push_back(fmt::format(
          "the stacks as the netlist describes them give {:.4g} {}; {} they give {:.4g} {}: the "
          "replacement aims at that (--target present aims at the present value)",
          r.present, r.unit, r.targetKind == "design" ? "as new" : "re-formed", r.target, r.unit));
  } else {
    r.present = original.matched;
  }

  double chosen = 0;
  Figures full;
  if (r.resistorExact > 0) {
    r.e12 = nearestPreferred(r.resistorExact, ESeries::E12);
    r.e24 = nearestPreferred(r.resistorExact, ESeries::E24);
    r.outputE12 = d.run(r.e12, 1.0).matched;
    full = d.run(r.e24, 1.0);
    r.outputE24 = full.matched;
    chosen = r.e24;
    r.resistorPower = full.resistorPower;
    r.resistorRating = resistorRatingFor(o.powerMargin * full.resistorPower);
  } else {
    full = alone;
  }
  r.peakReverse = full.peakReverse;
  r.pivRequired = o.pivFactor * full.peakReverse;
  r.surgeSimulated = full.surge;
  r.surgeRequired = o.surgeFactor * full.surge;
  r.diodeCurrent = full.diodeAverage;
  const DiodeParams& si = d.silicon();
  if (si.breakdownVoltage > 0)
    r.verdicts.push_back(judgeFigure(
        "diode reverse voltage", r.pivRequired, si.breakdownVoltage, "V",
        fmt::format("{}x the simulated peak reverse voltage against the diode's breakdown voltage",
                    o.pivFactor)));
  r.verdicts.push_back(judgeFigure("diode average forward current", r.diodeCurrent,
                                   o.diodeCurrentRating, "A",
                                   "settled average forward current against the diode's rating"));
  r.verdicts.push_back(
      judgeFigure("diode surge current", r.surgeRequired, o.diodeSurgeRating, "A",
                  fmt::format("{}x the simulated switch-on peak against the diode's surge rating",
                              o.surgeFactor)));
  if (r.resistorRating > 0)
    r.verdicts.push_back(
        judgeFigure("dropping resistor dissipation", r.resistorPower, r.resistorRating, "W",
                    fmt::format("dissipation at full load against the chosen rating ({}x margin)",
                                o.powerMargin)));
  for (const auto& v : r.verdicts)
    if (v.level != "ok")
      r.warnings.push_back(
          fmt::format("{} is {:.3g} {}, {} the {:.3g} {} limit ({}): choose a "
                      "larger part",
                      v.figure, v.value, v.unit, v.level == "exceeds" ? "above" : "close to",
                      v.limit, v.unit, v.rule));

  for (double frac : o.loadFractions) {
    if (frac != 1.0 && !r.loadScalable) continue;
    const Figures a = frac == 1.0 ? original : d.run(NAN, frac);
    const Figures b = frac == 1.0 ? full : d.run(chosen, frac);
    r.rows.push_back({frac, a.output, b.output, a.loadCurrent, b.loadCurrent, a.ripple, b.ripple,
                      a.surge, b.surge, a.dissipation, b.dissipation});
  }
  if (!r.loadScalable)
    r.warnings.push_back(
        fmt::format("the load {} is not a resistor: the table shows the "
                    "netlist's load only",
                    r.loadName));
  if (!d.unsettled().empty()) r.warnings.push_back(d.unsettled());
  r.netlist = fmt::format(
                  "# Silicon replacement for {} in {}, designed by disc replace: each stack became "
                  "a silicon diode\n# and a {:.3g} ohm (E24) dropping resistor rated {:.3g} W "
                  "or more. Original lines are kept as comments.\n",
                  fmt::join(o.stacks, ", "), name, chosen, r.resistorRating) +
              d.text(chosen, false);
  r.runs = d.runs();
  r.cautions = d.cautions();
  r.cautions.push_back(
      "Fit the replacement with the set unplugged and the capacitors discharged; check the "
      "diode's polarity (band = cathode, the + DC side) and measure the output on first power-up "
      "through a variac or a series lamp.");
  r.disclaimer = simulationDisclaimer();
  return r;
}

ReplacementDesign designReplacementFile(const std::string& path, const ReplaceOptions& o) {
  std::ifstream f(path, std::ios::binary);
  if (!f) throw InputError(fmt::format("cannot read the netlist '{}'", path));
  std::ostringstream text;
  text << f.rdbuf();
  return designReplacement(text.str(), path, o);
}

std::string replacementText(const ReplacementDesign& r) {
  std::string s =
      fmt::format("SILICON REPLACEMENT for {} in {}\n", fmt::join(r.stacks, ", "), r.file);
  s += fmt::format(
      "  matched quantity:              {} at {}{}\n", r.quantity, r.loadName,
      r.unit == "A" ? " (a battery pins the voltage: the charging current is matched)" : "");
  s += fmt::format("  target ({}):{:<{}}{:9.4g} {}\n", r.targetKind, "",
                   std::max<int>(1, 22 - static_cast<int>(r.targetKind.size())), r.target, r.unit);
  if (r.targetKind != "present")
    s += fmt::format("  original as described:         {:9.4g} {}\n", r.present, r.unit);
  s += fmt::format("  silicon alone (no resistor):   {:9.4g} {} ({:+.3g} {})\n", r.siliconAlone,
                   r.unit, r.siliconAlone - r.target, r.unit);
  if (r.resistorExact > 0) {
    s += fmt::format("  dropping resistor per stack:   {:9.4g} ohm -> {:.4g} {} ({:+.2f} %)\n",
                     r.resistorExact, r.outputExact, r.unit,
                     100.0 * (r.outputExact / r.target - 1.0));
    s += fmt::format("  hand estimate (average drops): {:9.4g} ohm (rule of thumb)\n",
                     r.handEstimate);
    s += fmt::format("  nearest E12 (IEC 60063):       {:9.3g} ohm -> {:.4g} {}\n", r.e12,
                     r.outputE12, r.unit);
    s += fmt::format("  nearest E24 (IEC 60063):       {:9.3g} ohm -> {:.4g} {}  (chosen)\n", r.e24,
                     r.outputE24, r.unit);
    s += fmt::format(
        "  resistor dissipation:          {:9.3f} W -> rate it {:.3g} W or more "
        "({}x margin)\n",
        r.resistorPower, r.resistorRating, r.powerMargin);
  }
  s += fmt::format(
      "  diode repetitive peak reverse: {:9.1f} V or more ({}x the simulated {:.1f} "
      "V; common practice)\n",
      r.pivRequired, r.pivFactor, r.peakReverse);
  s += fmt::format(
      "  diode surge current:           {:9.2f} A or more ({}x the simulated "
      "switch-on peak {:.2f} A)\n",
      r.surgeRequired, r.surgeFactor, r.surgeSimulated);
  if (!r.verdicts.empty()) s += "\nSILICON PARTS\n";
  for (const auto& v : r.verdicts)
    s += fmt::format("  [{:<8}] {}: {:.3g} {} (limit {:.3g} {})\n", v.level, v.figure, v.value,
                     v.unit, v.limit, v.unit);
  s += "\nORIGINAL AGAINST REPLACEMENT\n";
  s += fmt::format("  {:>6} {:>9} {:>9} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8}\n", "load",
                   "out orig", "out new", "I orig", "I new", "rip orig", "rip new", "surge o",
                   "surge n", "diss o", "diss n");
  s += fmt::format("  {:>6} {:>9} {:>9} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8}\n", "%",
                   "V", "V", "A", "A", "V pp", "V pp", "A", "A", "W", "W");
  for (const auto& row : r.rows)
    s += fmt::format(
        "  {:6.0f} {:9.3f} {:9.3f} {:8.4f} {:8.4f} {:8.3f} {:8.3f} {:8.3f} {:8.3f} {:8.3f} "
        "{:8.3f}\n",
        100.0 * row.loadFraction, row.outputOriginal, row.outputReplacement, row.currentOriginal,
        row.currentReplacement, row.rippleOriginal, row.rippleReplacement, row.surgeOriginal,
        row.surgeReplacement, row.dissipationOriginal, row.dissipationReplacement);
  s += detail::closingBlock(r.warnings, r.cautions, r.disclaimer);
  return s;
}

std::string replacementJson(const ReplacementDesign& r) {
  nlohmann::json j;
  j["schema"] = 1;
  j["kind"] = "silicon-replacement";
  j["file"] = r.file;
  j["stacks"] = r.stacks;
  j["load"] = r.loadName;
  j["matched_quantity"] = r.quantity;
  j["matched_unit"] = r.unit;
  j["target"] = r.target;
  j["target_kind"] = r.targetKind;
  j["present"] = r.present;
  j["diode_current_A"] = r.diodeCurrent;
  auto& verdicts = j["verdicts"] = nlohmann::json::array();
  for (const auto& v : r.verdicts)
    verdicts.push_back({{"figure", v.figure},
                        {"value", v.value},
                        {"limit", v.limit},
                        {"unit", v.unit},
                        {"level", v.level},
                        {"rule", v.rule}});
  j["silicon_alone"] = r.siliconAlone;
  j["resistor_exact_ohm"] = r.resistorExact;
  j["matched_exact"] = r.outputExact;
  j["hand_estimate_ohm"] = r.handEstimate;
  j["e12_ohm"] = r.e12;
  j["e24_ohm"] = r.e24;
  j["matched_e12"] = r.outputE12;
  j["matched_e24"] = r.outputE24;
  j["resistor_power_W"] = r.resistorPower;
  j["resistor_rating_W"] = r.resistorRating;
  j["power_margin"] = r.powerMargin;
  j["peak_reverse_V"] = r.peakReverse;
  j["piv_required_V"] = r.pivRequired;
  j["piv_factor"] = r.pivFactor;
  j["surge_simulated_A"] = r.surgeSimulated;
  j["surge_required_A"] = r.surgeRequired;
  j["surge_factor"] = r.surgeFactor;
  auto& rows = j["rows"] = nlohmann::json::array();
  for (const auto& x : r.rows)
    rows.push_back({{"load_fraction", x.loadFraction},
                    {"output_original_V", x.outputOriginal},
                    {"output_replacement_V", x.outputReplacement},
                    {"load_current_original_A", x.currentOriginal},
                    {"load_current_replacement_A", x.currentReplacement},
                    {"ripple_original_Vpp", x.rippleOriginal},
                    {"ripple_replacement_Vpp", x.rippleReplacement},
                    {"surge_original_A", x.surgeOriginal},
                    {"surge_replacement_A", x.surgeReplacement},
                    {"dissipation_original_W", x.dissipationOriginal},
                    {"dissipation_replacement_W", x.dissipationReplacement}});
  j["warnings"] = r.warnings;
  j["cautions"] = r.cautions;
  j["disclaimer"] = r.disclaimer;
  j["runs"] = r.runs;
  j["netlist"] = r.netlist;
  return j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
}

}  // namespace disc
