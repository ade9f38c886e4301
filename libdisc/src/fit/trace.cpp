// CSV trace reader. Every fault names the line and the column, so a user can find it in the
// file; nothing non-finite gets through to the fit.
#include "disc/trace.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <fstream>
#include <optional>
#include <sstream>

#include "core/safe_io.hpp"
#include "disc/limits.hpp"

namespace disc {
namespace {

enum class Quantity { Time, Voltage, Current, Temperature, Other };

struct Column {
  std::string header;  // as written
  Quantity quantity = Quantity::Other;
  double scale = 1.0, offset = 0.0;  // SI = value * scale + offset
};

std::string trim(std::string_view s) {
  std::size_t b = 0, e = s.size();
  while (b < e && std::isspace(static_cast<unsigned char>(s[b]))) ++b;
  while (e > b && std::isspace(static_cast<unsigned char>(s[e - 1]))) --e;
  return std::string(s.substr(b, e - b));
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return s;
}

std::vector<std::string> split(const std::string& line, char sep) {
  std::vector<std::string> cells;
  std::string cell;
  std::istringstream in(line);
  while (std::getline(in, cell, sep)) cells.push_back(trim(cell));
  if (!line.empty() && line.back() == sep) cells.emplace_back();
  return cells;
}

struct UnitSpec {
  const char* unit;
  Quantity quantity;
  double scale, offset;
};

constexpr UnitSpec kUnits[] = {{"s", Quantity::Time, 1.0, 0.0},
                               {"ms", Quantity::Time, 1e-3, 0.0},
                               {"us", Quantity::Time, 1e-6, 0.0},
                               {"v", Quantity::Voltage, 1.0, 0.0},
                               {"mv", Quantity::Voltage, 1e-3, 0.0},
                               {"kv", Quantity::Voltage, 1e3, 0.0},
                               {"a", Quantity::Current, 1.0, 0.0},
                               {"ma", Quantity::Current, 1e-3, 0.0},
                               {"ua", Quantity::Current, 1e-6, 0.0},
                               {"k", Quantity::Temperature, 1.0, 0.0},
                               {"degc", Quantity::Temperature, 1.0, 273.15},
                               {"c", Quantity::Temperature, 1.0, 273.15}};

std::optional<Quantity> quantityOfName(const std::string& name) {
  const std::string n = lower(name);
  if (n == "time" || n == "t") return Quantity::Time;
  if (n == "voltage" || n == "v" || n == "u") return Quantity::Voltage;
  if (n == "current" || n == "i") return Quantity::Current;
  if (n == "temperature" || n == "temp") return Quantity::Temperature;
  return std::nullopt;
}

struct QuantityWords {
  const char* name;
  const char* units;
};

// Indexed by Quantity.
constexpr QuantityWords kWords[] = {{"time", "s, ms or us"},
                                    {"voltage", "V, mV or kV"},
                                    {"current", "A, mA or uA"},
                                    {"temperature", "K or degC"},
                                    {"other", ""}};

const char* quantityName(Quantity q) {
  return kWords[static_cast<int>(q)].name;
}
const char* unitsOf(Quantity q) {
  return kWords[static_cast<int>(q)].units;
}

Column parseHeaderCell(const std::string& cell, const std::string& file, int line, int col) {
  Column c;
  c.header = cell;
  const auto open = cell.find_first_of("[(");
  const std::string name = trim(cell.substr(0, open));
  const auto q = quantityOfName(name);
  if (!q) return c;  // a column the fit does not use (a channel note, a sample number)
  c.quantity = *q;
  if (open == std::string::npos)
    throw TraceError(file, line, col, cell,
                     fmt::format("the {} column has no unit: write it as '{} [unit]' with the "
                                 "unit one of {}",
                                 quantityName(*q), name, unitsOf(*q)));
  const char close = cell[open] == '[' ? ']' : ')';
  const auto end = cell.find(close, open);
  if (end == std::string::npos)
    throw TraceError(file, line, col, cell, "unclosed unit bracket in the header");
  std::string unit = lower(trim(cell.substr(open + 1, end - open - 1)));
  // Accept the micro sign and the degree sign as people type them.
  for (const std::string micro : {"\xc2\xb5", "\xce\xbc"})
    if (unit.rfind(micro, 0) == 0) unit = "u" + unit.substr(micro.size());
  if (unit ==
      "\xc2\xb0"
      "c")
    unit = "degc";
  for (const auto& u : kUnits)
    if (unit == u.unit && u.quantity == *q) {
      c.scale = u.scale;
      c.offset = u.offset;
      return c;
    }
  throw TraceError(file, line, col, cell,
                   fmt::format("unknown unit '{}' for the {} column: use {}", excerpt(unit),
                               quantityName(*q), unitsOf(*q)));
}

double parseCell(const std::string& cell, const std::string& file, int line, int col,
                 const Column& column) {
  if (cell.empty())
    throw TraceError(file, line, col, column.header, "empty cell: every row needs a value here");
  double value = 0.0;
  const char* b = cell.data();
  const char* e = b + cell.size();
  if (*b == '+') ++b;
  const auto r = std::from_chars(b, e, value);
  if (r.ec != std::errc() || r.ptr != e) {
    const std::string hint =
        cell.find(',') != std::string::npos ? " (the decimal separator must be '.')" : "";
    throw TraceError(file, line, col, column.header,
                     fmt::format("'{}' is not a number{}", excerpt(cell), hint));
  }
  if (!std::isfinite(value))
    throw TraceError(
        file, line, col, column.header,
        fmt::format("'{}' is not a finite number: remove or repair the row", excerpt(cell)));
  return value * column.scale + column.offset;
}

}  // namespace

TraceError::TraceError(const std::string& file, int line, int column, const std::string& columnName,
                       const std::string& message)
    : InputError(column > 0 ? fmt::format("{}:{}: column {} '{}': {}", excerpt(file), line, column,
                                          excerpt(columnName), message)
                 : line > 0 ? fmt::format("{}:{}: {}", excerpt(file), line, message)
                            : fmt::format("{}: {}", excerpt(file), message)),
      file_(file),
      line_(line),
      column_(column),
      columnName_(columnName) {}

Trace parseTrace(const std::string& input, const std::string& name) {
  std::string text = input;
  detail::stripBom(text);
  if (const std::size_t bad = detail::invalidUtf8At(text); bad != std::string::npos) {
    int line = 0, col = 0;
    detail::lineColumnOf(text, bad, line, col);
    throw TraceError(name, line, 0, "",
                     fmt::format("byte {} of the line (0x{:02x}) is not UTF-8 text: export the "
                                 "trace as UTF-8 or ASCII CSV",
                                 col, static_cast<unsigned char>(text[bad])));
  }
  Trace trace;
  trace.source = name;
  std::istringstream in(text);
  std::string raw;
  int lineNo = 0;
  std::vector<Column> columns;
  char sep = ',';
  int headerLine = 0;
  int index[4] = {-1, -1, -1, -1};
  while (std::getline(in, raw)) {
    ++lineNo;
    if (!raw.empty() && raw.back() == '\r') raw.pop_back();
    const std::string line = trim(raw);
    if (line.empty() || line[0] == '#') continue;
    if (columns.empty()) {
      sep = line.find('\t') != std::string::npos  ? '\t'
            : line.find(';') != std::string::npos ? ';'
                                                  : ',';
      const auto cells = split(line, sep);
      for (std::size_t k = 0; k < cells.size(); ++k) {
        const int col = static_cast<int>(k) + 1;
        Column c = parseHeaderCell(cells[k], name, lineNo, col);
        if (c.quantity != Quantity::Other) {
          int& slot = index[static_cast<int>(c.quantity)];
          if (slot >= 0)
            throw TraceError(name, lineNo, col, cells[k],
                             fmt::format("a second {} column (the first is column {})",
                                         quantityName(c.quantity), slot + 1));
          slot = static_cast<int>(k);
        }
        columns.push_back(c);
      }
      headerLine = lineNo;
      for (Quantity q : {Quantity::Voltage, Quantity::Current})
        if (index[static_cast<int>(q)] < 0)
          throw TraceError(name, lineNo, 0, "",
                           fmt::format("the header names no {} column: a trace needs "
                                       "'voltage [V]' and 'current [mA]' (or other units) at "
                                       "least; the header read was '{}'",
                                       quantityName(q), excerpt(line)));
      continue;
    }
    const auto cells = split(line, sep);
    if (cells.size() != columns.size())
      throw TraceError(name, lineNo, 0, "",
                       fmt::format("{} cells in this row, but the header (line {}) names {} "
                                   "columns{}",
                                   cells.size(), headerLine, columns.size(),
                                   sep == ',' && cells.size() > columns.size()
                                       ? " (a decimal comma? the decimal separator must be '.')"
                                       : ""));
    const auto cellOf = [&](Quantity q) {
      const int k = index[static_cast<int>(q)];
      return parseCell(cells[k], name, lineNo, k + 1, columns[k]);
    };
    if (index[0] >= 0) {
      const double t = cellOf(Quantity::Time);
      if (!trace.time.empty() && !(t > trace.time.back()))
        throw TraceError(name, lineNo, index[0] + 1, columns[index[0]].header,
                         "time does not increase from the row before: sort the rows by time or "
                         "remove repeated samples");
      trace.time.push_back(t);
    }
    trace.voltage.push_back(cellOf(Quantity::Voltage));
    trace.current.push_back(cellOf(Quantity::Current));
    if (index[3] >= 0) {
      const double kelvin = cellOf(Quantity::Temperature);
      if (kelvin <= 0.0)
        throw TraceError(name, lineNo, index[3] + 1, columns[index[3]].header,
                         "temperature below absolute zero: check the unit (K or degC)");
      trace.temperature.push_back(kelvin);
    }
    trace.lines.push_back(lineNo);
  }
  if (columns.empty())
    throw TraceError(name, std::max(lineNo, 1), 0, "",
                     "the file is empty: expected a header line such as 'voltage [V], current "
                     "[mA]' followed by one row per measured point");
  if (trace.size() == 0)
    throw TraceError(name, headerLine, 0, "", "the header is followed by no data rows");
  return trace;
}

Trace loadTrace(const std::string& path) {
  std::string text;
  try {
    text = detail::readInputFile(path, InputLimits::kTraceBytes, "trace file");
  } catch (const InputError& e) {
    std::string why = e.what();
    const std::string self = excerpt(path) + ": ";
    if (why.rfind(self, 0) == 0) why.erase(0, self.size());
    throw TraceError(path, 0, 0, "", why);
  }
  return parseTrace(text, path);
}

Trace traceFromColumns(std::vector<double> voltage, std::vector<double> current,
                       std::vector<double> time, std::vector<double> temperature,
                       const std::string& source) {
  const std::size_t n = voltage.size();
  const auto sameLength = [&](const std::vector<double>& column, const char* what, bool optional) {
    if (optional && column.empty()) return;
    if (column.size() != n)
      throw TraceError(source, 0, 0, what,
                       fmt::format("{} has {} values but voltage has {}: every column needs one "
                                   "value per point",
                                   what, column.size(), n));
  };
  sameLength(current, "current", false);
  sameLength(time, "time", true);
  sameLength(temperature, "temperature", true);
  if (n == 0) throw TraceError(source, 0, 0, "", "the trace has no points");
  const auto finite = [&](const std::vector<double>& column, const char* what, const char* unit) {
    for (std::size_t k = 0; k < column.size(); ++k)
      if (!std::isfinite(column[k]))
        throw TraceError(source, static_cast<int>(k) + 1, 0, what,
                         fmt::format("{} {} {} is not a finite number: remove or repair the point",
                                     what, column[k], unit));
  };
  finite(time, "time", "s");
  finite(voltage, "voltage", "V");
  finite(current, "current", "A");
  finite(temperature, "temperature", "K");
  for (std::size_t k = 1; k < time.size(); ++k)
    if (!(time[k] > time[k - 1]))
      throw TraceError(source, static_cast<int>(k) + 1, 0, "time",
                       "time does not increase from the point before: sort the points by time "
                       "or remove repeated samples");
  for (std::size_t k = 0; k < temperature.size(); ++k)
    if (temperature[k] <= 0.0)
      throw TraceError(source, static_cast<int>(k) + 1, 0, "temperature",
                       "temperature below absolute zero: check the unit (K or degC)");
  Trace t;
  t.source = source;
  t.voltage = std::move(voltage);
  t.current = std::move(current);
  t.time = std::move(time);
  t.temperature = std::move(temperature);
  t.lines.resize(n);
  for (std::size_t k = 0; k < n; ++k) t.lines[k] = static_cast<int>(k) + 1;
  return t;
}

}  // namespace disc
