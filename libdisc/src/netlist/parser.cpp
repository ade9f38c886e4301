// Netlist statements into a circuit, analyses and an output description.
#include <fmt/format.h>
#include <algorithm>
#include <cctype>
#include <cmath>
#include <functional>
#include <map>
#include <numeric>
#include <set>

#include "core/safe_io.hpp"
#include "core/text_match.hpp"
#include "disc/analysis_settings.hpp"
#include "disc/devices/capacitor.hpp"
#include "disc/devices/diode.hpp"
#include "disc/devices/electrolytic.hpp"
#include "disc/devices/inductor.hpp"
#include "disc/devices/lamp.hpp"
#include "disc/devices/resistor.hpp"
#include "disc/devices/sources.hpp"
#include "disc/devices/stack.hpp"
#include "disc/devices/switch.hpp"
#include "disc/devices/thermal.hpp"
#include "disc/devices/thermistor.hpp"
#include "disc/devices/transformer.hpp"
#include "disc/devices/valve_load.hpp"
#include "disc/limits.hpp"
#include "disc/netlist.hpp"
#include "disc/supply_report.hpp"
#include "engine/recorder.hpp"
#include "lexer.hpp"
#include "units.hpp"

namespace disc {
namespace detail {
namespace {

constexpr Dim kWord = static_cast<Dim>(-1);  // a parameter whose value is a word, not a number

struct ParamSpec {
  const char* name;
  Dim dim;
  const char* retired = nullptr;  // the name it had before, an error naming this one
};

struct KindSpec {
  const char* kind;
  int nodes;
  const char* positional;  // parameter a lone positional value sets, or nullptr
  std::vector<ParamSpec> params;
  std::vector<const char*> shapes;  // optional shape words after the nodes (sources)
  // The device's parameter table when the parameters come from it (names, units, retired names).
  const std::vector<DeviceParameter>* table = nullptr;
};

/// A kind whose parameters are exactly the entries of a device's parameter table.
KindSpec kindFromTable(const char* kind, int nodes, const Device& prototype) {
  KindSpec k{kind, nodes, nullptr, {}, {}, &prototype.parameterTable()};
  for (const auto& e : *k.table) k.params.push_back({e.name.c_str(), dimOfUnit(e.unit)});
  return k;
}

KindSpec withPositional(KindSpec k, const char* positional) {
  k.positional = positional;
  return k;
}

/// Kinds whose positional names are heat nodes (or element names), not circuit nodes.
bool namesNoCircuitNodes(const std::string& kind) {
  return kind == "coupling" || kind == "heat-node" || kind == "heat-path" || kind == "heat-source";
}

const std::vector<ParamSpec> kWaveParams = {{"dc", Dim::Voltage},
                                            {"amplitude", Dim::Voltage},
                                            {"rms", Dim::Voltage},
                                            {"frequency", Dim::Frequency},
                                            {"phase", Dim::Angle},
                                            {"offset", Dim::Voltage},
                                            {"points", kWord},
                                            {"on", Dim::Time},
                                            {"off", Dim::Time},
                                            {"schedule", kWord},
                                            {"resistance", Dim::Resistance},
                                            {"inductance", Dim::Inductance}};

std::vector<ParamSpec> currentWaveParams() {
  std::vector<ParamSpec> p;
  for (auto s : kWaveParams) {
    if (std::string(s.name) == "resistance" || std::string(s.name) == "inductance") continue;
    if (s.dim == Dim::Voltage) s.dim = Dim::Current;
    p.push_back(s);
  }
  return p;
}

const std::vector<KindSpec>& kinds() {
  static const std::vector<KindSpec> k = {
      {"resistor", 2, "resistance", {{"resistance", Dim::Resistance}}, {}},
      {"capacitor", 2, "capacitance", {{"capacitance", Dim::Capacitance}}, {}},
      {"inductor",
       2,
       "inductance",
       {{"inductance", Dim::Inductance}, {"resistance", Dim::Resistance}},
       {}},
      {"coupling", 2, "k", {{"k", Dim::None}}, {}},
      {"transformer",
       4,
       nullptr,
       {{"ratio", Dim::None},
        {"r1", Dim::Resistance},
        {"r2", Dim::Resistance},
        {"leakage1", Dim::Inductance},
        {"leakage2", Dim::Inductance},
        {"magnetizing", Dim::Inductance}},
       {}},
      {"voltage", 2, nullptr, kWaveParams, {"dc", "sine", "points", "mains"}},
      {"current", 2, nullptr, currentWaveParams(), {"dc", "sine", "points"}},
      {"battery", 2, "emf", {{"emf", Dim::Voltage}, {"resistance", Dim::Resistance}}, {}},
      kindFromTable("diode", 2, Diode("", 0, 1)),
      {"stack",
       2,
       nullptr,
       {{"type", kWord},
        {"plates", Dim::None},
        {"parallel", Dim::None},
        {"mode", kWord},
        {"spread", Dim::None},
        {"spread-js", Dim::None},
        {"spread-rs", Dim::None},
        {"spread-gsh", Dim::None},
        {"seed", Dim::None},
        {"forming", Dim::None},
        {"stored-years", Dim::None},
        {"stored-temp", Dim::Temperature},
        {"hours", Dim::None},
        {"age-temp", Dim::Temperature},
        {"cooling", Dim::None},
        {"heat-node", kWord}},
       {}},
      kindFromTable("lamp", 2, Lamp("", 0, 1)),
      kindFromTable("valve-load", 2, ValveLoad("", 0, 1)),
      kindFromTable("thermistor", 2, Thermistor("", 0, 1)),
      kindFromTable("electrolytic", 2, Electrolytic("", 0, 1)),
      kindFromTable("heat-node", 0, HeatNode("")),
      withPositional(kindFromTable("heat-path", 2, HeatPath("", "a", "b", 1.0)), "resistance"),
      withPositional(kindFromTable("heat-source", 1, HeatSource("", "a", 0.0)), "power"),
      {"switch",
       2,
       nullptr,
       {{"close", Dim::Time},
        {"open", Dim::Time},
        {"on-resistance", Dim::Resistance, "ron"},
        {"off-resistance", Dim::Resistance, "roff"}},
       {}},
  };
  return k;
}

const KindSpec* kindOf(const std::string& word) {
  for (const auto& k : kinds())
    if (word == k.kind) return &k;
  return nullptr;
}

std::vector<std::string> statementWords() {
  std::vector<std::string> w = {"title",  "ambient", "plate-type", "use",  "include",  "output",
                                "record", "run",     "campaign",   "vary", "tolerance"};
  for (const auto& k : kinds()) w.emplace_back(k.kind);
  return w;
}

/// Parameters of one element statement after checking.
struct Params {
  std::map<std::string, double> num;
  std::map<std::string, std::string> word;
  std::map<std::string, SourceLocation> where;
  bool has(const std::string& k) const { return num.count(k) || word.count(k); }
  double get(const std::string& k, double fallback) const {
    auto it = num.find(k);
    return it == num.end() ? fallback : it->second;
  }
};

/// An out-of-range value, reported at the parameter's own position.
struct ParamError {
  std::string param, message;
};

int wholeNumber(const Params& p, const std::string& key, int fallback, int lo, int hi) {
  if (!p.num.count(key)) return fallback;
  const double v = p.num.at(key);
  if (v != std::floor(v) || v < lo || v > hi)
    throw ParamError{
        key, fmt::format("{} must be a whole number from {} to {}, got {}", key, lo, hi, v)};
  return static_cast<int>(v);
}

/// A list of "time value" pairs, comma separated, as in points= and schedule=.
std::vector<std::pair<double, double>> pairsOf(const Params& p, const std::string& key, Dim dim) {
  std::vector<std::pair<double, double>> pts;
  const std::string& list = p.word.at(key);
  std::size_t start = 0;
  while (start <= list.size()) {
    const std::size_t comma = list.find(',', start);
    std::string pair =
        list.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    std::vector<std::string> parts;
    std::size_t a = 0;
    while (a < pair.size()) {
      while (a < pair.size() && pair[a] == ' ') ++a;
      std::size_t b = a;
      while (b < pair.size() && pair[b] != ' ') ++b;
      if (b > a) parts.push_back(pair.substr(a, b - a));
      a = b;
    }
    if (parts.size() != 2)
      throw ParamError{key, fmt::format("each point is 'time value', got '{}'", pair)};
    std::string err;
    const auto t = parseQuantity(parts[0], Dim::Time, err);
    if (!t) throw ParamError{key, err};
    const auto v = parseQuantity(parts[1], dim, err);
    if (!v) throw ParamError{key, err};
    pts.emplace_back(*t, *v);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return pts;
}

Waveform waveformOf(const Params& p, const std::string& shape, bool current) {
  const char* unit = current ? "A" : "V";
  const Dim dim = current ? Dim::Current : Dim::Voltage;
  Waveform w = Waveform::dc(0.0);
  const bool sine = shape == "sine" || shape == "mains" || p.has("amplitude") || p.has("rms");
  if (shape == "points" || p.word.count("points")) {
    if (!p.word.count("points"))
      throw ParamError{"points", "a points waveform needs points=\"t1 v1, t2 v2, ...\""};
    try {
      w = Waveform::points(pairsOf(p, "points", dim));
    } catch (const InputError& e) {
      throw ParamError{"points", e.what()};
    }
  } else if (sine) {
    if (p.has("amplitude") == p.has("rms"))
      throw ParamError{"rms", fmt::format("a sine needs either amplitude= or rms= (in {})", unit)};
    if (!p.has("frequency")) throw ParamError{"frequency", "a sine needs frequency= (in Hz)"};
    const double phase = p.get("phase", 0.0) * 3.141592653589793 / 180.0;
    const double f = p.get("frequency", 0.0);
    if (!(f > 0.0))
      throw ParamError{"frequency", fmt::format("frequency must be positive, got {} Hz", f)};
    w = p.has("rms") ? Waveform::sineRms(p.get("rms", 0), f, phase, p.get("offset", 0))
                     : Waveform::sine(p.get("amplitude", 0), f, phase, p.get("offset", 0));
  } else {
    if (!p.has("dc"))
      throw ParamError{
          "dc",
          fmt::format(
              "give the waveform: dc=, sine (amplitude= or rms=, frequency=), points= or mains")};
    w = Waveform::dc(p.get("dc", 0.0));
  }
  if (p.has("on") || p.has("off")) {
    const double on = p.get("on", 0.0), off = p.get("off", std::numeric_limits<double>::infinity());
    if (!(off > on)) throw ParamError{"off", "off= must come after on="};
    w.gate(on, off);
  }
  if (p.word.count("schedule")) {
    // The schedule's levels are in the same sense as the level the waveform was given by.
    const char* by = p.has("rms") ? "rms" : p.has("amplitude") ? "amplitude" : "dc";
    if (p.word.count("points") || !p.has(by))
      throw ParamError{"schedule",
                       "schedule= scales a dc=, amplitude= or rms= waveform, not points="};
    const double nominal = p.get(by, 0.0);
    if (nominal == 0.0)
      throw ParamError{"schedule", fmt::format("schedule= needs a non-zero {}= to scale", by)};
    auto levels = pairsOf(p, "schedule", dim);
    for (auto& [t, level] : levels) level /= nominal;
    try {
      w.schedule(std::move(levels));
    } catch (const InputError& e) {
      throw ParamError{"schedule", e.what()};
    }
  }
  return w;
}

}  // namespace

/// Builds a netlist from statements, collecting every problem.
class Builder {
 public:
  Builder(Netlist& nl, Diagnostics& d, ReadContext* context = nullptr)
      : nl_(nl), diags_(d), context_(context) {}

  /// Setup statements first, then elements, then output, record and run, so that order in the
  /// file does not matter.
  void append(std::vector<Statement> statements) {
    dropNonNetlists(statements);
    for (const auto& s : statements)
      if (isSetup(word(s))) setup(s);
    for (const auto& s : statements)
      if (kindOf(word(s))) {
        // A statement that failed is reported once: what names it, or its nodes, is not
        // reported again as missing or dangling.
        const std::size_t before = diags_.count();
        element(s);
        if (diags_.count() != before && s.tokens.size() >= 2 && !s.tokens[1].keyValue) {
          failedElements_.insert(s.tokens[1].text);
          for (std::size_t k = 2; k < s.tokens.size(); ++k)
            if (!s.tokens[k].keyValue) failedNodes_.insert(s.tokens[k].text);
        }
      }
    for (const auto& s : statements) {
      const std::string w = word(s);
      if (w == "output" || w == "record" || w == "run")
        late(s);
      else if (w == "campaign" || w == "vary" || w == "tolerance")
        campaign(s);
      else if (!isSetup(w) && !kindOf(w))
        unknownStatement(s);
    }
  }

  /// Settings from outside the file for every transient, checked as the statement's own are.
  void override(const TransientOverrides& o) {
    for (auto& a : nl_.analyses) {
      if (a.kind != AnalysisRequest::Kind::Transient) continue;
      TransientOptions& t = a.transient;
      if (o.recordFrom) {
        if (!(*o.recordFrom >= 0.0 && *o.recordFrom < t.stop))
          error(a.where,
                fmt::format("record-from ({} s, given for every run) must lie from 0 to before "
                            "this run's stop ({} s)",
                            *o.recordFrom, t.stop));
        else
          t.recordFrom = *o.recordFrom;
      }
      if (o.recordSpacing) {
        if (!(*o.recordSpacing >= 0.0 && std::isfinite(*o.recordSpacing)))
          error(a.where, "record-spacing (given for every run) must be zero or positive");
        else
          t.recordSpacing = *o.recordSpacing;
      }
      if (o.maxSteps) {
        try {
          t.maxSteps = stepBudget(static_cast<double>(*o.maxSteps));
        } catch (const InputError& e) {
          error(a.where, fmt::format("{} (given for every run)", e.what()));
        }
      }
    }
  }

  /// A file without run statements runs a 1 s transient from cold; true when it was added.
  bool defaultAnalysis() {
    if (!nl_.analyses.empty()) return false;
    AnalysisRequest a;
    a.kind = AnalysisRequest::Kind::Transient;
    a.transient.stop = 1.0;
    a.transient.start = Start::Cold;
    nl_.analyses.push_back(a);
    return true;
  }

  /// The report-length check for the default run, once settings from outside have reached it.
  void defaultReportLength() { reportLength(); }

 private:
  Netlist& nl_;
  Diagnostics& diags_;
  ReadContext* context_;  // the reading, for `use`; null when only checking
  std::map<std::string, SourceLocation>& deviceWhere_ = nl_.elementWhere;
  std::map<std::string, std::vector<SourceLocation>>& nodeRefs_ = nl_.nodeRefs;
  std::set<std::string> failedElements_, failedNodes_;  // of element statements that failed

  /// Every heat node named by a heat path, a heat source or a stack exists, and every heat
  /// node has a way to the ambient; reported at the statement that names it.
  void checkHeatNetwork() {
    const Circuit& c = nl_.circuit;
    auto where = [&](const Device& d) {
      const auto it = deviceWhere_.find(d.name());
      return it == deviceWhere_.end() ? SourceLocation{} : it->second;
    };
    auto check = [&](const Device& d, const std::string& node) {
      if (node.empty() || node == HeatPath::kAmbient || failedElements_.count(node)) return;
      try {
        findHeatNode(c, node, d.name());
      } catch (const InputError& e) {
        error(where(d), e.what());
      }
    };
    for (const auto& d : c.devices()) {
      if (const auto* path = dynamic_cast<const HeatPath*>(d.get())) {
        check(*path, path->from());
        check(*path, path->to());
      } else if (const auto* src = dynamic_cast<const HeatSource*>(d.get())) {
        check(*src, src->node());
      } else if (const auto* st = dynamic_cast<const Stack*>(d.get())) {
        check(*st, st->heatNode());
      } else if (dynamic_cast<const HeatNode*>(d.get())) {
        try {
          HeatNode probe = static_cast<const HeatNode&>(*d);
          probe.prepare(c);
        } catch (const InputError& e) {
          error(where(*d), e.what());
        }
      }
    }
  }

  /// "no element named 'X'", unless X's own statement failed (then it was reported there).
  void noElement(const SourceLocation& at, const std::string& name) {
    if (!failedElements_.count(name)) error(at, fmt::format("no element named '{}'", name));
  }

  static std::string word(const Statement& s) {
    return s.tokens.front().keyValue ? std::string() : s.tokens.front().text;
  }
  static bool isSetup(const std::string& w) {
    return w == "title" || w == "ambient" || w == "plate-type" || w == "use";
  }
  void error(const SourceLocation& at, std::string msg, bool showLine = true) {
    diags_.error(at, std::move(msg), showLine);
  }

  static bool known(const Statement& s) {
    const std::string w = word(s);
    return isSetup(w) || kindOf(w) || w == "output" || w == "record" || w == "run" ||
           w == "campaign" || w == "vary" || w == "tolerance";
  }

  /// A file most of whose statements start with no statement word is no netlist (a wrong
  /// include, a binary or a text file): it is reported once, without echoing its lines.
  void dropNonNetlists(std::vector<Statement>& statements) {
    std::map<std::string, std::pair<int, int>> counts;  // file: (unknown, all)
    for (const auto& s : statements) {
      auto& c = counts[s.where.file];
      c.first += known(s) ? 0 : 1;
      ++c.second;
    }
    std::set<std::string> foreign;
    for (const auto& [file, c] : counts)
      if (c.first >= 3 && 2 * c.first > c.second) {
        foreign.insert(file);
        error({file, 1, 1},
              fmt::format("this is not a netlist: {} of its {} lines start with no statement "
                          "word (resistor, stack, run, ...); check the file name",
                          c.first, c.second),
              false);
      }
    if (foreign.empty()) return;
    std::erase_if(statements, [&](const Statement& s) { return foreign.count(s.where.file) > 0; });
  }

  void unknownStatement(const Statement& s) {
    const Token& t = s.tokens.front();
    if (t.keyValue) {
      error(t.where, "a statement starts with a word (resistor, stack, run, ...), not a parameter");
      return;
    }
    if (!t.text.empty() && t.text[0] == '.') {
      error(t.where, fmt::format("unknown statement '{}': statements do not start with a dot{}",
                                 t.text, didYouMean(t.text.substr(1), statementWords())));
      return;
    }
    error(t.where, fmt::format("unknown statement or element kind '{}'{}", t.text,
                               didYouMean(t.text, statementWords())));
  }

  bool tooMany_ = false;  // the element limit was reported

  static std::string nameRule(const std::string& what, const std::string& name) {
    return fmt::format(
        "'{}' is not a valid {} name: use 1 to {} ASCII letters, digits and _ - . +, starting "
        "with a letter, digit or _",
        name, what, InputLimits::kNameLength);
  }

  std::optional<double> number(const std::string& text, Dim dim, const SourceLocation& at) {
    std::string err;
    auto v = parseQuantity(text, dim, err);
    if (!v) error(at, err);
    return v;
  }

  void setup(const Statement& s) {
    const std::string w = word(s);
    const auto& t = s.tokens;
    if (w == "title") {
      if (t.size() != 2 || t[1].keyValue)
        return error(s.where, "title takes one quoted text: title \"...\"");
      nl_.title = t[1].text;
    } else if (w == "ambient") {
      if (t.size() != 2 || t[1].keyValue)
        return error(s.where, "ambient takes one temperature, e.g. ambient 30degC");
      if (auto v = number(t[1].text, Dim::Temperature, t[1].where)) {
        if (*v < 200.0 || *v > 450.0)
          return error(t[1].where, fmt::format("ambient {} K is outside 200-450 K", *v));
        nl_.circuit.setAmbient(*v);
      }
    } else if (w == "use") {
      if (t.size() != 2 || t[1].keyValue)
        return error(s.where, "use takes one file name: use \"plate.json\"");
      const std::string path = resolvePath(s.where.file, t[1].text);
      std::string text, real;
      if (!context_) return error(t[1].where, "use needs a file reading");
      if (!context_->open(path, t[1].where, "plate file", InputLimits::kPlateFileBytes, diags_,
                          text, real))
        return;
      try {
        const PlateLibrary lib = PlateLibrary::fromJson(text, path);
        if (nl_.plateTypes.types().size() + lib.types().size() >
            static_cast<std::size_t>(InputLimits::kPlateTypes))
          return error(t[1].where, fmt::format("more than {} plate types in one netlist",
                                               InputLimits::kPlateTypes));
        for (const auto& pt : lib.types()) nl_.plateTypes.add(pt);
      } catch (const InputError& e) {
        error(t[1].where, e.what());
      }
    } else if (w == "plate-type") {
      if (t.size() < 3 || t[1].keyValue)
        return error(s.where, "plate-type NAME base=TYPE key=value ...");
      if (!validName(t[1].text)) return error(t[1].where, nameRule("plate type", t[1].text));
      if (nl_.plateTypes.types().size() >= static_cast<std::size_t>(InputLimits::kPlateTypes) &&
          !nl_.plateTypes.find(t[1].text))
        return error(t[1].where, fmt::format("more than {} plate types in one netlist",
                                             InputLimits::kPlateTypes));
      std::string base;
      std::map<std::string, double> changes;
      std::map<std::string, SourceLocation> where;
      for (std::size_t k = 2; k < t.size(); ++k) {
        if (!t[k].keyValue)
          return error(t[k].where, fmt::format("expected key=value, got '{}'", t[k].text));
        if (t[k].key == "base") {
          base = t[k].value;
          continue;
        }
        if (auto v = number(t[k].value, Dim::None, t[k].valueWhere)) {
          changes[t[k].key] = *v;
          where[t[k].key] = t[k].where;
        }
      }
      if (base.empty())
        return error(s.where, "plate-type needs base=TYPE (a built-in or earlier type)");
      const PlateType* b = nl_.plateTypes.find(base);
      if (!b)
        return error(s.where, fmt::format("unknown plate type '{}'{}", base,
                                          didYouMean(base, nl_.plateTypes.names())));
      PlateType derived = *b;
      derived.name = t[1].text;
      derived.description = fmt::format("derived from {}", base);
      for (const auto& [key, value] : changes) {
        try {
          derived.set(key, value);
          derived.notes[key] = fmt::format("set in {}", s.where.file);
        } catch (const InputError& e) {
          error(where[key], e.what());
        }
      }
      try {
        nl_.plateTypes.add(derived);
      } catch (const InputError& e) {
        error(s.where, e.what());
      }
    }
  }

  void element(const Statement& s) {
    const KindSpec& spec = *kindOf(word(s));
    const auto& t = s.tokens;
    if (t.size() < 2 || t[1].keyValue)
      return error(s.where, fmt::format("a {} needs a name after the kind", spec.kind));
    const std::string name = t[1].text;
    if (!validName(name)) return error(t[1].where, nameRule(spec.kind, name));
    if (nl_.circuit.devices().size() >= static_cast<std::size_t>(InputLimits::kElements)) {
      if (!tooMany_)
        error(t[1].where,
              fmt::format("more than {} elements in one circuit", InputLimits::kElements));
      tooMany_ = true;
      return;
    }
    std::vector<const Token*> positional;
    Params p;
    std::string shape;
    bool ok = true;
    for (std::size_t k = 2; k < t.size(); ++k) {
      const Token& tok = t[k];
      if (!tok.keyValue) {
        positional.push_back(&tok);
        continue;
      }
      const auto it = std::find_if(spec.params.begin(), spec.params.end(),
                                   [&](const ParamSpec& ps) { return tok.key == ps.name; });
      if (it == spec.params.end()) {
        std::vector<std::string> names;
        for (const auto& ps : spec.params) names.emplace_back(ps.name);
        std::string hint = spec.table ? retiredParameterHint(*spec.table, tok.key) : "";
        for (const auto& ps : spec.params)
          if (hint.empty() && ps.retired && tok.key == ps.retired)
            hint =
                fmt::format(": '{}' is now called '{}' (in {})", tok.key, ps.name, dimUnit(ps.dim));
        if (hint.empty()) hint = didYouMean(tok.key, names);
        error(tok.where, fmt::format("a {} has no parameter '{}'{}", spec.kind, tok.key, hint));
        ok = false;
        continue;
      }
      if (p.has(tok.key)) {
        error(tok.where, fmt::format("parameter '{}' given twice", tok.key));
        ok = false;
        continue;
      }
      p.where[tok.key] = tok.where;
      if (it->dim == kWord) {
        p.word[tok.key] = tok.value;
      } else if (auto v = number(tok.value, it->dim, tok.valueWhere)) {
        p.num[tok.key] = *v;
      } else {
        ok = false;
      }
    }
    // Shape words of sources sit after the nodes.
    if (!spec.shapes.empty() && static_cast<int>(positional.size()) > spec.nodes) {
      const Token* last = positional[static_cast<std::size_t>(spec.nodes)];
      if (std::find_if(spec.shapes.begin(), spec.shapes.end(),
                       [&](const char* w) { return last->text == w; }) != spec.shapes.end()) {
        shape = last->text;
        positional.erase(positional.begin() + spec.nodes);
      }
    }
    const int nodeCount = spec.nodes;
    const std::string kindWord = spec.kind;
    const bool heat = namesNoCircuitNodes(kindWord) && kindWord != "coupling";
    if (static_cast<int>(positional.size()) < nodeCount) {
      error(positional.empty() ? t[1].where : positional.back()->where,
            fmt::format("a {} needs {} {}; found {}", spec.kind, nodeCount,
                        kindWord == "coupling"    ? "inductor names"
                        : kindWord == "heat-path" ? "heat node names (the second may be 'ambient')"
                        : heat                    ? "heat node name"
                                                  : "nodes",
                        positional.size()));
      return;
    }
    if (static_cast<int>(positional.size()) > nodeCount + (spec.positional ? 1 : 0)) {
      const Token* extra =
          positional[static_cast<std::size_t>(nodeCount + (spec.positional ? 1 : 0))];
      error(extra->where, fmt::format("too many nodes or values for a {}: '{}' is extra", spec.kind,
                                      extra->text));
      return;
    }
    if (static_cast<int>(positional.size()) == nodeCount + 1) {
      const Token* v = positional.back();
      if (p.has(spec.positional)) {
        error(v->where,
              fmt::format("{} given both as a value and as {}=", spec.positional, spec.positional));
        return;
      }
      const auto ps = std::find_if(spec.params.begin(), spec.params.end(), [&](const ParamSpec& x) {
        return std::string(x.name) == spec.positional;
      });
      if (auto val = number(v->text, ps->dim, v->where)) {
        p.num[spec.positional] = *val;
        p.where[spec.positional] = v->where;
      } else {
        ok = false;
      }
      positional.pop_back();
    }
    if (!ok) return;
    if (deviceWhere_.count(name)) {
      const auto& first = deviceWhere_[name];
      error(t[1].where,
            fmt::format("duplicate name '{}' (first used at {}:{})", name, first.file, first.line));
      return;
    }
    std::vector<std::string> nodes;
    for (const Token* tok : positional) {
      // A coupling names inductors: element names, which follow the same rule.
      if (!validName(tok->text))
        return error(tok->where, nameRule(kindWord == "coupling" ? "inductor"
                                          : heat                 ? "heat node"
                                                                 : "node",
                                          tok->text));
      nodes.push_back(tok->text);
    }
    try {
      auto device = build(spec, name, nodes, shape, p, s);
      if (!device) return;
      // Every given value within its table range, whichever way the device was built.
      for (const auto& [key, value] : p.num)
        if (const DeviceParameter* entry = device->findParameter(key)) {
          try {
            entry->checkRange(*device, value);
          } catch (const InputError& e) {
            throw ParamError{key, e.what()};
          }
        }
      nl_.circuit.add(std::move(device));
      deviceWhere_[name] = t[1].where;
      if (!namesNoCircuitNodes(kindWord))
        for (std::size_t k = 0; k < nodes.size(); ++k)
          if (nodes[k] != "gnd") nodeRefs_[nodes[k]].push_back(positional[k]->where);
    } catch (const ParamError& e) {
      error(p.where.count(e.param) ? p.where[e.param] : t[1].where, e.message);
    } catch (const InputError& e) {
      error(t[1].where, e.what());
    }
  }

  /// Sets each given parameter through the device's table, so its checks and messages apply.
  static std::unique_ptr<Device> withTableParams(std::unique_ptr<Device> d, const Params& p) {
    for (const auto& [key, value] : p.num) {
      try {
        d->setParameter(key, value);
      } catch (const InputError& e) {
        throw ParamError{key, e.what()};
      }
    }
    return d;
  }

  std::unique_ptr<Device> build(const KindSpec& spec, const std::string& name,
                                const std::vector<std::string>& nodes, const std::string& shape,
                                const Params& p, const Statement& s) {
    const std::string kind = spec.kind;
    Circuit& c = nl_.circuit;
    auto require = [&](const char* key, const char* what) {
      if (!p.has(key)) throw ParamError{key, fmt::format("a {} needs {}= ({})", kind, key, what)};
    };
    auto positive = [&](const char* key) {
      const double v = p.get(key, 0.0);
      if (!(v > 0.0)) throw ParamError{key, fmt::format("{} must be positive, got {}", key, v)};
      return v;
    };
    if (kind == "coupling")
      return std::make_unique<Coupling>(name, nodes[0], nodes[1], p.get("k", 0.0));
    if (kind == "heat-node") {
      require("capacity", "J/K, the heat capacity of the sink, chassis or air it stands for");
      return withTableParams(std::make_unique<HeatNode>(name), p);
    }
    if (kind == "heat-path") {
      require("resistance", "K/W between the two ends");
      return std::make_unique<HeatPath>(name, nodes[0], nodes[1], positive("resistance"));
    }
    if (kind == "heat-source") {
      require("power", "W of heat into the node, e.g. a transformer's loss");
      return withTableParams(std::make_unique<HeatSource>(name, nodes[0], 0.0), p);
    }
    std::vector<NodeId> n;
    for (const auto& node : nodes) n.push_back(c.node(node));
    if (kind == "resistor") {
      require("resistance", "ohm");
      return std::make_unique<Resistor>(name, n[0], n[1], positive("resistance"));
    }
    if (kind == "capacitor") {
      require("capacitance", "F");
      return std::make_unique<Capacitor>(name, n[0], n[1], positive("capacitance"));
    }
    if (kind == "inductor") {
      require("inductance", "H");
      return std::make_unique<Inductor>(name, n[0], n[1], positive("inductance"),
                                        p.get("resistance", 0.0));
    }
    if (kind == "transformer") {
      require("ratio", "primary turns / secondary turns");
      TransformerParams tp;
      tp.ratio = p.get("ratio", 1.0);
      tp.r1 = p.get("r1", 0.0);
      tp.r2 = p.get("r2", 0.0);
      tp.leakage1 = p.get("leakage1", 0.0);
      tp.leakage2 = p.get("leakage2", 0.0);
      tp.magnetizing = p.get("magnetizing", tp.magnetizing);
      return std::make_unique<Transformer>(name, n[0], n[1], n[2], n[3], tp);
    }
    if (kind == "voltage") {
      Waveform w = waveformOf(p, shape, false);
      return std::make_unique<VoltageSource>(name, n[0], n[1], std::move(w),
                                             p.get("resistance", 0.0), p.get("inductance", 0.0));
    }
    if (kind == "current")
      return std::make_unique<CurrentSource>(name, n[0], n[1], waveformOf(p, shape, true));
    if (kind == "battery") {
      require("emf", "V");
      return std::make_unique<VoltageSource>(
          makeBattery(name, n[0], n[1], p.get("emf", 0.0), p.get("resistance", 0.0)));
    }
    if (kind == "diode") return withTableParams(std::make_unique<Diode>(name, n[0], n[1]), p);
    if (kind == "stack") {
      if (!p.word.count("type"))
        throw ParamError{"type", "a stack needs type= (see 'disc plates')"};
      const std::string typeName = p.word.at("type");
      const PlateType* type = nl_.plateTypes.find(typeName);
      if (!type)
        throw ParamError{"type", fmt::format("unknown plate type '{}'{}", typeName,
                                             didYouMean(typeName, nl_.plateTypes.names()))};
      StackOptions o;
      o.plates = wholeNumber(p, "plates", 1, 1, InputLimits::kPlatesPerArm);
      o.arms = wholeNumber(p, "parallel", 1, 1, InputLimits::kArms);
      if (p.word.count("mode")) {
        const std::string m = p.word.at("mode");
        if (m == "per-plate")
          o.mode = StackMode::PerPlate;
        else if (m == "lumped")
          o.mode = StackMode::Lumped;
        else
          throw ParamError{"mode", fmt::format("mode is per-plate or lumped, got '{}'", m)};
      }
      const double spread = p.get("spread", 0.0);
      o.spread = {p.get("spread-js", spread), p.get("spread-rs", spread),
                  p.get("spread-gsh", spread)};
      o.seed =
          static_cast<std::uint64_t>(wholeNumber(p, "seed", 1, 0, static_cast<int>(kMaxStackSeed)));
      o.forming = p.get("forming", 1.0);
      o.storedYears = p.get("stored-years", 0.0);
      o.storageTemperature = p.get("stored-temp", 0.0);
      o.ageHours = p.get("hours", 0.0);
      o.ageTemperature = p.get("age-temp", 0.0);
      o.cooling = p.get("cooling", 1.0);
      try {
        o.validate();
      } catch (const InputError& e) {
        throw ParamError{"", e.what()};
      }
      auto stack = std::make_unique<Stack>(name, n[0], n[1], *type, o);
      if (p.word.count("heat-node")) stack->setHeatNode(p.word.at("heat-node"));
      return stack;
    }
    if (kind == "lamp") {
      require("rated-power", "W, as printed on the bulb");
      require("rated-voltage", "V, as printed on the bulb");
      return withTableParams(std::make_unique<Lamp>(name, n[0], n[1]), p);
    }
    if (kind == "valve-load") {
      require("rated-current", "A drawn by the warm valves at rated-voltage=");
      require("rated-voltage", "V, the HT voltage of that current");
      return withTableParams(std::make_unique<ValveLoad>(name, n[0], n[1]), p);
    }
    if (kind == "thermistor") {
      require("resistance", "ohm at reference-temp (25 degC unless given), from the datasheet");
      require("b-constant", "K, the datasheet's B value");
      return withTableParams(std::make_unique<Thermistor>(name, n[0], n[1]), p);
    }
    if (kind == "electrolytic") {
      require("capacitance", "F");
      require("rated-voltage", "V, the DC working voltage printed on the can");
      return withTableParams(std::make_unique<Electrolytic>(name, n[0], n[1]), p);
    }
    if (kind == "switch") {
      std::vector<std::pair<double, bool>> events;  // (time, closes)
      if (p.has("close")) events.emplace_back(p.get("close", 0), true);
      if (p.has("open")) events.emplace_back(p.get("open", 0), false);
      if (events.empty()) throw ParamError{"close", "a switch needs close= or open= (a time)"};
      std::sort(events.begin(), events.end());
      std::vector<double> times;
      for (const auto& e : events) times.push_back(e.first);
      const bool closedAtStart = !events.front().second;
      return std::make_unique<Switch>(name, n[0], n[1], closedAtStart, times,
                                      p.get("on-resistance", 1e-3), p.get("off-resistance", 1e9));
    }
    (void)s;
    return nullptr;
  }

  void late(const Statement& s) {
    const std::string w = word(s);
    const auto& t = s.tokens;
    Circuit& c = nl_.circuit;
    auto nodeExists = [&](const std::string& n) {
      if (n == "gnd") return true;
      try {
        c.findNode(n);
        return true;
      } catch (const InputError&) {
        return false;
      }
    };
    if (w == "output") {
      if (t.size() < 4 || t[1].keyValue || t[2].keyValue)
        return error(s.where, "output NODE_P NODE_N load=NAME");
      for (int k : {1, 2})
        if (!nodeExists(t[static_cast<std::size_t>(k)].text))
          return error(t[static_cast<std::size_t>(k)].where,
                       fmt::format("no node named '{}'", t[static_cast<std::size_t>(k)].text));
      if (t[1].text == t[2].text)
        return error(t[2].where,
                     fmt::format("output is taken across one node, '{}', so it reads 0 V and "
                                 "no power: name the + node first, then the - node (usually gnd)",
                                 t[1].text));
      nl_.output.positive = t[1].text;
      nl_.output.negative = t[2].text;
      for (std::size_t k = 3; k < t.size(); ++k) {
        if (t[k].keyValue && t[k].key == "load") {
          const Device* load = c.find(t[k].value);
          if (!load) return noElement(t[k].valueWhere, t[k].value);
          if (load->kind() == "capacitor")
            return error(t[k].valueWhere, capacitorLoadHint(t[k].value, t[1].text, t[2].text));
          if (auto msg = sourceLoadProblem(*load); !msg.empty()) return error(t[k].valueWhere, msg);
          nl_.output.load = t[k].value;
        } else if (t[k].keyValue && t[k].key == "input") {
          const Device* d = c.find(t[k].value);
          if (!d) return noElement(t[k].valueWhere, t[k].value);
          if (d->kind() != "voltage source" && d->kind() != "current source")
            return error(t[k].valueWhere,
                         fmt::format("input= names the source that feeds the supply; '{}' is a {}",
                                     t[k].value, d->kind()));
          nl_.output.input = t[k].value;
        } else if (t[k].keyValue && t[k].key == "kind") {
          if (t[k].value == "capacitive")
            nl_.output.kind = OutputSpec::LoadKind::Capacitive;
          else if (t[k].value == "resistive")
            nl_.output.kind = OutputSpec::LoadKind::Resistive;
          else
            return error(t[k].valueWhere, "kind is capacitive or resistive");
        } else if (t[k].keyValue && t[k].key == "class") {
          const auto v = number(t[k].value, Dim::None, t[k].valueWhere);
          if (!v) return;
          if (!(*v > 0.0 && *v <= 20.0))
            return error(t[k].valueWhere,
                         "class is the meter's accuracy class (IEC 60051), the permitted error "
                         "in % of its range, e.g. class=2.5");
          nl_.output.accuracyClass = *v;
        } else if (t[k].keyValue && (t[k].key == "full-scale" || t[k].key == "range")) {
          const bool current = t[k].key == "full-scale";
          const auto v = number(t[k].value, current ? Dim::Current : Dim::Voltage, t[k].valueWhere);
          if (!v) return;
          if (!(*v > 0.0) || !std::isfinite(*v))
            return error(t[k].valueWhere,
                         fmt::format("{} must be positive: the meter's {}", t[k].key,
                                     current ? "full-scale current, e.g. full-scale=1mA"
                                             : "range in volts rms, e.g. range=10V"));
          (current ? nl_.output.fullScale : nl_.output.range) = *v;
        } else {
          return error(t[k].where,
                       fmt::format("unexpected '{}': output takes load=, kind=, input=, and for "
                                   "a meter full-scale=, range= and class=",
                                   t[k].text));
        }
      }
      if (nl_.output.load.empty())
        return error(s.where, "output needs load=NAME (the element that is the load)");
      if (nl_.output.load == nl_.output.input)
        return error(s.where, fmt::format("'{}' is named both as the load and as the input: the "
                                          "input feeds the supply, the load is what it feeds",
                                          nl_.output.load));
      if ((nl_.output.fullScale > 0.0) != (nl_.output.range > 0.0))
        return error(s.where,
                     "a meter output needs both full-scale= (the movement's current) and range= "
                     "(the volts rms that full scale marks)");
      nl_.output.given = true;
    } else if (w == "record") {
      if (t.size() < 2)
        return error(s.where, "record takes one or more signals: record v:out i:SR1");
      for (std::size_t k = 1; k < t.size(); ++k) {
        if (auto msg = checkSignal(t[k].text); msg == "-")
          continue;  // names an element whose statement failed: reported there
        else if (!msg.empty())
          error(t[k].where, msg);
        else
          nl_.record.push_back(t[k].text);
      }
    } else if (w == "run") {
      if (t.size() < 2 || t[1].keyValue)
        return error(s.where,
                     "run operating-point, run transient stop=TIME, run periodic, or run warm-up "
                     "duration=TIME");
      AnalysisRequest a;
      a.where = s.where;
      // A numeric setting checked against its range in analysisSettings(), as Python checks it.
      auto setting = [&](const Token& tok,
                         std::string_view analysis = "") -> std::optional<double> {
        auto v = number(tok.value, Dim::None, tok.valueWhere);
        if (!v) return std::nullopt;
        try {
          return checkSetting(tok.key, *v, analysis);
        } catch (const InputError& e) {
          error(tok.valueWhere, e.what());
          return std::nullopt;
        }
      };
      // Keys every time-domain analysis shares; false when the key is not one of them.
      auto timeKey = [&](const Token& tok, Tolerances& tol, double& maxStep, Start* start) {
        if (tok.key == "max-step") {
          auto v = number(tok.value, Dim::Time, tok.valueWhere);
          if (v && !(*v > 0.0))
            error(tok.valueWhere, "max-step must be positive");
          else if (v)
            maxStep = *v;
        } else if (tok.key == "start" && start) {
          if (tok.value == "cold")
            *start = Start::Cold;
          else if (tok.value == "operating-point")
            *start = Start::OperatingPoint;
          else
            error(tok.valueWhere, "start is cold or operating-point");
        } else if (tok.key == "reltol") {
          if (auto v = setting(tok)) tol.reltol = *v;
        } else if (tok.key == "abstol") {
          // One absolute floor for voltages (V) and currents (A).
          if (auto v = setting(tok)) tol.voltage = tol.current = *v;
        } else if (tok.key == "temperature-abstol") {
          // Kelvin: temperatures have their own absolute floor (a thermal rise of a few kelvin
          // needs a finer one than a volt does).
          if (auto v = setting(tok)) tol.temperature = *v;
        } else {
          return false;
        }
        return true;
      };
      auto unknownKey = [&](const Token& tok, const char* analysis,
                            const std::vector<std::string>& keys) {
        error(tok.where, fmt::format("run {} has no parameter '{}'{}", analysis, tok.key,
                                     didYouMean(tok.key, keys)));
      };
      const std::string& kindWord = t[1].text;
      if (kindWord == "operating-point") {
        a.kind = AnalysisRequest::Kind::OperatingPoint;
        if (t.size() > 2) return error(t[2].where, "run operating-point takes no parameters");
      } else if (kindWord == "transient") {
        a.kind = AnalysisRequest::Kind::Transient;
        a.transient.start = Start::Cold;
        bool haveStop = false;
        for (std::size_t k = 2; k < t.size(); ++k) {
          const Token& tok = t[k];
          if (!tok.keyValue)
            return error(tok.where, fmt::format("expected key=value, got '{}'", tok.text));
          if (timeKey(tok, a.transient.tol, a.transient.maxStep, &a.transient.start)) continue;
          if (tok.key == "stop") {
            auto v = number(tok.value, Dim::Time, tok.valueWhere);
            haveStop = haveStop || tok.key == "stop";  // a bad value is reported on its own
            if (!v) continue;
            if (!(*v > 0.0)) {
              error(tok.valueWhere, "stop must be positive");
              continue;
            }
            a.transient.stop = *v;
            haveStop = true;
          } else if (tok.key == "method") {
            try {
              a.transient.method = parseMethod(tok.value);
            } catch (const InputError& e) {
              error(tok.valueWhere, e.what());
            }
          } else if (tok.key == "max-steps") {
            // The step budget (docs/limits.md), raised to run a long job.
            if (auto v = setting(tok)) a.transient.maxSteps = static_cast<long long>(std::ceil(*v));
          } else if (tok.key == "record-from" || tok.key == "record-spacing") {
            // Which rows the CSV gets: from a start time, at least a spacing apart.
            auto v = number(tok.value, Dim::Time, tok.valueWhere);
            if (v && !(*v >= 0.0))
              error(tok.valueWhere, fmt::format("{} must be zero or positive", tok.key));
            else if (v && tok.key == "record-from")
              a.transient.recordFrom = *v;
            else if (v)
              a.transient.recordSpacing = *v;
          } else {
            unknownKey(tok, "transient",
                       {"stop", "max-step", "method", "start", "reltol", "abstol",
                        "temperature-abstol", "max-steps", "record-from", "record-spacing"});
          }
        }
        if (!haveStop) return error(s.where, "run transient needs stop=TIME, e.g. stop=2s");
        if (a.transient.stop > 0.0 && a.transient.recordFrom >= a.transient.stop)
          return error(s.where, fmt::format("record-from ({} s) must come before stop ({} s)",
                                            a.transient.recordFrom, a.transient.stop));
      } else if (kindWord == "periodic") {
        a.kind = AnalysisRequest::Kind::Periodic;
        PeriodicOptions& po = a.periodic;
        for (std::size_t k = 2; k < t.size(); ++k) {
          const Token& tok = t[k];
          if (!tok.keyValue)
            return error(tok.where, fmt::format("expected key=value, got '{}'", tok.text));
          if (timeKey(tok, po.tol, po.maxStep, &po.start)) continue;
          if (tok.key == "at") {
            // The slow clock: where a variac schedule or a valve's warm-up is read and held.
            auto v = number(tok.value, Dim::Time, tok.valueWhere);
            if (v && !(*v >= 0.0))
              error(tok.valueWhere, "at must be a time of at least 0 s");
            else if (v)
              po.slowTime = *v;
          } else if (tok.key == "warm-up-periods") {
            auto v = number(tok.value, Dim::None, tok.valueWhere);
            if (v && (*v != std::floor(*v) || *v < 0 || *v > 10000))
              error(tok.valueWhere, "warm-up-periods must be a whole number from 0 to 10000");
            else if (v)
              po.warmupPeriods = static_cast<int>(*v);
          } else {
            unknownKey(tok, "periodic",
                       {"at", "max-step", "start", "reltol", "abstol", "temperature-abstol",
                        "warm-up-periods"});
          }
        }
      } else if (kindWord == "warm-up") {
        a.kind = AnalysisRequest::Kind::WarmUp;
        EnvelopeOptions& eo = a.warmUp;
        bool haveDuration = false;
        for (std::size_t k = 2; k < t.size(); ++k) {
          const Token& tok = t[k];
          if (!tok.keyValue)
            return error(tok.where, fmt::format("expected key=value, got '{}'", tok.text));
          if (tok.key == "duration" || tok.key == "max-step") {
            auto v = number(tok.value, Dim::Time, tok.valueWhere);
            if (!v) continue;
            if (!(*v > 0.0)) {
              error(tok.valueWhere, fmt::format("{} must be positive", tok.key));
              continue;
            }
            if (tok.key == "duration" && *v > 1e8) {
              error(tok.valueWhere, "duration is beyond 3 years; give at most 1e8 s");
              continue;
            }
            (tok.key == "duration" ? eo.duration : eo.maxStep) = *v;
            haveDuration = haveDuration || tok.key == "duration";
          } else if (tok.key == "reltol") {
            if (auto v = setting(tok)) eo.reltol = *v;
          } else if (tok.key == "temperature-tolerance") {
            // The same word as on run transient and run periodic.
            error(tok.where,
                  "run warm-up: 'temperature-tolerance' is now called "
                  "'temperature-abstol' (in K)");
          } else if (tok.key == "temperature-abstol") {
            if (auto v = setting(tok, "warm-up")) eo.temperatureTol = *v;
          } else if (tok.key == "periodic-reltol") {
            if (auto v = setting(tok)) eo.periodic.tol.reltol = *v;
          } else {
            unknownKey(tok, "warm-up",
                       {"duration", "max-step", "reltol", "temperature-abstol", "periodic-reltol"});
          }
        }
        if (!haveDuration)
          return error(s.where, "run warm-up needs duration=TIME, e.g. duration=1h");
      } else {
        return error(t[1].where, fmt::format("unknown analysis '{}'{}", kindWord,
                                             didYouMean(kindWord, {"operating-point", "transient",
                                                                   "periodic", "warm-up"})));
      }
      nl_.analyses.push_back(a);
    }
  }

  /// The campaign statements (docs/campaigns.md): `campaign builds=N seed=S plates=redraw|keep`,
  /// `vary ELEMENT PARAMETER v1 v2 ...` (or from= to= steps=) and `tolerance ELEMENT PARAMETER
  /// -20% +50% [law=uniform|normal]`.
  void campaign(const Statement& s) {
    const std::string w = word(s);
    const auto& t = s.tokens;
    CampaignSpec& spec = nl_.campaign;
    if (w == "campaign") {
      for (std::size_t k = 1; k < t.size(); ++k) {
        const Token& tok = t[k];
        if (!tok.keyValue)
          return error(tok.where, "campaign takes builds=N, seed=N and plates=redraw|keep");
        if (tok.key == "builds" || tok.key == "seed") {
          auto v = number(tok.value, Dim::None, tok.valueWhere);
          if (!v) continue;
          const double lo = tok.key == "builds" ? 1.0 : 0.0;
          if (*v != std::floor(*v) || *v < lo || *v > 9.007e15) {
            error(tok.valueWhere,
                  fmt::format("{} must be a whole number of at least {}", tok.key, lo));
            continue;
          }
          if (tok.key == "builds") {
            if (*v > 1e8) {
              error(tok.valueWhere, "builds must be at most 1e8");
              continue;
            }
            spec.builds = static_cast<int>(*v);
          } else {
            spec.seed = static_cast<std::uint64_t>(*v);
          }
        } else if (tok.key == "plates") {
          if (tok.value != "redraw" && tok.value != "keep")
            error(tok.valueWhere, "plates is redraw (new plates each build) or keep");
          else
            spec.redrawPlates = tok.value == "redraw";
        } else {
          error(tok.where, fmt::format("campaign has no parameter '{}'{}", tok.key,
                                       didYouMean(tok.key, {"builds", "seed", "plates"})));
        }
      }
      spec.given = true;
      return;
    }
    if (t.size() < 4 || t[1].keyValue || t[2].keyValue)
      return error(s.where, w == "vary"
                                ? "vary ELEMENT PARAMETER v1 v2 ... (or from=A to=B steps=N)"
                                : "tolerance ELEMENT PARAMETER -20% +50% (or one band: 10%)");
    const std::string element = t[1].text, parameter = t[2].text;
    const Device* d = nl_.circuit.find(element);
    if (!d) return noElement(t[1].where, element);
    const DeviceParameter* entry = d->findParameter(parameter);
    if (!entry) {
      std::string hint = retiredParameterHint(d->parameterTable(), parameter);
      if (hint.empty()) hint = didYouMean(parameter, d->parameterNames());
      return error(t[2].where, fmt::format("{} '{}' has no parameter '{}'{}", d->kind(), element,
                                           parameter, hint));
    }
    const Dim dim = dimOfUnit(entry->unit);
    if (w == "vary") {
      CampaignAxis axis{element, parameter, {}};
      std::optional<double> from, to;
      int steps = 0;
      for (std::size_t k = 3; k < t.size(); ++k) {
        const Token& tok = t[k];
        if (!tok.keyValue) {
          if (auto v = number(tok.text, dim, tok.where)) axis.values.push_back(*v);
        } else if (tok.key == "from" || tok.key == "to") {
          (tok.key == "from" ? from : to) = number(tok.value, dim, tok.valueWhere);
        } else if (tok.key == "steps") {
          auto v = number(tok.value, Dim::None, tok.valueWhere);
          if (v && (*v != std::floor(*v) || *v < 2 || *v > 1e6))
            error(tok.valueWhere, "steps must be a whole number from 2 to 1e6");
          else if (v)
            steps = static_cast<int>(*v);
        } else {
          error(tok.where, fmt::format("vary has no parameter '{}'{}", tok.key,
                                       didYouMean(tok.key, {"from", "to", "steps"})));
        }
      }
      if (from || to || steps) {
        if (!from || !to || steps == 0 || !axis.values.empty())
          return error(s.where, "vary takes either a list of values or all of from=, to=, steps=");
        for (int k = 0; k < steps; ++k)
          axis.values.push_back(*from + (*to - *from) * k / (steps - 1));
      }
      if (axis.values.empty()) return error(s.where, "vary needs at least one value");
      try {
        for (double v : axis.values) entry->checkRange(*d, v);
      } catch (const InputError& e) {
        return error(s.where, e.what());
      }
      spec.axes.push_back(std::move(axis));
      spec.given = true;
      return;
    }
    // tolerance: one band "10%" (symmetric) or two "-20% +50%".
    CampaignTolerance tol{element, parameter, 0.0, 0.0, CampaignTolerance::Law::Uniform};
    std::vector<double> band;
    for (std::size_t k = 3; k < t.size(); ++k) {
      const Token& tok = t[k];
      if (tok.keyValue) {
        if (tok.key != "law") {
          error(tok.where, fmt::format("tolerance has no parameter '{}'{}", tok.key,
                                       didYouMean(tok.key, {"law"})));
        } else if (tok.value == "uniform" || tok.value == "normal") {
          tol.law = tok.value == "normal" ? CampaignTolerance::Law::Normal
                                          : CampaignTolerance::Law::Uniform;
        } else {
          error(tok.valueWhere, "law is uniform or normal");
        }
        continue;
      }
      const std::string& x = tok.text;
      if (x.size() < 2 || x.back() != '%') {
        error(tok.where,
              fmt::format("a tolerance is a percentage such as -20% or +50%, got '{}'", x));
        continue;
      }
      if (auto v = number(x.substr(0, x.size() - 1), Dim::None, tok.where))
        band.push_back(*v / 100.0);
    }
    if (band.size() == 1) band = {-std::abs(band[0]), std::abs(band[0])};
    if (band.size() != 2)
      return error(s.where, "tolerance takes one band (10%) or two limits (-20% +50%)");
    tol.lower = band[0];
    tol.upper = band[1];
    if (!(tol.lower <= tol.upper) || !(tol.lower > -1.0))
      return error(s.where, "give the lower limit first, above -100 %");
    spec.tolerances.push_back(std::move(tol));
    spec.given = true;
  }

  /// Why a source cannot be the load ("" when it can): a current source forces its current
  /// whatever the supply does, and an alternating source is a supply's input. A DC voltage
  /// source is a battery, a load that charges.
  static std::string sourceLoadProblem(const Device& load) {
    if (auto* i = dynamic_cast<const CurrentSource*>(&load); i)
      return fmt::format(
          "'{}' is a current source: it forces its own current, so it cannot be the load the "
          "supply feeds; name the resistor, valve load, lamp or battery across the output",
          load.name());
    if (auto* v = dynamic_cast<const VoltageSource*>(&load); v && v->waveform().frequency() > 0.0)
      return fmt::format(
          "'{}' is an alternating source ({} Hz), the supply's input, not its load; name the "
          "resistor, valve load, lamp or battery across the output",
          load.name(), v->waveform().frequency());
    return "";
  }

  /// The message for `output ... load=C1` naming a capacitor, with the element across the
  /// output nodes that is more likely the load.
  std::string capacitorLoadHint(const std::string& cap, const std::string& pos,
                                const std::string& neg) {
    std::string suggestion;
    const Circuit& c = nl_.circuit;
    // Passive parts first; a source (a battery) only when nothing else sits across.
    for (const bool sources : {false, true})
      for (const auto& d : c.devices()) {
        const auto& t = d->terminals();
        const bool source = d->kind() == "voltage source" || d->kind() == "current source";
        if (!suggestion.empty() || t.size() != 2 || source != sources || d->kind() == "capacitor" ||
            d->kind() == "stack")
          continue;
        const std::string a = c.nodeName(t[0]), b = c.nodeName(t[1]);
        if ((a == pos && b == neg) || (a == neg && b == pos))
          suggestion = fmt::format("; did you mean load={} (the {} across {} and {})?", d->name(),
                                   d->kind(), pos, neg);
      }
    return fmt::format(
        "'{}' is a capacitor: the load is what the supply feeds (a resistor, valve load, lamp or "
        "battery), the reservoir and filter capacitors belong to the supply{}",
        cap, suggestion);
  }

  /// "" when a signal name refers to existing nodes and device quantities.
  std::string checkSignal(const std::string& sig) {
    const auto colon = sig.find(':');
    // A quantity written as a function of its node or element, v(b): the form is kind:target.
    if (const auto paren = sig.find('('); colon == std::string::npos &&
                                          paren != std::string::npos && paren > 0 &&
                                          sig.back() == ')' && paren + 2 < sig.size())
      return fmt::format("signal '{}' is written {}:{} (kind:target)", sig, sig.substr(0, paren),
                         sig.substr(paren + 1, sig.size() - paren - 2));
    if (colon == std::string::npos || colon == 0 || colon + 1 == sig.size())
      return fmt::format("signal '{}' must be kind:target (v:node, i:element, temp:stack#3, ...)",
                         sig);
    const std::string kind = sig.substr(0, colon), target = sig.substr(colon + 1);
    Circuit& c = nl_.circuit;
    if (kind == "v") {
      if (const auto comma = target.find(','); comma != std::string::npos) {
        try {
          checkVoltagePair(sig, target.substr(0, comma), target.substr(comma + 1));
        } catch (const InputError& e) {
          return e.what();
        }
      }
      std::size_t start = 0;
      while (true) {
        const auto comma = target.find(',', start);
        const std::string node =
            target.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
        if (node != "gnd") {
          try {
            c.findNode(node);
          } catch (const InputError&) {
            return fmt::format("signal '{}': no node named '{}'", sig, node);
          }
        }
        if (comma == std::string::npos) break;
        start = comma + 1;
      }
      return "";
    }
    const std::string deviceName = target.substr(0, target.find('#'));
    if (!c.find(deviceName) && failedElements_.count(deviceName)) return "-";
    try {
      deviceSignal(c, sig);  // the recorder's own reading: its probe and plate index
    } catch (const InputError& e) {
      return e.what();
    }
    return "";
  }

  /// A transient too short for the supply report it makes is refused at its run statement:
  /// the report measures whole mains cycles at the run's end and judges settling by comparing
  /// the means of the last ones (makeSupplyReport), so it needs kSettleCycles of them.
  void reportLength() {
    if (!nl_.output.given) return;
    const AnalysisRequest* last = nullptr;  // the analysis the report is made from
    for (const auto& a : nl_.analyses)
      if (a.kind != AnalysisRequest::Kind::OperatingPoint) last = &a;
    if (!last || last->kind != AnalysisRequest::Kind::Transient || !(last->transient.stop > 0.0))
      return;
    const std::string why =
        reportLengthShortfall(nl_, last->transient.stop, last->transient.recordFrom);
    if (!why.empty())
      error(last->where, why + ", or leave out the output statement to record without a report");
  }

 public:
  /// Whole-circuit checks: dangling nodes, parts without a path to gnd, voltage loops.
  void topology() {
    Circuit& c = nl_.circuit;
    // Here, not as each statement is read: a heat node may be declared before the heat path
    // that joins it to the ambient (Python adds one statement at a time).
    checkHeatNetwork();
    // A run too long for its step budget is refused here, at its statement, before any work.
    for (const auto& a : nl_.analyses) {
      // A stop time that failed to read is reported where it stands.
      if (a.kind != AnalysisRequest::Kind::Transient || !(a.transient.stop > 0.0)) continue;
      try {
        checkStepBudget(c, a.transient);
      } catch (const InputError& e) {
        error(a.where, e.what());
      }
    }
    reportLength();
    // Ground is written gnd; 0, GND or ground are ordinary nodes, each reported once here and
    // not again as dangling or floating.
    std::set<std::string> groundLike;
    for (const auto& [node, refs] : nodeRefs_) {
      std::string lower = node;
      for (char& ch : lower) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
      if (node != "gnd" && (lower == "0" || lower == "gnd" || lower == "ground")) {
        groundLike.insert(node);
        error(refs.front(), fmt::format("node '{}' is an ordinary node, not ground: ground is "
                                        "written gnd (lower case); write gnd here",
                                        node));
      }
    }
    // A node connected only once is a dangling end, usually a misspelt name (unless the other
    // connection sat in a statement that failed).
    for (const auto& [node, refs] : nodeRefs_)
      if (refs.size() == 1 && !failedNodes_.count(node) && !groundLike.count(node))
        error(refs.front(),
              fmt::format("node '{}' is connected only once (a dangling end): check its spelling",
                          node));
    // Floating parts and loops of voltage-defined elements, by union-find over node ids.
    const int n = c.nodeCount();
    std::vector<int> parent(static_cast<std::size_t>(n) + 1),
        forced(static_cast<std::size_t>(n) + 1);
    std::iota(parent.begin(), parent.end(), 0);
    std::iota(forced.begin(), forced.end(), 0);
    auto find = [](std::vector<int>& p, int a) {
      while (p[static_cast<std::size_t>(a)] != a)
        a = p[static_cast<std::size_t>(a)] =
            p[static_cast<std::size_t>(p[static_cast<std::size_t>(a)])];
      return a;
    };
    auto id = [n](NodeId node) { return node == kGround ? n : node; };
    for (const auto& d : c.devices()) {
      const auto& t = d->terminals();
      for (std::size_t k = 1; k < t.size(); ++k) {
        const int a = find(parent, id(t[0])), b = find(parent, id(t[k]));
        if (a != b) parent[static_cast<std::size_t>(a)] = b;
      }
      // Transformers join their windings magnetically, not electrically: the secondary may float.
      if (t.size() == 4) {
        const int a = find(parent, id(t[0])), b = find(parent, id(t[2]));
        if (a != b) parent[static_cast<std::size_t>(a)] = b;
      }
      if (d->definesVoltage()) {
        const int a = find(forced, id(t[0])), b = find(forced, id(t[1]));
        if (a == b)
          error(deviceWhere_[d->name()], fmt::format("'{}' closes a loop of voltage sources and "
                                                     "inductors: add a small series resistance",
                                                     d->name()));
        else
          forced[static_cast<std::size_t>(a)] = b;
      }
    }
    // Cut sets of current sources and inductors, loops of ideal voltage sources and
    // capacitors, at the source that forces them (a failed statement's, reported already).
    for (const auto& f : forcedStates(c)) {
      const bool reported =
          std::any_of(f.elements.begin(), f.elements.end(),
                      [&](const std::string& x) { return failedElements_.count(x) > 0; }) ||
          std::any_of(f.nodes.begin(), f.nodes.end(), [&](const std::string& x) {
            return failedNodes_.count(x) || groundLike.count(x);
          });
      if (!reported) error(deviceWhere_[f.element], f.message);
    }
    std::map<int, std::vector<std::string>> islands;
    for (NodeId k = 0; k < n; ++k)
      if (find(parent, k) != find(parent, n)) islands[find(parent, k)].push_back(c.nodeName(k));
    for (const auto& [root, names] : islands) {
      if (std::any_of(names.begin(), names.end(), [&](const std::string& x) {
            return failedNodes_.count(x) || groundLike.count(x);
          }))
        continue;  // a failed statement or a ground spelling, reported already
      std::string list;
      list = fmt::format("{}", fmt::join(names, ", "));
      const auto& refs = nodeRefs_[names.front()];
      error(refs.empty() ? SourceLocation{nl_.path, 1, 1} : refs.front(),
            fmt::format("nodes {} form a part of the circuit with no path to gnd", list));
    }
  }
};

}  // namespace detail

Netlist emptyNetlist(const std::string& name) {
  Netlist nl;
  nl.path = name;
  nl.plateTypes = PlateLibrary::builtIn();
  return nl;
}

void appendNetlist(Netlist& nl, const std::string& text, const std::string& name,
                   IncludePolicy policy) {
  detail::Diagnostics diags;
  auto context = detail::ReadContext::start(name, policy);
  auto statements = detail::lex(text, name, diags, context);
  detail::Builder(nl, diags, &context).append(std::move(statements));
  if (!diags.empty()) throw NetlistError(diags.list());
}

void checkNetlist(const Netlist& nl) {
  detail::Diagnostics diags;
  Netlist& mutableNl = const_cast<Netlist&>(nl);  // the builder only reads during the checks
  detail::Builder(mutableNl, diags).topology();
  if (!diags.empty()) throw NetlistError(diags.list());
}

void addElement(Netlist& nl, const std::string& kind, const std::string& name,
                const std::vector<std::string>& nodes,
                const std::vector<std::pair<std::string, std::string>>& params) {
  // The parts become one statement of the language, so every check and message is the same.
  auto quote = [](const std::string& v) {
    return v.find_first_of(" \t#") == std::string::npos ? v : fmt::format("\"{}\"", v);
  };
  std::string text = fmt::format("{} {}", kind, quote(name));
  for (const auto& n : nodes) text += fmt::format(" {}", quote(n));
  for (const auto& [k, v] : params) text += fmt::format(" {}={}", k, quote(v));
  appendNetlist(nl, text, fmt::format("<{} {}>", kind, name));
}

namespace {

Netlist parseWith(const std::string& text, const std::string& name, IncludePolicy policy,
                  const TransientOverrides& overrides) {
  detail::Diagnostics diags;
  auto context = detail::ReadContext::start(name, policy);
  auto statements = detail::lex(text, name, diags, context);
  Netlist nl = emptyNetlist(name);
  detail::Builder b(nl, diags, &context);
  b.append(std::move(statements));
  // Before the checks: a raised step budget is what lets a long run through them.
  b.override(overrides);
  b.topology();
  if (b.defaultAnalysis()) {
    b.override(overrides);
    b.defaultReportLength();
  }
  if (!diags.empty()) throw NetlistError(diags.list());
  return nl;
}

}  // namespace

Netlist parseNetlist(const std::string& text, const std::string& name, IncludePolicy policy) {
  return parseWith(text, name, policy, {});
}

Netlist loadNetlist(const std::string& path, IncludePolicy policy) {
  return loadNetlist(path, policy, {});
}

Netlist loadNetlist(const std::string& path, IncludePolicy policy,
                    const TransientOverrides& overrides) {
  return parseWith(detail::readInputFile(path, InputLimits::kNetlistBytes, "netlist"), path, policy,
                   overrides);
}

const char* analysisWord(AnalysisRequest::Kind kind) {
  switch (kind) {
    case AnalysisRequest::Kind::OperatingPoint:
      return "operating-point";
    case AnalysisRequest::Kind::Transient:
      return "transient";
    case AnalysisRequest::Kind::Periodic:
      return "periodic";
    case AnalysisRequest::Kind::WarmUp:
      return "warm-up";
  }
  return "transient";
}

}  // namespace disc
