// SI prefixes (SI Brochure, 9th ed., table 7), unit symbols, and the minute and hour (table 8:
// non-SI units accepted for use with the SI).
#include "units.hpp"

#include <fmt/format.h>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <utility>
#include <vector>

#include "disc/limits.hpp"

namespace disc::detail {
namespace {

struct Unit {
  const char* symbol;
  Dim dim;
  bool prefixable;
  double factor = 1.0;  // to the SI unit
};

const std::vector<Unit>& units() {
  static const std::vector<Unit> u = {
      {"V", Dim::Voltage, true},
      {"A", Dim::Current, true},
      {"ohm", Dim::Resistance, true},
      {"\xCE\xA9", Dim::Resistance, true},  // Ω
      {"F", Dim::Capacitance, true},
      {"H", Dim::Inductance, true},
      {"Hz", Dim::Frequency, true},
      {"s", Dim::Time, true},
      {"min", Dim::Time, false, 60.0},
      {"h", Dim::Time, false, 3600.0},
      {"W", Dim::Power, true},
      {"J", Dim::Energy, true},
      {"K", Dim::Temperature, false},
      {"degC", Dim::Temperature, false},
      {"\xC2\xB0"
       "C",
       Dim::Temperature, false},  // °C
      {"deg", Dim::Angle, false},
      {"K/W", Dim::ThermalResistance, false},
      {"W/K", Dim::ThermalConductance, true},
      {"J/K", Dim::HeatCapacity, true},
  };
  return u;
}

const std::vector<std::pair<std::string, double>>& prefixes() {
  static const std::vector<std::pair<std::string, double>> p = {
      {"p", 1e-12}, {"n", 1e-9}, {"u", 1e-6}, {"\xC2\xB5", 1e-6} /* µ */,
      {"m", 1e-3},  {"k", 1e3},  {"M", 1e6},  {"G", 1e9}};
  return p;
}

const Unit* unitOf(const std::string& s) {
  for (const auto& u : units())
    if (s == u.symbol) return &u;
  return nullptr;
}

/// The unit a look-alike suffix most likely means ("C" degC, "mfd" uF, "sec" s ...), or "":
/// period and everyday spellings, and known units in the wrong case.
std::string lookAlike(const std::string& suffix, Dim dim) {
  struct Alias {
    const char* spelling;
    const char* unit;
    Dim dim;
  };
  static const std::vector<Alias> aliases = {{"c", "degC", Dim::Temperature},
                                             {"degc", "degC", Dim::Temperature},
                                             {"deg", "degC", Dim::Temperature},
                                             {"mfd", "uF", Dim::Capacitance},
                                             {"mf", "uF", Dim::Capacitance},
                                             {"ufd", "uF", Dim::Capacitance},
                                             {"mmfd", "pF", Dim::Capacitance},
                                             {"mmf", "pF", Dim::Capacitance},
                                             {"uuf", "pF", Dim::Capacitance},
                                             {"pfd", "pF", Dim::Capacitance},
                                             {"sec", "s", Dim::Time},
                                             {"secs", "s", Dim::Time},
                                             {"msec", "ms", Dim::Time},
                                             {"usec", "us", Dim::Time},
                                             {"mins", "min", Dim::Time},
                                             {"hr", "h", Dim::Time},
                                             {"hrs", "h", Dim::Time},
                                             {"hour", "h", Dim::Time},
                                             {"hours", "h", Dim::Time},
                                             {"ohms", "ohm", Dim::Resistance},
                                             {"r", "ohm", Dim::Resistance},
                                             {"kohms", "kohm", Dim::Resistance},
                                             {"megohm", "Mohm", Dim::Resistance},
                                             {"meg", "Mohm", Dim::Resistance},
                                             {"amp", "A", Dim::Current},
                                             {"amps", "A", Dim::Current},
                                             {"volt", "V", Dim::Voltage},
                                             {"volts", "V", Dim::Voltage},
                                             {"watt", "W", Dim::Power},
                                             {"watts", "W", Dim::Power},
                                             {"cps", "Hz", Dim::Frequency},
                                             {"kc", "kHz", Dim::Frequency}};
  std::string lower = suffix;
  for (char& ch : lower) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  for (const auto& a : aliases)
    if (lower == a.spelling && a.dim == dim) return a.unit;
  // A known unit, or a prefix and a unit, written in another case ("uf", "KV", "hz").
  for (const auto& u : units()) {
    std::string ul = u.symbol;
    for (char& ch : ul) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    if (lower == ul && u.dim == dim) return u.symbol;
    if (!u.prefixable || u.dim != dim) continue;
    for (const auto& [p, factor] : prefixes()) {
      std::string pl = p;
      for (char& ch : pl) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
      if (lower == pl + ul) {
        // m and M differ only in case: with that prefix in the wrong case there is no guess.
        return (p == "M" && suffix[0] == 'm') || (p == "m" && suffix[0] == 'M')
                   ? ""
                   : std::string(p) + u.symbol;
      }
    }
  }
  return "";
}

}  // namespace

const char* dimName(Dim d) {
  switch (d) {
    case Dim::None:
      return "a plain number";
    case Dim::Voltage:
      return "a voltage";
    case Dim::Current:
      return "a current";
    case Dim::Resistance:
      return "a resistance";
    case Dim::Capacitance:
      return "a capacitance";
    case Dim::Inductance:
      return "an inductance";
    case Dim::Frequency:
      return "a frequency";
    case Dim::Time:
      return "a time";
    case Dim::Power:
      return "a power";
    case Dim::Energy:
      return "an energy";
    case Dim::Temperature:
      return "a temperature";
    case Dim::Angle:
      return "an angle";
    case Dim::ThermalResistance:
      return "a thermal resistance";
    case Dim::ThermalConductance:
      return "a thermal conductance";
    case Dim::HeatCapacity:
      return "a heat capacity";
  }
  return "?";
}

const char* dimUnit(Dim d) {
  switch (d) {
    case Dim::Voltage:
      return "V";
    case Dim::Current:
      return "A";
    case Dim::Resistance:
      return "ohm";
    case Dim::Capacitance:
      return "F";
    case Dim::Inductance:
      return "H";
    case Dim::Frequency:
      return "Hz";
    case Dim::Time:
      return "s";
    case Dim::Power:
      return "W";
    case Dim::Energy:
      return "J";
    case Dim::Temperature:
      return "K or degC";
    case Dim::Angle:
      return "deg";
    case Dim::ThermalResistance:
      return "K/W";
    case Dim::ThermalConductance:
      return "W/K";
    case Dim::HeatCapacity:
      return "J/K";
    default:
      return "";
  }
}

Dim dimOfUnit(const std::string& symbol) {
  const Unit* u = unitOf(symbol);
  return u ? u->dim : Dim::None;
}

std::optional<double> parseQuantity(const std::string& text, Dim dim, std::string& error) {
  // The numeric part: [+-] digits [. digits] [e [+-] digits].
  std::size_t k = 0;
  if (k < text.size() && (text[k] == '+' || text[k] == '-')) ++k;
  const std::size_t digitsStart = k;
  while (k < text.size() && std::isdigit(static_cast<unsigned char>(text[k]))) ++k;
  if (k < text.size() && text[k] == '.') {
    ++k;
    while (k < text.size() && std::isdigit(static_cast<unsigned char>(text[k]))) ++k;
  }
  if (k == digitsStart || (k == digitsStart + 1 && text[digitsStart] == '.')) {
    error = fmt::format("'{}' is not a number", excerpt(text));
    return std::nullopt;
  }
  if (k < text.size() && (text[k] == 'e' || text[k] == 'E')) {
    std::size_t e = k + 1;
    if (e < text.size() && (text[e] == '+' || text[e] == '-')) ++e;
    const std::size_t expDigits = e;
    while (e < text.size() && std::isdigit(static_cast<unsigned char>(text[e]))) ++e;
    if (e > expDigits) k = e;  // otherwise 'e' is not an exponent (no unit starts with e)
  }
  double value = std::strtod(text.substr(0, k).c_str(), nullptr);
  const std::string suffix = text.substr(k);
  double scale = 1.0;
  const Unit* unit = nullptr;
  if (!suffix.empty()) {
    unit = unitOf(suffix);
    if (!unit) {
      for (const auto& [p, factor] : prefixes()) {
        if (suffix.compare(0, p.size(), p) != 0) continue;
        const std::string rest = suffix.substr(p.size());
        const Unit* u = rest.empty() ? nullptr : unitOf(rest);
        if (rest.empty() || (u && u->prefixable)) {
          scale = factor;
          unit = u;
          break;
        }
      }
      if (scale == 1.0 && !unit) {
        const std::string like = lookAlike(suffix, dim);
        error = fmt::format(
            "'{}': '{}' is neither an SI prefix nor a unit (prefixes p n u m k M G; "
            "units V A ohm F H Hz s min h W J K degC K/W W/K J/K){}",
            excerpt(text), excerpt(suffix),
            like.empty() ? "" : fmt::format("; did you mean {}{}?", text.substr(0, k), like));
        return std::nullopt;
      }
    }
  }
  if (unit && unit->dim != dim) {
    // 1.25K (kelvin) for 1.25k (kilo), 1F for 1fF ...: the prefix in the wrong case.
    std::string like;
    if (scale == 1.0 && suffix == "K" && dim != Dim::Temperature && dim != Dim::None)
      like = fmt::format("; did you mean {}k (kilo is a lower-case k)?", text.substr(0, k));
    else if (scale == 1.0 && suffix == "C" && dim == Dim::Temperature)
      like = fmt::format("; did you mean {}degC?", text.substr(0, k));
    error =
        fmt::format("'{}' is {}, but this parameter is {}{}{}", excerpt(text), dimName(unit->dim),
                    dimName(dim), dim == Dim::None ? "" : fmt::format(" ({})", dimUnit(dim)), like);
    return std::nullopt;
  }
  value *= scale * (unit ? unit->factor : 1.0);
  if (unit && (std::string(unit->symbol) == "degC" || std::string(unit->symbol) == "\xC2\xB0"
                                                                                   "C"))
    value += 273.15;
  else if (!unit && dim == Dim::Temperature && scale == 1.0) {
    // A bare temperature is taken as kelvin; a value below 150 is almost surely meant as degC.
    if (value < 150.0) {
      const std::string q = excerpt(text);
      error = fmt::format("'{}': give a unit for temperatures ({}degC or {}K)", q, q, q);
      return std::nullopt;
    }
  }
  if (!std::isfinite(value)) {
    error = fmt::format("'{}' is not a finite number", excerpt(text));
    return std::nullopt;
  }
  return value;
}

}  // namespace disc::detail
