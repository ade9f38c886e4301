// Results of an analysis: time points and recorded signals as contiguous columns.
#pragma once

#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "disc/failure.hpp"

namespace disc {

/// Work counters of one analysis run.
struct RunStats {
  std::string method;  ///< "operating-point", "trapezoidal", "bdf2" or "ida"
  long acceptedSteps = 0;
  long rejectedSteps = 0;  ///< truncation-error and Newton-failure rejections together
  long newtonIterations = 0;
  long factorizations = 0;
  long evaluations = 0;  ///< device-evaluation sweeps
  int unknowns = 0;
  double wallSeconds = 0.0;
};

/// A recorded signal over every row a run recorded, whether the Result keeps the row or not
/// (a decimated or bounded transient keeps fewer rows than it records).
struct Extent {
  double first = 0, last = 0, min = 0, max = 0;
};

/// Columnar results. Each signal is one contiguous std::vector<double> as long as time().
class Result {
 public:
  const std::vector<double>& time() const { return time_; }
  const std::vector<std::string>& signals() const { return names_; }
  bool has(std::string_view signal) const;
  /// The column of a signal; throws InputError naming the available signals if absent.
  const std::vector<double>& operator[](std::string_view signal) const;
  /// Unit symbol of a signal ("V", "A", "W", "K", ...).
  const std::string& unit(std::string_view signal) const;
  /// The signal's first, last, least and largest value over every row the run recorded (a
  /// transient's rows from its record-from time, before any decimation); from the kept rows
  /// when the run did not track them. All zero without rows.
  Extent extent(std::string_view signal) const;
  /// Rows the run recorded, kept or not: time().size() unless the run was decimated or kept
  /// only part of its rows in memory (TransientOptions::recordSpacing, keepLast).
  std::size_t recordedRows() const { return tracked_ ? recorded_ : time_.size(); }
  const RunStats& stats() const { return stats_; }
  /// Runaways detected and bodies destroyed, in order of time. A destruction ends the run: the
  /// last time point is the step that crossed the destruction temperature.
  const std::vector<FailureEvent>& failures() const { return failures_; }
  /// True when a body was destroyed (the run ended there).
  bool failed() const;

  // Filled by the engine.
  void addSignal(std::string name, std::string unit);
  void reserve(std::size_t points);
  std::vector<double>& timeColumn() { return time_; }
  std::vector<double>& column(std::size_t k) { return columns_[k]; }
  RunStats& stats() { return stats_; }
  std::vector<FailureEvent>& failureEvents() { return failures_; }
  /// The extents over every recorded row, in signal order, and how many rows there were.
  void setRecorded(std::vector<Extent> extents, std::size_t rows);

 private:
  std::size_t indexOf(std::string_view signal) const;
  std::vector<double> time_;
  std::vector<std::string> names_;
  std::vector<std::string> units_;
  std::vector<std::vector<double>> columns_;
  std::unordered_map<std::string, std::size_t> index_;
  RunStats stats_;
  std::vector<FailureEvent> failures_;
  std::vector<Extent> extents_;
  std::size_t recorded_ = 0;
  bool tracked_ = false;  // extents_ and recorded_ were set by the run
};

/// Receives a run's rows as it records them, in time order (a CSV file written as the run
/// goes, say); TransientOptions::sink.
class RowSink {
 public:
  virtual ~RowSink() = default;
  /// Before the first row: `layout` has the signals, their units and no rows.
  virtual void begin(const Result& layout) = 0;
  /// One row: its time and one value per signal, in the layout's order.
  virtual void row(double time, const std::vector<double>& values) = 0;
  /// After the last row of a run that completed (not called when the run throws).
  virtual void end() = 0;
};

}  // namespace disc
