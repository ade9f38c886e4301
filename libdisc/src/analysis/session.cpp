// Running a netlist.
#include <fmt/format.h>
#include <algorithm>
#include <map>
#include <optional>

#include "disc/devices/stack.hpp"
#include "disc/devices/thermal.hpp"
#include "disc/session.hpp"

#include "disc/meter.hpp"

namespace disc {

std::vector<std::string> runSignals(const Netlist& nl, const std::vector<std::string>& extra) {
  std::vector<std::string> record;
  // A signal asked for twice is one column, in the place of its first mention.
  auto add = [&record](const std::string& s) {
    if (std::find(record.begin(), record.end(), s) == record.end()) record.push_back(s);
  };
  for (const auto& s : extra) add(s);
  for (const auto& s : nl.record) add(s);
  if (nl.output.given)
    for (const auto& s : reportSignals(nl)) add(s);
  return record;
}

namespace {

constexpr int kMaxPlateTraces = 12;  // plates per stack followed one by one, as in the report

bool feedsReport(AnalysisRequest::Kind k) {
  return k != AnalysisRequest::Kind::OperatingPoint;
}

/// A warm-up's series signals: the run's own, every slow state, and per stack its leakage
/// current and each plate's forming state.
std::vector<std::string> warmUpSignals(const Netlist& nl) {
  std::vector<std::string> s = runSignals(nl, {});
  auto add = [&s](const std::string& x) {
    if (std::find(s.begin(), s.end(), x) == s.end()) s.push_back(x);
  };
  for (const auto& d : nl.circuit.devices())
    if (const auto* st = dynamic_cast<const Stack*>(d.get())) {
      for (const char* q : {"temp", "form", "irev", "pfwd", "prev"})
        add(fmt::format("{}:{}", q, st->name()));
      const int traced = std::min(st->plateCount(), kMaxPlateTraces);
      for (int n = 1; n <= traced; ++n) {
        add(fmt::format("temp:{}#{}", st->name(), n));
        add(fmt::format("form:{}#{}", st->name(), n));
      }
    }
  return s;
}

/// Follows the supply report's verdicts over the slow steps and records where each first
/// reaches its limit (value / limit crossing 1, linear between steps).
class LimitWatch {
 public:
  void step(double t, const SupplyReport& rep) {
    for (const auto& st : rep.stacks) {
      for (const auto& v : st.verdicts)
        judge(st.name + ": " + v.figure, t, v.value, v.limit, v.unit);
      judge(st.name + ": hottest plate temperature", t, st.temperatureEnd - 273.15,
            st.temperatureLimit - 273.15, "degC");
    }
  }
  std::vector<LimitCrossing> crossings() const {
    std::vector<LimitCrossing> c = crossings_;
    std::sort(c.begin(), c.end(), [](const auto& a, const auto& b) { return a.time < b.time; });
    return c;
  }

 private:
  void judge(const std::string& what, double t, double value, double limit,
             const std::string& unit) {
    if (!(limit > 0.0) || done_.count(what)) return;
    const double ratio = value / limit;
    auto prev = last_.find(what);
    if (ratio >= 1.0) {
      double when = t;
      if (prev != last_.end() && prev->second.second < 1.0 && ratio > prev->second.second)
        when = prev->second.first + (1.0 - prev->second.second) / (ratio - prev->second.second) *
                                        (t - prev->second.first);
      crossings_.push_back({what, when, limit, unit});
      done_[what] = true;
    }
    last_[what] = {t, ratio};
  }
  std::map<std::string, std::pair<double, double>> last_;
  std::map<std::string, bool> done_;
  std::vector<LimitCrossing> crossings_;
};

void addTrends(const Netlist& nl, const Result& series, WarmUpSummary& w) {
  auto trend = [&](const std::string& what, const std::string& sig, double scale, double offset,
                   const std::string& unit) {
    if (!series.has(sig) || series.time().empty()) return;
    const auto& v = series[sig];
    w.trends.push_back({what, unit, v.front() * scale + offset, v.back() * scale + offset});
  };
  if (nl.output.given) {
    const std::string v = fmt::format("v:{},{}", nl.output.positive, nl.output.negative);
    trend("DC output", v, 1.0, 0.0, "V");
    if (series.has("max(" + v + ")") && !series.time().empty()) {
      const auto& hi = series["max(" + v + ")"];
      const auto& lo = series["min(" + v + ")"];
      w.trends.push_back(
          {"ripple peak-to-peak", "V", hi.front() - lo.front(), hi.back() - lo.back()});
    }
  }
  for (const auto& d : nl.circuit.devices())
    if (dynamic_cast<const HeatNode*>(d.get()))
      trend(d->name() + ": heat node temperature", "temp:" + d->name(), 1.0, -273.15, "degC");
  for (const auto& d : nl.circuit.devices())
    if (dynamic_cast<const Stack*>(d.get())) {
      const std::string n = d->name();
      trend(n + ": hottest plate", "temp:" + n, 1.0, -273.15, "degC");
      trend(n + ": lowest forming state", "form:" + n, 1.0, 0.0, "");
      trend(n + ": mean reverse (leakage) current", "irev:" + n, 1e3, 0.0, "mA");
      trend(n + ": forward dissipation", "pfwd:" + n, 1.0, 0.0, "W");
      trend(n + ": reverse dissipation", "prev:" + n, 1.0, 0.0, "W");
    }
}

}  // namespace

AnalysisOutcome warmUpAnalysis(const Netlist& nl, EnvelopeOptions o, SupplyReport* report) {
  AnalysisOutcome ao;
  ao.request.kind = AnalysisRequest::Kind::WarmUp;
  o.periodic.record = runSignals(nl, o.periodic.record);
  {
    std::vector<std::string> record = o.record;
    for (const auto& s : warmUpSignals(nl))
      if (std::find(record.begin(), record.end(), s) == record.end()) record.push_back(s);
    o.record = std::move(record);
  }
  ao.request.warmUp = o;
  ao.request.warmUp.progress = {};  // the request keeps no callback of the caller's
  LimitWatch limits;
  if (nl.output.given)
    o.onPeriod = [&](double t, const Result& period) {
      limits.step(t, makeSupplyReport(nl, period));
      return true;
    };
  EnvelopeResult er = warmUp(nl.circuit, o);
  WarmUpSummary& w = ao.warmUp;
  w.duration = o.duration;
  w.endTime = er.endTime;
  w.stoppedBy = er.stoppedBy;
  w.firstLimits = limits.crossings();
  w.failures = er.failures;
  w.stats = er.stats;
  addTrends(nl, er.series, w);
  ao.result = std::move(er.series);
  ao.result.failureEvents() = er.failures;
  if (report && nl.output.given) {
    *report = makeSupplyReport(nl, er.last.waveforms);
    report->failures = er.failures;
    if (!er.failures.empty()) report->worst = "fails";
    if (er.failed())
      report->warnings.insert(
          report->warnings.begin(),
          fmt::format("the warm-up stopped at {} where a plate was destroyed: the figures "
                      "are those of the last settled period before it",
                      formatDuration(er.endTime)));
    if (report->meter) sweepMeter(nl, *report);
  }
  return ao;
}

RunOutcome runNetlist(const Netlist& nl, std::function<bool(double, double)> progress,
                      StagedFolder* folder) {
  RunOutcome out;
  std::size_t lastReportable = nl.analyses.size();
  for (std::size_t k = 0; k < nl.analyses.size(); ++k)
    if (feedsReport(nl.analyses[k].kind)) lastReportable = k;
  const bool wantReport = nl.output.given && lastReportable < nl.analyses.size();
  for (std::size_t k = 0; k < nl.analyses.size(); ++k) {
    const AnalysisRequest& a = nl.analyses[k];
    const std::vector<std::string> record = runSignals(nl, {});
    const bool reports = wantReport && k == lastReportable;
    AnalysisOutcome ao{a, {}, {}};
    switch (a.kind) {
      case AnalysisRequest::Kind::OperatingPoint: {
        OperatingPointOptions o;
        o.record = record;
        ao.result = operatingPoint(nl.circuit, o);
        break;
      }
      case AnalysisRequest::Kind::Transient: {
        TransientOptions o = a.transient;
        o.record = record;
        o.progress = progress;
        std::optional<CsvFile> csv;
        if (folder) {
          csv.emplace(*folder, fmt::format("transient-{}.csv", k + 1));
          o.sink = &*csv;
          o.keepLast = reportSpan(nl, o);
          ao.streamed = true;
        }
        ao.result = transient(nl.circuit, o);
        if (reports) out.report = makeSupplyReport(nl, ao.result);
        break;
      }
      case AnalysisRequest::Kind::Periodic: {
        PeriodicOptions o = a.periodic;
        o.record = record;
        ao.result = periodicSteadyState(nl.circuit, o).waveforms;
        if (reports) out.report = makeSupplyReport(nl, ao.result);
        break;
      }
      case AnalysisRequest::Kind::WarmUp: {
        EnvelopeOptions o = a.warmUp;
        o.progress = progress;
        ao = warmUpAnalysis(nl, o, reports ? &out.report : nullptr);
        ao.request = a;
        break;
      }
    }
    // A meter's reading over its range and over frequency: each point its own periodic steady
    // state, so only for the run that makes the report.
    // (warmUpAnalysis sweeps its own.)
    if (reports && out.report.meter && a.kind != AnalysisRequest::Kind::WarmUp)
      sweepMeter(nl, out.report);
    out.analyses.push_back(std::move(ao));
    if (reports) {
      out.hasReport = true;
      out.reportAnalysis = out.analyses.size() - 1;
    }
  }
  return out;
}

std::string warmUpText(const WarmUpSummary& w) {
  std::string s;
  auto line = [&](const std::string& l) { s += l + "\n"; };
  line(fmt::format("WARM-UP over {} ({} slow steps, {} periodic steady states, {:.2f} s)",
                   formatDuration(w.duration), w.stats.slowSteps, w.stats.periodicSolves,
                   w.stats.wallSeconds));
  if (!w.stoppedBy.empty()) line("  stopped: " + w.stoppedBy);
  for (const auto& t : w.trends)
    line(fmt::format("  {:<40} {:10.4g} -> {:.4g} {}", t.what, t.start, t.end, t.unit));
  if (w.firstLimits.empty()) line("  no rating reached during the warm-up");
  for (const auto& c : w.firstLimits)
    line(fmt::format("  limit reached after {}: {} ({:.4g} {})", formatDuration(c.time), c.what,
                     c.limit, c.unit));
  return s;
}

}  // namespace disc
