// The power-up planner: a variac schedule found by trying each step in the warm-up envelope.
#include "disc/power_up.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "disc/devices/electrolytic.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/error.hpp"
#include "disc/failure.hpp"
#include "disc/session.hpp"

namespace disc {

void PowerUpOptions::validate() const {
  if (stack.empty()) throw InputError("power-up: name the stack to bring up");
  if (!(margin > 0.0 && margin <= 1.0))
    throw InputError("power-up: the margin must be in (0, 1], e.g. 0.9 (90 % of each limit)");
  if (!(firstLevel > 0.0 && firstLevel <= 1.0) || !(smallestStep > 0.0 && smallestStep <= 1.0))
    throw InputError("power-up: the first level and the smallest step are fractions in (0, 1]");
  if (!(turn >= 0.0) || !(minHold > 0.0) || !(maxHold >= minHold))
    throw InputError("power-up: need turn >= 0 and 0 < min-hold <= max-hold (seconds)");
  if (!(settleLeakage > 0.0) || !(settleTemperature > 0.0) || !(maxTotal > 0.0) || maxSteps < 1 ||
      !(maxSlowStep > 0.0))
    throw InputError(
        "power-up: settling rates, the longest time, steps and slow step must be "
        "positive");
}

namespace {

constexpr double kMinute = 60.0;

/// What one envelope run of a schedule found, per slow step and as a whole.
struct Row {
  double t = 0, leak = 0, hottest = 0, reversePerPlate = 0, forming = 1;
  std::vector<double> caps;  ///< V, each electrolytic's highest voltage over the period
};

struct Trial {
  std::vector<Row> rows;
  bool inside = true;    ///< every limit at margin, no failure, a periodic state everywhere
  std::string brokenBy;  ///< what ended it outside
  bool settled = false;  ///< the last step settled before its longest hold
  double endTime = 0;
  EnvelopeStats stats;
  Result lastPeriod;
};

/// The planner's fixed view of the circuit: source, stack, limits.
class Planner {
 public:
  Planner(const Netlist& nl, const PowerUpOptions& o) : nl_(nl), o_(o) {
    o.validate();
    const Device* d = nl.circuit.find(o.stack);
    stack_ = d ? dynamic_cast<const Stack*>(d) : nullptr;
    if (!stack_)
      throw InputError(fmt::format("power-up: '{}' is not a stack of {}", o.stack, nl.path));
    if (o.source.empty()) {
      for (const auto& dev : nl.circuit.devices())
        if (const auto* v = dynamic_cast<const VoltageSource*>(dev.get());
            v && v->waveform().isSine()) {
          if (!source_.empty())
            throw InputError(
                fmt::format("power-up: {} has more than one sine source ({} and {}): "
                            "name the variac-fed one",
                            nl.path, source_, v->name()));
          source_ = v->name();
        }
      if (source_.empty())
        throw InputError(
            fmt::format("power-up: {} has no sine voltage source to turn up", nl.path));
    } else {
      source_ = o.source;
      const Device* s = nl.circuit.find(source_);
      if (!s || !dynamic_cast<const VoltageSource*>(s))
        throw InputError(
            fmt::format("power-up: '{}' is not a voltage source of {}", source_, nl.path));
    }
    const auto* v = dynamic_cast<const VoltageSource*>(nl.circuit.find(source_));
    sine_ = v->waveform().isSine();
    full_ = sine_ ? v->waveform().amplitude() / std::sqrt(2.0) : v->waveform().offset();
    if (!(full_ > 0.0))
      throw InputError(
          fmt::format("power-up: source {} has no positive level to turn up", source_));
    const PlateType& pt = stack_->type();
    ambient_ = nl.circuit.ambient();
    tmax_ = pt.ratings.maxPlateTemperature;
    reverseLimit_ = (tmax_ - ambient_) / (pt.thermal.rth / stack_->options().cooling);
    if (!(tmax_ > ambient_))
      throw InputError(
          fmt::format("power-up: the ambient is at or above {}'s plate limit", o.stack));
    for (const auto& dev : nl.circuit.devices())
      if (const auto* e = dynamic_cast<const Electrolytic*>(dev.get())) {
        const auto& t = e->terminals();
        caps_.push_back(
            {fmt::format("v:{},{}", nl.circuit.nodeName(t[0]), nl.circuit.nodeName(t[1])),
             e->name(), e->params().ratedVoltage});
      }
  }

  /// Runs switch-on through `points` (time, fraction of full) to `end` in the envelope; from
  /// `holdFrom` on it ends the run when the step has settled.
  Trial run(const std::vector<std::pair<double, double>>& points, double end, double holdFrom) {
    if (o_.progress &&
        !o_.progress(fmt::format("power-up: trying {:.0f} % of {:.4g} {} ({} runs so far)",
                                 100 * points.back().second, full_, unit(), runs_)))
      throw Cancelled("power-up planning cancelled");
    ++runs_;
    Netlist nl = nl_;
    auto* src = dynamic_cast<VoltageSource*>(nl.circuit.find(source_));
    Waveform w = src->waveform();
    w.schedule(points);
    src->setWaveform(w);
    EnvelopeOptions eo;
    eo.duration = end;
    eo.maxStep = std::min(o_.maxSlowStep, end);
    eo.record = {"irev:" + o_.stack, "temp:" + o_.stack, "prev:" + o_.stack, "form:" + o_.stack};
    eo.periodic.record = runSignals(nl, eo.record);
    for (const auto& c : caps_)
      if (std::find(eo.periodic.record.begin(), eo.periodic.record.end(), c.signal) ==
          eo.periodic.record.end())
        eo.periodic.record.push_back(c.signal);
    Trial tr;
    const int plates = stack_->plateCount();
    eo.onPeriod = [&](double t, const Result& p) {
      Row r;
      r.t = t;
      r.leak = mean(p, "irev:" + o_.stack);
      r.hottest = peak(p, "temp:" + o_.stack);
      r.reversePerPlate = mean(p, "prev:" + o_.stack) / plates;
      r.forming = p["form:" + o_.stack].back();
      double worstCap = 0.0;
      for (const auto& c : caps_) {
        r.caps.push_back(peak(p, c.signal));
        worstCap = std::max(worstCap, r.caps.back() / c.rating);
      }
      tr.rows.push_back(r);
      tr.lastPeriod = p;
      tr.lastPeriod.stats().method = "periodic";  // one settled period, as the report expects
      if (r.hottest - ambient_ > o_.margin * (tmax_ - ambient_))
        return outside(tr, "the hottest plate's temperature");
      if (r.reversePerPlate > o_.margin * reverseLimit_)
        return outside(tr, "the plates' reverse dissipation");
      if (worstCap > o_.margin) return outside(tr, "an electrolytic's voltage rating");
      if (t >= holdFrom + o_.minHold && tr.rows.size() >= 2) {
        const Row& a = tr.rows[tr.rows.size() - 2];
        const double minutes = (t - a.t) / kMinute;
        if (a.t >= holdFrom && minutes > 0.0) {
          const double dl = std::abs(r.leak - a.leak) / std::max(r.leak, 1e-12) / minutes;
          const double dt = std::abs(r.hottest - a.hottest) / minutes;
          if (dl < o_.settleLeakage && dt < o_.settleTemperature) {
            tr.settled = true;
            return false;
          }
        }
      }
      return true;
    };
    // A ConvergenceError goes to the caller: a circuit with no settled cycle is no plan's
    // answer (a runaway without one ends the envelope as a failure, judged below).
    EnvelopeResult er = warmUp(nl.circuit, eo);
    tr.endTime = er.endTime;
    tr.stats = er.stats;
    if (!er.failures.empty()) {
      tr.inside = false;
      tr.brokenBy = failureVerdicts({er.failures.front()}).front();
    }
    return tr;
  }

  std::string unit() const { return sine_ ? "V rms" : "V"; }
  double full() const { return full_; }
  double ambient() const { return ambient_; }
  int runs() const { return runs_; }
  const std::string& source() const { return source_; }

  std::vector<PowerUpLimit> limits() const {
    std::vector<PowerUpLimit> l;
    l.push_back({o_.stack + ": hottest plate temperature", "degC", 0, tmax_ - 273.15,
                 ambient_ - 273.15 + o_.margin * (tmax_ - ambient_),
                 "the plate type's rated temperature; the margin applies to the rise above "
                 "ambient"});
    l.push_back({o_.stack + ": reverse dissipation of the average plate", "W", 0, reverseLimit_,
                 o_.margin * reverseLimit_,
                 "the heat one plate sheds through its heat path at its rated temperature, "
                 "(T_max - T_ambient) / R_th: leakage heat alone must not need more"});
    for (const auto& c : caps_)
      l.push_back({c.name + ": peak voltage", "V", 0, c.rating, o_.margin * c.rating,
                   "the electrolytic's DC working voltage"});
    return l;
  }

 private:
  struct Cap {
    std::string signal, name;
    double rating;
  };
  static double mean(const Result& p, const std::string& s) {
    const auto& t = p.time();
    const auto& v = p[s];
    double a = 0.0;
    for (std::size_t k = 1; k < t.size(); ++k) a += 0.5 * (v[k] + v[k - 1]) * (t[k] - t[k - 1]);
    return t.size() > 1 ? a / (t.back() - t.front()) : v.front();
  }
  static double peak(const Result& p, const std::string& s) {
    const auto& v = p[s];
    return *std::max_element(v.begin(), v.end());
  }
  static bool outside(Trial& tr, const std::string& what) {
    tr.inside = false;
    tr.brokenBy = what;
    return false;
  }
  const Netlist& nl_;
  const PowerUpOptions& o_;
  const Stack* stack_ = nullptr;
  std::string source_;
  bool sine_ = true;
  double full_ = 0, ambient_ = 0, tmax_ = 0, reverseLimit_ = 0;
  std::vector<Cap> caps_;
  int runs_ = 0;
};

/// The candidate levels from `from` (fractions of full): the whole way, then halving the
/// remaining way down to the smallest step; from zero the lowest is the first level.
std::vector<double> candidates(double from, const PowerUpOptions& o) {
  std::vector<double> c;
  const double lowest = from == 0.0 ? o.firstLevel : std::min(1.0, from + o.smallestStep);
  for (double gap = 1.0 - from; from + gap > lowest + 1e-9; gap /= 2) c.push_back(from + gap);
  c.push_back(lowest);
  return c;
}

}  // namespace

PowerUpPlan planPowerUp(const Netlist& nl, const PowerUpOptions& o) {
  Planner pl(nl, o);
  PowerUpPlan plan;
  plan.title = nl.title;
  plan.file = nl.path;
  plan.stack = o.stack;
  plan.source = pl.source();
  plan.levelUnit = pl.unit();
  plan.full = pl.full();
  plan.ambient = pl.ambient();
  plan.margin = o.margin;
  plan.settleLeakage = o.settleLeakage;
  plan.settleTemperature = o.settleTemperature;
  plan.limits = pl.limits();

  std::vector<std::pair<double, double>> points;  // (s, fraction of full)
  double now = 0.0, level = 0.0;
  std::string lastBroken;
  while (level < 1.0) {
    if (static_cast<int>(plan.steps.size()) >= o.maxSteps || now >= o.maxTotal) {
      plan.verdict = "replace";
      plan.reasons.push_back(fmt::format(
          "after {} in {} steps the stack has reached only {:.0f} % of the full voltage: a "
          "selenium stack that will not re-form within a few hours at reduced voltage is "
          "replaced, not re-formed further (common practice)",
          formatDuration(now), plan.steps.size(), 100 * level));
      break;
    }
    // Whole volts below on the dial: what a variac's scale can be set to.
    auto dial = [&](double next) {
      return next >= 1.0 ? 1.0 : std::max(std::floor(next * pl.full()) / pl.full(), 1e-3);
    };
    auto attempt = [&](double f, Trial& tr, std::vector<std::pair<double, double>>& p) {
      p = points;
      const double at = points.empty() ? 0.0 : now + o.turn;
      p.push_back({at, f});
      tr = pl.run(p, std::min(at + o.maxHold, o.maxTotal + o.maxHold), at);
      if (!tr.inside) lastBroken = tr.brokenBy;
      return tr.inside;
    };
    bool taken = false;
    double f = 0.0, failedAt = 0.0;
    Trial tr;
    std::vector<std::pair<double, double>> p;
    for (double next : candidates(level, o)) {
      const double c = dial(next);
      if (c <= level) continue;
      if (attempt(c, tr, p)) {
        f = c;
        taken = true;
        break;
      }
      failedAt = c;
    }
    // Bisect between the increase that stays inside and the one that did not, to within the
    // smallest step: the schedule is about as short as the limits allow.
    while (taken && failedAt > 0.0 && failedAt - f > o.smallestStep) {
      const double c = dial(0.5 * (f + failedAt));
      if (c <= f || c >= failedAt) break;
      Trial t2;
      std::vector<std::pair<double, double>> p2;
      if (attempt(c, t2, p2)) {
        f = c;
        tr = std::move(t2);
        p = std::move(p2);
      } else {
        failedAt = c;
      }
    }
    if (taken) {
      const double volts = std::floor(f * pl.full());
      PowerUpStep s;
      s.fraction = f;
      s.level = f == 1.0 ? pl.full() : volts;
      s.start = now;
      s.duration = tr.endTime - now;
      s.settled = tr.settled;
      bool first = true;
      for (const Row& r : tr.rows) {
        if (r.t < now) continue;
        if (first) s.leakageStart = r.leak;
        first = false;
        s.hottest = std::max(s.hottest, r.hottest);
        s.reversePerPlate = std::max(s.reversePerPlate, r.reversePerPlate);
        for (double v : r.caps) s.capacitorVoltage = std::max(s.capacitorVoltage, v);
        s.leakageEnd = r.leak;
        s.formingEnd = r.forming;
      }
      points = p;
      points.push_back({tr.endTime, f});
      now = tr.endTime;
      level = f;
      plan.steps.push_back(s);
    }
    if (!taken) {
      plan.verdict = "replace";
      plan.reasons.push_back(
          plan.steps.empty()
              ? fmt::format("even {:.0f} % of the full voltage takes {} past its limit ({}): a "
                            "stack that overheats at a tenth of its working voltage leaks too "
                            "much to re-form; replace it (common practice)",
                            100 * o.firstLevel, lastBroken, o.stack)
              : fmt::format("at {:.0f} % of the full voltage no further increase stays inside "
                            "the limits ({}): the stack cannot be brought up to its working "
                            "voltage; replace it (common practice)",
                            100 * level, lastBroken));
      break;
    }
  }
  plan.totalTime = now;
  // The schedule in netlist words, variac levels in the source's own unit.
  std::string sched;
  for (const auto& [t, f] : points)
    sched += fmt::format("{}{:.6g}s {:.4g}V", sched.empty() ? "" : ", ", t, f * pl.full());
  plan.schedule = sched;

  // The whole schedule once more from switch-on, with no early end: the verification.
  if (!plan.steps.empty()) {
    Trial tr = pl.run(points, std::max(now, 1.0), std::numeric_limits<double>::infinity());
    plan.verified = tr.inside;
    plan.verification = tr.stats;
    for (const Row& r : tr.rows) {
      plan.limits[0].peak = std::max(plan.limits[0].peak, r.hottest - 273.15);
      plan.limits[1].peak = std::max(plan.limits[1].peak, r.reversePerPlate);
      for (std::size_t k = 0; k < r.caps.size(); ++k)
        plan.limits[2 + k].peak = std::max(plan.limits[2 + k].peak, r.caps[k]);
    }
    if (!tr.inside)
      plan.reasons.push_back("the verification run left the limits (" + tr.brokenBy +
                             "): do not follow this schedule");
    if (plan.verdict == "re-form" && nl.output.given && !tr.lastPeriod.time().empty()) {
      const SupplyReport rep = makeSupplyReport(nl, tr.lastPeriod);
      plan.warnings = rep.warnings;
      for (const auto& st : rep.stacks)
        if (st.name == o.stack &&
            st.temperatureSteady - plan.ambient > o.margin * (st.temperatureLimit - plan.ambient)) {
          plan.verdict = "replace";
          plan.reasons.push_back(
              "re-formed, at full voltage the stack still heats towards its limit: replace it "
              "(common practice)");
        }
    }
  }
  plan.envelopeRuns = pl.runs();
  Hazards h = hazardsOf(nl, nullptr);
  h.selenium = h.selenium || nl.circuit.find(o.stack) != nullptr;
  plan.cautions = safetyCautions(h);
  plan.cautions.push_back(
      "Re-form with the set on a variac (through a series lamp if you have one) and a meter on "
      "the HT; stand by to turn it down: a plate that smells, crackles or smokes is failing and "
      "gives off selenium fumes: switch off, ventilate and replace the stack.");
  plan.disclaimer = simulationDisclaimer();
  return plan;
}

std::string powerUpText(const PowerUpPlan& p) {
  std::string s;
  auto line = [&](const std::string& l) { s += l + "\n"; };
  line(fmt::format("libdisc power-up plan: {}", p.title.empty() ? p.file : p.title));
  line(fmt::format(
      "file {}, stack {}, variac on {} (full {:.4g} {}), ambient {:.1f} degC, "
      "limits used to {:.0f} %",
      p.file, p.stack, p.source, p.full, p.levelUnit, p.ambient - 273.15, 100 * p.margin));
  line("");
  line(p.verdict == "replace" ? "VERDICT: replace the stack, do not re-form it"
                              : fmt::format("VERDICT: re-form it, following the schedule ({} in "
                                            "{} steps){}",
                                            formatDuration(p.totalTime), p.steps.size(),
                                            p.verified ? "" : " -- NOT verified"));
  for (const auto& r : p.reasons) line("  - " + r);
  if (!p.steps.empty()) {
    line("");
    line(fmt::format("{:>4} {:>10} {:>9} {:>11} {:>17} {:>11} {:>10} {:>8}", "step", "set to", "at",
                     "hold", "leakage mA", "hottest", "rev W/pl", "forming"));
    int k = 0;
    for (const auto& st : p.steps)
      line(
          fmt::format("{:>4} {:>6.0f} {:<3} {:>9} {:>11} {:>8.3g}->{:<8.3g} {:>7.1f} degC "
                      "{:>10.3g} {:>8.2f}",
                      ++k, st.level, p.levelUnit == "V rms" ? "Vac" : "V", formatDuration(st.start),
                      formatDuration(st.duration), 1e3 * st.leakageStart, 1e3 * st.leakageEnd,
                      st.hottest - 273.15, st.reversePerPlate, st.formingEnd));
    line(
        fmt::format("  Go on to the next step when the hold is over and the leakage on the meter "
                    "changes by less than {:.0f} % a minute (the stack warming by less than {:.2g} "
                    "K a minute), the stack no warmer than the table says; if it runs warmer or "
                    "the leakage rises, turn back one step.",
                    100 * p.settleLeakage, p.settleTemperature));
    line("  schedule=\"" + p.schedule + "\"");
  }
  line("");
  line("LIMITS (highest reached on the verified schedule)");
  for (const auto& l : p.limits)
    line(fmt::format("  {:<48} {:9.4g} of {:.4g} {} (allowed {:.4g})", l.what, l.peak, l.limit,
                     l.unit, l.allowed));
  if (!p.warnings.empty()) {
    line("");
    line("AT FULL VOLTAGE");
    for (const auto& w : p.warnings) line("  - " + w);
  }
  line("");
  line("SAFETY");
  for (const auto& c : p.cautions) line("  - " + c);
  line("");
  line(p.disclaimer);
  return s;
}

std::string powerUpJson(const PowerUpPlan& p) {
  nlohmann::json j;
  j["schema"] = 1;
  j["kind"] = "power-up-plan";
  j["title"] = p.title;
  j["file"] = p.file;
  j["stack"] = p.stack;
  j["source"] = p.source;
  j["level_unit"] = p.levelUnit;
  j["full_level"] = p.full;
  j["ambient_C"] = p.ambient - 273.15;
  j["margin"] = p.margin;
  j["settle_leakage_per_min"] = p.settleLeakage;
  j["settle_temperature_K_per_min"] = p.settleTemperature;
  j["verdict"] = p.verdict;
  j["reasons"] = p.reasons;
  j["verified"] = p.verified;
  j["total_time_s"] = p.totalTime;
  j["schedule"] = p.schedule;
  j["envelope_runs"] = p.envelopeRuns;
  auto& steps = j["steps"] = nlohmann::json::array();
  for (const auto& s : p.steps)
    steps.push_back({{"level", s.level},
                     {"fraction", s.fraction},
                     {"start_s", s.start},
                     {"duration_s", s.duration},
                     {"leakage_start_A", s.leakageStart},
                     {"leakage_end_A", s.leakageEnd},
                     {"hottest_plate_C", s.hottest - 273.15},
                     {"reverse_per_plate_W", s.reversePerPlate},
                     {"capacitor_peak_V", s.capacitorVoltage},
                     {"forming_end", s.formingEnd},
                     {"settled", s.settled}});
  auto& limits = j["limits"] = nlohmann::json::array();
  for (const auto& l : p.limits)
    limits.push_back({{"what", l.what},
                      {"unit", l.unit},
                      {"peak", l.peak},
                      {"limit", l.limit},
                      {"allowed", l.allowed},
                      {"rule", l.rule}});
  j["warnings"] = p.warnings;
  j["cautions"] = p.cautions;
  j["disclaimer"] = p.disclaimer;
  return j.dump(2) + "\n";
}

}  // namespace disc
