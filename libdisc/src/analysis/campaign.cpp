// Campaigns: variants of one netlist, each built from (campaign seed, variant index) alone, run
// in parallel with oneTBB, one row of figures each.
#include "disc/campaign.hpp"

#include <fmt/format.h>
#include <tbb/global_control.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <numbers>

#include "analysis/text_fields.hpp"
#include "disc/devices/stack.hpp"
#include "disc/error.hpp"
#include "disc/measures.hpp"
#include "disc/periodic.hpp"
#include "disc/session.hpp"
#include "disc/supply_report.hpp"

namespace disc {

// ---- counter-based random numbers ------------------------------------------------------------

namespace {

// The 128-bit product of two 64-bit words in 32-bit halves (ISO C++ has no 128-bit integer).
inline std::uint64_t mulhi(std::uint64_t a, std::uint64_t b, std::uint64_t& lo) {
  const std::uint64_t a0 = a & 0xffffffffu, a1 = a >> 32, b0 = b & 0xffffffffu, b1 = b >> 32;
  const std::uint64_t p00 = a0 * b0, p01 = a0 * b1, p10 = a1 * b0, p11 = a1 * b1;
  const std::uint64_t mid = (p00 >> 32) + (p01 & 0xffffffffu) + (p10 & 0xffffffffu);
  lo = (mid << 32) | (p00 & 0xffffffffu);
  return p11 + (p01 >> 32) + (p10 >> 32) + (mid >> 32);
}

constexpr double kTwoPow53 = 9007199254740992.0;
// The generator's second key word: fixed, so that the campaign seed alone selects the stream.
constexpr std::uint64_t kKeyTag = 0x6469736363616d70ULL;
// Stream numbers: tolerances from 0, stacks' plate seeds from here.
constexpr std::uint64_t kPlateStreams = 1u << 20;

}  // namespace

std::array<std::uint64_t, 4> philox4x64(std::array<std::uint64_t, 4> c,
                                        std::array<std::uint64_t, 2> k) {
  // Multipliers and Weyl key increments of Philox4x64 (Salmon et al. 2011, table 2).
  constexpr std::uint64_t m0 = 0xD2E7470EE14C6C93ULL, m1 = 0xCA5A826395121157ULL;
  constexpr std::uint64_t w0 = 0x9E3779B97F4A7C15ULL, w1 = 0xBB67AE8584CAA73BULL;
  for (int round = 0; round < 10; ++round) {
    if (round > 0) {
      k[0] += w0;
      k[1] += w1;
    }
    std::uint64_t lo0, lo1;
    const std::uint64_t hi0 = mulhi(m0, c[0], lo0);
    const std::uint64_t hi1 = mulhi(m1, c[2], lo1);
    c = {hi1 ^ c[1] ^ k[0], lo1, hi0 ^ c[3] ^ k[1], lo0};
  }
  return c;
}

std::array<std::uint64_t, 4> VariantRandom::block(std::uint64_t k) const {
  return philox4x64({variant_, k, 0, 0}, {seed_, kKeyTag});
}

double VariantRandom::uniform(std::uint64_t k) const {
  return static_cast<double>(block(k)[0] >> 11) / kTwoPow53;
}

std::uint64_t VariantRandom::bits53(std::uint64_t k) const {
  return block(k)[0] >> 11;
}

double VariantRandom::normal(std::uint64_t k) const {
  const auto b = block(k);
  const double u1 = (static_cast<double>(b[0] >> 11) + 1.0) / kTwoPow53;  // (0, 1]: log finite
  const double u2 = static_cast<double>(b[1] >> 11) / kTwoPow53;
  return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
}

// ---- specification ---------------------------------------------------------------------------

std::size_t CampaignSpec::variants() const {
  std::size_t n = static_cast<std::size_t>(std::max(builds, 1));
  for (const auto& a : axes) n *= a.values.size();
  return n;
}

void CampaignSpec::validate() const {
  if (builds < 1 || builds > 100000000)
    throw InputError(fmt::format("a campaign needs 1 to 1e8 builds, got {}", builds));
  for (const auto& a : axes) {
    if (a.values.empty())
      throw InputError(fmt::format("the varied parameter {}.{} needs at least one value", a.element,
                                   a.parameter));
    for (double v : a.values)
      if (!std::isfinite(v))
        throw InputError(fmt::format("{}.{}: every value must be finite", a.element, a.parameter));
  }
  for (const auto& t : tolerances)
    if (!(t.lower <= t.upper) || !(t.lower > -1.0) || !std::isfinite(t.upper))
      throw InputError(fmt::format(
          "tolerance of {}.{}: give the band as lower <= upper with lower above -100 %, got "
          "{:+.4g} % to {:+.4g} %",
          t.element, t.parameter, 100 * t.lower, 100 * t.upper));
  // One column per varied parameter: a second axis or tolerance on it would be ambiguous.
  auto twice = [](const auto& list, std::size_t k) {
    for (std::size_t j = 0; j < k; ++j)
      if (list[j].element == list[k].element && list[j].parameter == list[k].parameter) return true;
    return false;
  };
  for (std::size_t k = 0; k < axes.size(); ++k)
    if (twice(axes, k))
      throw InputError(fmt::format("{}.{} is varied twice: give all its values in one vary",
                                   axes[k].element, axes[k].parameter));
  for (std::size_t k = 0; k < tolerances.size(); ++k)
    if (twice(tolerances, k))
      throw InputError(fmt::format("{}.{} has two tolerances: give it one band",
                                   tolerances[k].element, tolerances[k].parameter));
  if (variants() > 100000000)
    throw InputError(fmt::format("the campaign has {} variants; keep it below 1e8", variants()));
}

void CampaignOptions::validate() const {
  if (threads < 0) throw InputError("campaign: threads must be 0 (every core) or positive");
  if (!(stop >= 0.0) || !std::isfinite(stop))
    throw InputError("campaign: stop must be 0 (the netlist's run) or a positive time");
  if (!(reltol >= 0.0) || !(reltol < 1.0))
    throw InputError(
        fmt::format("campaign: reltol must be 0 (the netlist's) or in (0, 1), got {}", reltol));
}

// ---- the table -------------------------------------------------------------------------------

std::size_t CampaignTable::rows() const {
  if (columns.empty()) return 0;
  const auto& c = columns.front();
  return c.text ? c.words.size() : c.values.size();
}

bool CampaignTable::has(const std::string& name) const {
  return std::any_of(columns.begin(), columns.end(),
                     [&](const CampaignColumn& c) { return c.name == name; });
}

const CampaignColumn& CampaignTable::operator[](const std::string& name) const {
  for (const auto& c : columns)
    if (c.name == name) return c;
  std::string names;
  for (const auto& c : columns) names += (names.empty() ? "" : ", ") + c.name;
  throw InputError(fmt::format("the campaign table has no column '{}'; it has {}", name, names));
}

CampaignTable joinCampaignTables(const std::vector<CampaignTable>& parts) {
  CampaignTable out;
  for (const auto& p : parts) {
    if (p.columns.empty()) continue;
    if (out.columns.empty()) {
      out = p;
      continue;
    }
    if (p.columns.size() != out.columns.size())
      throw InputError("campaign tables to join have different columns");
    for (std::size_t k = 0; k < p.columns.size(); ++k) {
      auto& o = out.columns[k];
      const auto& c = p.columns[k];
      if (o.name != c.name) throw InputError("campaign tables to join have different columns");
      o.values.insert(o.values.end(), c.values.begin(), c.values.end());
      o.words.insert(o.words.end(), c.words.begin(), c.words.end());
    }
  }
  return out;
}

std::string campaignCsv(const CampaignTable& t) {
  // RFC 4180, as the result tables: a header record of "name [unit]" fields, then one record
  // per variant, each ended by CRLF; an empty field where a variant has no value.
  std::string out;
  for (std::size_t k = 0; k < t.columns.size(); ++k) {
    const auto& c = t.columns[k];
    out +=
        (k ? "," : "") + csvField(c.unit.empty() ? c.name : fmt::format("{} [{}]", c.name, c.unit));
  }
  out += "\r\n";
  for (std::size_t r = 0; r < t.rows(); ++r) {
    for (std::size_t k = 0; k < t.columns.size(); ++k) {
      const auto& c = t.columns[k];
      if (k) out += ',';
      if (c.text)
        out += csvField(c.words[r]);
      else if (std::isfinite(c.values[r]))
        out += fmt::format("{:.17g}", c.values[r]);  // round-trips: tables compare exactly
    }
    out += "\r\n";
  }
  return out;
}

// ---- running variants ------------------------------------------------------------------------

namespace {

std::string slug(const std::string& words) {
  std::string s;
  for (char ch : words) {
    if (std::isalnum(static_cast<unsigned char>(ch)))
      s += static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    else if (!s.empty() && s.back() != '_')
      s += '_';
  }
  while (!s.empty() && s.back() == '_') s.pop_back();
  return s;
}

std::string levelOf(double value, double limit) {
  // The supply report's rule: ok up to 90 % of the limit, marginal to 100 %, then exceeds.
  const double ratio = limit > 0.0 ? value / limit : 0.0;
  return ratio > 1.0 ? "exceeds" : ratio > 0.9 ? "marginal" : "ok";
}

int levelRank(const std::string& level) {
  return level == "exceeds" ? 2 : level == "marginal" ? 1 : 0;
}

bool hasSpread(const Stack& s) {
  const auto& sp = s.options().spread;
  return sp.js > 0.0 || sp.rs > 0.0 || sp.gsh > 0.0;
}

/// What one variant computes, and the columns that holds.
class Layout {
 public:
  Layout(const Netlist& nl, const CampaignSpec& spec) : nl_(nl), spec_(spec) {
    report_ = nl.output.given;
    for (const auto& a : nl.analyses)
      if (a.kind == AnalysisRequest::Kind::Transient) transient_ = a.transient;
    for (const auto& d : nl.circuit.devices())
      if (auto* s = dynamic_cast<const Stack*>(d.get())) stacks_.push_back(s);
    num("variant", "");
    num("grid", "");
    num("build", "");
    text("status");
    if (report_) text("basis");
    // A parameter both on the grid and toleranced: the grid value is its nominal.
    for (const auto& a : spec.axes) {
      const std::string name = a.element + "." + a.parameter;
      const bool drawn = std::any_of(spec.tolerances.begin(), spec.tolerances.end(), [&](auto& t) {
        return t.element == a.element && t.parameter == a.parameter;
      });
      num(drawn ? name + ".nominal" : name, unitOf(a.element, a.parameter));
    }
    for (const auto& t : spec.tolerances)
      num(t.element + "." + t.parameter, unitOf(t.element, t.parameter));
    if (spec.redrawPlates)
      for (const Stack* s : stacks_)
        if (hasSpread(*s)) num(s->name() + ".seed", "");
    if (report_) {
      for (const auto& f : kOutputFigures) num(std::string("output.") + f.name, f.unit);
      num("output.losses", "W");
      num("output.settled", "");
      num("failures", "");
      text("worst");
      for (const Stack* s : stacks_) {
        const std::string n = s->name();
        for (const auto& f : kStackFigures) num(n + "." + f.name, f.unit);
        for (const char* v : kVerdicts) {
          num(n + "." + v + ".ratio", "");
          text(n + "." + v);
        }
        if (s->options().arms > 1) {
          num(n + ".imbalance", "");
          for (int m = 1; m <= s->options().arms; ++m) {
            num(fmt::format("{}.arm{}.share", n, m), "");
            num(fmt::format("{}.arm{}.hottest", n, m), "K");
            text(fmt::format("{}.arm{}.verdict", n, m));
          }
        }
      }
    } else {
      for (const auto& sig : signals()) num(sig, "");
    }
  }

  /// Chooses the basis of the figures and, for the periodic one, finds the nominal circuit's
  /// settled period once: every variant's shooting starts from it (the same start whichever
  /// thread, range or worker runs the variant, so the rows do not depend on them).
  void prepare(const CampaignOptions& o) {
    if (o.reltol > 0.0) transient_.tol.reltol = o.reltol;
    if (!report_ || o.basis == CampaignBasis::Transient) return;
    if (o.basis == CampaignBasis::Automatic && o.stop > 0.0) return;  // a stop asks for a transient
    try {
      (void)circuitPeriod(nl_.circuit);
    } catch (const InputError& e) {
      if (o.basis == CampaignBasis::Periodic)
        throw InputError(fmt::format("campaign: no periodic basis: {}", e.what()));
      return;
    }
    periodic_ = true;
    try {
      orbit_ = periodicSteadyState(nl_.circuit, periodicOptions(nl_, {})).orbit;
    } catch (const Cancelled&) {
      throw;
    } catch (const Error& e) {
      // Each variant then tries its own periodic state from a warm-up, and says so if it too
      // fails.
      nominalFailure_ = e.what();
    }
  }

  CampaignTable emptyTable(std::size_t rows) const {
    CampaignTable t;
    for (const auto& c : columns_) {
      CampaignColumn col{c.name, c.unit, c.text, {}, {}};
      if (c.text)
        col.words.assign(rows, "");
      else
        col.values.assign(rows, std::numeric_limits<double>::quiet_NaN());
      t.columns.push_back(std::move(col));
    }
    return t;
  }

  /// Runs variant v and writes its row r of the table.
  void run(std::size_t v, CampaignTable& t, std::size_t r, const CampaignOptions& o) const {
    Writer w{t, r, 0};
    const std::size_t builds = static_cast<std::size_t>(spec_.builds);
    const std::size_t grid = v / builds;
    w.num(static_cast<double>(v));
    w.num(static_cast<double>(grid));
    w.num(static_cast<double>(v % builds));
    const std::size_t statusColumn = w.next++;
    const std::size_t basisColumn = report_ ? w.next++ : 0;
    Netlist variant = nl_;
    const VariantRandom rnd(spec_.seed, v);
    try {
      std::size_t rest = grid;
      std::vector<double> axisValue(spec_.axes.size());
      for (std::size_t k = spec_.axes.size(); k-- > 0;) {
        const auto& vals = spec_.axes[k].values;
        axisValue[k] = vals[rest % vals.size()];
        rest /= vals.size();
      }
      for (std::size_t k = 0; k < spec_.axes.size(); ++k) {
        const auto& a = spec_.axes[k];
        variant.circuit.at(a.element).setParameter(a.parameter, axisValue[k]);
        w.num(axisValue[k]);
      }
      for (std::size_t k = 0; k < spec_.tolerances.size(); ++k) {
        const auto& tol = spec_.tolerances[k];
        Device& d = variant.circuit.at(tol.element);
        const double u =
            tol.law == CampaignTolerance::Law::Uniform
                ? tol.lower + (tol.upper - tol.lower) * rnd.uniform(k)
                : 0.5 * (tol.lower + tol.upper) + (tol.upper - tol.lower) / 6.0 * rnd.normal(k);
        const double value = d.parameter(tol.parameter) * (1.0 + u);
        d.setParameter(tol.parameter, value);
        w.num(value);
      }
      if (spec_.redrawPlates)
        for (std::size_t k = 0; k < stacks_.size(); ++k) {
          if (!hasSpread(*stacks_[k])) continue;
          const double seed = static_cast<double>(rnd.bits53(kPlateStreams + k));
          variant.circuit.at(stacks_[k]->name()).setParameter("seed", seed);
          w.num(seed);
        }
      if (report_)
        runReport(variant, w, o, t.columns[basisColumn].words[r]);
      else
        runValues(variant, w);
      t.columns[statusColumn].words[r] = "ok";
    } catch (const Cancelled&) {
      throw;
    } catch (const Error& e) {
      // A variant that cannot be simulated is a finding, not the campaign's end: its row says
      // why, and its figures stay empty.
      t.columns[statusColumn].words[r] = fmt::format("failed: {}", e.what());
    }
  }

 private:
  // The supply report's figures as table columns: (name, unit, field).
  template <typename Figures>
  struct Figure {
    const char* name;
    const char* unit;
    double Figures::*member;
  };
  static constexpr Figure<OutputFigures> kOutputFigures[] = {
      {"mean", "V", &OutputFigures::mean},
      {"ripple_pp", "V", &OutputFigures::ripplePeakToPeak},
      {"ripple_rms", "V", &OutputFigures::rippleRms},
      {"load_current", "A", &OutputFigures::loadCurrent},
      {"power", "W", &OutputFigures::outputPower},
      {"efficiency", "", &OutputFigures::efficiency},
      {"power_factor", "", &OutputFigures::powerFactor},
      {"ripple_factor", "", &OutputFigures::rippleFactor},
      {"input_power", "W", &OutputFigures::inputPower},
      {"secondary_rms_current", "A", &OutputFigures::secondaryRmsCurrent},
      {"secondary_va", "VA", &OutputFigures::secondaryVA}};
  static constexpr Figure<StackFigures> kStackFigures[] = {
      {"peak_reverse", "V", &StackFigures::peakReverse},
      {"rms_reverse", "V", &StackFigures::rmsReverse},
      {"current_average", "A", &StackFigures::currentAverage},
      {"current_rms", "A", &StackFigures::currentRms},
      {"current_peak", "A", &StackFigures::currentPeak},
      {"density_busiest_arm", "A/cm2", &StackFigures::densityAverage},
      {"surge_peak", "A", &StackFigures::surgePeak},
      {"power_forward", "W", &StackFigures::powerForward},
      {"power_reverse", "W", &StackFigures::powerReverse},
      {"power_per_plate", "W", &StackFigures::powerPerPlate},
      {"forming_end", "", &StackFigures::formingEnd},
      {"hottest_end", "K", &StackFigures::temperatureEnd},
      {"hottest_steady", "K", &StackFigures::temperatureSteady}};
  static constexpr const char* kVerdicts[] = {
      "peak_reverse_voltage_per_plate", "rms_reverse_voltage_per_plate",
      "average_forward_current_density", "plate_temperature_rise_steady_state_estimate"};
  struct ColumnSpec {
    std::string name, unit;
    bool text;
  };
  struct Writer {
    CampaignTable& t;
    std::size_t row, next;
    void num(double v) { t.columns[next++].values[row] = v; }
    void word(std::string s) { t.columns[next++].words[row] = std::move(s); }
  };

  void num(std::string name, std::string unit) {
    columns_.push_back({std::move(name), std::move(unit), false});
  }
  void text(std::string name) { columns_.push_back({std::move(name), "", true}); }

  std::string unitOf(const std::string& element, const std::string& parameter) const {
    const Device* d = nl_.circuit.find(element);
    if (!d)
      throw InputError(fmt::format("the campaign varies '{}', which the circuit lacks", element));
    (void)d->parameter(parameter);  // throws, naming the parameters, if it has none such
    // The table has a column per arm and records every plate: its shape must not vary.
    if (dynamic_cast<const Stack*>(d) && (parameter == "plates" || parameter == "parallel"))
      throw InputError(fmt::format(
          "a campaign cannot vary {}.{}: the table's columns follow the stack's arms and plates; "
          "run one campaign per arrangement",
          element, parameter));
    return d->findParameter(parameter)->unit;
  }

  std::vector<std::string> signals() const {
    return nl_.record.empty() ? std::vector<std::string>{} : nl_.record;
  }

  TransientOptions transientOptions(const Netlist& variant, const CampaignOptions& o,
                                    std::vector<std::string> extra) const {
    TransientOptions to = transient_;
    if (!(to.stop > 0.0)) {
      to.stop = 1.0;
      to.start = Start::Cold;
    }
    if (o.stop > 0.0) to.stop = o.stop;
    to.recordFrom = 0.0;
    to.recordSpacing = 0.0;
    to.record = runSignals(variant, extra);
    // A variant's figures are its report's: its span at the end and the extents suffice, so a
    // long stop costs no memory on each of many threads.
    to.keepLast = reportSpan(variant, to);
    to.progress = {};
    return to;
  }

  PeriodicOptions periodicOptions(const Netlist& variant, std::vector<std::string> extra) const {
    PeriodicOptions po;
    po.tol = transient_.tol;  // the campaign's tolerance, as its transient would have
    po.record = runSignals(variant, extra);
    return po;
  }

  /// The variant's settled period: from the nominal orbit, else (it failed or there is none)
  /// from a warm-up of its own.
  Result settledPeriod(const Netlist& variant, const std::vector<std::string>& extra) const {
    PeriodicOptions po = periodicOptions(variant, extra);
    if (orbit_) {
      po.from = orbit_;
      try {
        return periodicSteadyState(variant.circuit, po).waveforms;
      } catch (const Cancelled&) {
        throw;
      } catch (const Error&) {
        po.from.reset();
      }
    }
    return periodicSteadyState(variant.circuit, po).waveforms;
  }

  void runReport(const Netlist& variant, Writer& w, const CampaignOptions& o,
                 std::string& basisWord) const {
    std::vector<std::string> extra;
    for (const Stack* s : stacks_)
      if (s->options().arms > 1)
        for (int k = 1; k <= s->plateCount(); ++k) {
          extra.push_back(fmt::format("temp:{}#{}", s->name(), k));
          extra.push_back(fmt::format("pplate:{}#{}", s->name(), k));
        }
    Result r;
    std::string basis = "transient";
    if (periodic_) {
      try {
        r = settledPeriod(variant, extra);
        basis = "periodic";
      } catch (const Cancelled&) {
        throw;
      } catch (const Error& e) {
        // The row says why its figures come from a transient (with its switch-on surge).
        basis = nominalFailure_.empty()
                    ? fmt::format("transient: no periodic steady state ({})", e.what())
                    : fmt::format(
                          "transient: no periodic steady state ({}; of the nominal circuit: {})",
                          e.what(), nominalFailure_);
      }
    }
    if (basis != "periodic") r = transient(variant.circuit, transientOptions(variant, o, extra));
    basisWord = basis;
    const SupplyReport rep = makeSupplyReport(variant, r);
    const auto& out = rep.output;
    for (const auto& f : kOutputFigures) w.num(out.*f.member);
    // Everything the input feeds besides the load, so that a row's energy balance can be
    // checked: input_power = power + losses (Tellegen's theorem).
    double losses = 0.0;
    for (const auto& l : out.losses) losses += l.power;
    for (const auto& b : out.batteries) losses += b.power;
    w.num(losses);
    w.num(rep.settled ? 1.0 : 0.0);
    w.num(static_cast<double>(rep.failures.size()));
    w.word(rep.worst);
    const double ta = variant.circuit.ambient();
    for (std::size_t k = 0; k < stacks_.size(); ++k) {
      const StackFigures& f = rep.stacks[k];
      const auto* st = dynamic_cast<const Stack*>(variant.circuit.find(f.name));
      for (const auto& fig : kStackFigures)
        w.num(fig.member == &StackFigures::surgePeak && !f.surgeKnown
                  ? std::numeric_limits<double>::quiet_NaN()  // a settled period has no switch-on
                  : f.*fig.member);
      for (const char* key : kVerdicts) {
        const auto it = std::find_if(f.verdicts.begin(), f.verdicts.end(),
                                     [&](const Verdict& v) { return slug(v.figure) == key; });
        if (it == f.verdicts.end())
          throw Error(fmt::format("the supply report has no verdict '{}'", key));
        w.num(it->limit > 0.0 ? it->value / it->limit : 0.0);
        w.word(it->level);
      }
      if (f.arms <= 1) continue;
      const double hi = *std::max_element(f.armShare.begin(), f.armShare.end());
      w.num(hi * f.arms - 1.0);
      // The hottest plate of each arm: its settled dissipation through its own heat path (the
      // report's steady-state estimate, plate by plate), or its end temperature if higher.
      const PlateType& pt = st->type();
      const double rth = pt.thermal.rth / st->options().cooling;
      const auto& t = r.time();
      for (int m = 0; m < f.arms; ++m) {
        double hottest = ta;
        for (int p = 0; p < st->options().plates; ++p) {
          const int idx = m * st->options().plates + p + 1;
          const double power = measure::mean(t, r[fmt::format("pplate:{}#{}", f.name, idx)],
                                             rep.window0, rep.window1);
          const double end = r[fmt::format("temp:{}#{}", f.name, idx)].back();
          hottest = std::max({hottest, ta + power * rth, end});
        }
        const double share = f.armShare[static_cast<std::size_t>(m)];
        w.num(share);
        w.num(hottest);
        // The arm's own density: its share of the stack's average forward current.
        const double density = share * f.currentAverage / pt.physics.areaCm2;
        const std::string a = levelOf(hottest - ta, f.temperatureLimit - ta);
        const std::string b = levelOf(density, f.densityRating);
        w.word(levelRank(a) >= levelRank(b) ? a : b);
      }
    }
  }

  void runValues(const Netlist& variant, Writer& w) const {
    // Without a supply report: each recorded signal's value at the end of the analysis.
    const bool op =
        !nl_.analyses.empty() && nl_.analyses.back().kind == AnalysisRequest::Kind::OperatingPoint;
    Result r;
    if (op) {
      OperatingPointOptions oo;
      oo.record = signals();
      r = operatingPoint(variant.circuit, oo);
    } else {
      r = transient(variant.circuit, transientOptions(variant, CampaignOptions{}, signals()));
    }
    for (const auto& s : signals()) w.num(r[s].back());
  }

  const Netlist& nl_;
  const CampaignSpec& spec_;
  bool report_ = false;
  TransientOptions transient_;
  std::vector<const Stack*> stacks_;
  std::vector<ColumnSpec> columns_;
  bool periodic_ = false;
  std::shared_ptr<const PeriodicOrbit> orbit_;  // the nominal circuit's settled period
  std::string nominalFailure_;                  // why it could not be found
};

}  // namespace

CampaignTable runCampaign(const Netlist& nl, const CampaignSpec& spec, const CampaignOptions& o,
                          std::size_t first, std::size_t count) {
  spec.validate();
  o.validate();
  if (!nl.output.given && nl.record.empty())
    throw InputError(
        "a campaign needs figures: name the supply's output (output NODE_P NODE_N load=NAME) for "
        "the supply report's figures, or record the signals to tabulate");
  const std::size_t total = spec.variants();
  if (first > total)
    throw InputError(
        fmt::format("campaign: first variant {} is beyond its {} variants", first, total));
  const std::size_t n = count == 0 ? total - first : std::min(count, total - first);
  Layout layout(nl, spec);
  layout.prepare(o);
  CampaignTable table = layout.emptyTable(n);
  std::atomic<std::size_t> done{0};
  std::atomic<bool> cancelled{false};
  auto body = [&](std::size_t r) {
    if (cancelled.load(std::memory_order_relaxed)) return;
    layout.run(first + r, table, r, o);
    const std::size_t d = done.fetch_add(1) + 1;
    if (o.progress && !o.progress(d, n)) cancelled = true;
  };
  // oneTBB's work stealing balances variants of unequal cost (one that cuts its steps takes
  // longer); each variant writes only its own row, so the table is the same for any threads.
  // At most one thread per core: more only slows variants that are all computation (and oneTBB
  // would cap them anyway, with a warning on stderr).
  const int cores = tbb::this_task_arena::max_concurrency();
  const int threads = o.threads > 0 ? std::min(o.threads, cores) : cores;
  if (threads == 1) {
    for (std::size_t r = 0; r < n && !cancelled; ++r) body(r);
  } else {
    tbb::task_arena arena(threads);
    arena.execute([&] {
      tbb::parallel_for(tbb::blocked_range<std::size_t>(0, n, 1),
                        [&](const tbb::blocked_range<std::size_t>& range) {
                          for (std::size_t r = range.begin(); r != range.end(); ++r) body(r);
                        });
    });
  }
  if (cancelled)
    throw Cancelled(fmt::format("campaign cancelled after {} of {} variants", done.load(), n));
  return table;
}

}  // namespace disc
