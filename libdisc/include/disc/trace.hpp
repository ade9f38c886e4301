// A measured current-voltage trace of a plate or stack, read from a CSV file (docs/fitting.md).
#pragma once

#include <string>
#include <vector>

#include "disc/error.hpp"

namespace disc {

/// A fault in a trace file, located by line (1-based, counting every line of the file) and by
/// column (1-based position and header name; 0 and empty when the fault is not in one cell).
class TraceError : public InputError {
 public:
  TraceError(const std::string& file, int line, int column, const std::string& columnName,
             const std::string& message);
  const std::string& file() const { return file_; }
  int line() const { return line_; }
  int column() const { return column_; }
  const std::string& columnName() const { return columnName_; }

 private:
  std::string file_;
  int line_, column_;
  std::string columnName_;
};

/// One trace in SI units. Voltages and currents are as measured across the whole stack; the
/// fit divides by the plate count. Columns not given are empty.
struct Trace {
  std::string source;               ///< file name (or a name given for text)
  std::vector<double> time;         ///< s (a dynamic trace), strictly increasing
  std::vector<double> voltage;      ///< V, anode to cathode (forward positive)
  std::vector<double> current;      ///< A, forward positive
  std::vector<double> temperature;  ///< K, plate temperature
  std::vector<int> lines;           ///< the file line of each point
  std::size_t size() const { return voltage.size(); }
  bool dynamic() const { return !time.empty(); }
};

/// Parses CSV text: optional '#' comment lines, a header naming columns with units in brackets
/// ("time [ms], voltage [V], current [mA], temperature [degC]"), then one row per point.
/// Separators: comma, semicolon or tab; decimal point '.'. Throws TraceError.
Trace parseTrace(const std::string& text, const std::string& name = "<trace>");
/// Reads and parses a trace file; throws TraceError (also when the file cannot be read).
Trace loadTrace(const std::string& path);
/// A trace from columns of numbers (SI units; `time` and `temperature` may be empty), checked
/// as a file's rows are: equal lengths, at least one point, every value finite, time strictly
/// increasing, temperatures above 0 K. Throws TraceError naming `source` and the point
/// (numbered from 1, in place of a file's line).
Trace traceFromColumns(std::vector<double> voltage, std::vector<double> current,
                       std::vector<double> time, std::vector<double> temperature,
                       const std::string& source = "<arrays>");

}  // namespace disc
