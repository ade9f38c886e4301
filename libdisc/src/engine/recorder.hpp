// Compiles signal names against a system and appends their values to a Result (private).
#pragma once

#include <deque>
#include <string>
#include <vector>

#include "disc/analysis.hpp"
#include "disc/result.hpp"
#include "system.hpp"

namespace disc::detail {

class Recorder {
 public:
  /// Throws InputError for an unknown node, device or probe, naming what exists.
  Recorder(const System& sys, std::vector<std::string> specs, Result& result);
  /// What a transient keeps (TransientOptions: recordSpacing, sink, keepLast, keepSpread) over
  /// [from, stop]; calls the sink's begin. Without it every row goes straight to the Result.
  void plan(const TransientOptions& o);
  /// Appends one time point.
  void record(const EvalContext& ctx);
  /// Drops every point recorded so far (the signals stay). Not for a planned recorder.
  void clear();
  /// After the run's last point: the last row to the sink if decimation held it back, the
  /// kept rows into the Result, the extents; calls the sink's end.
  void finish();
  /// Values held in memory so far (time included), for the step budget's message.
  std::size_t keptValues() const;
  const Result& result() const { return result_; }

 private:
  struct Signal {
    int a = -1, b = -1;              // node difference x[a] - x[b], or raw unknown (a)
    const Device* device = nullptr;  // probe source
    int probe = -1;
    int instance = 0;  // 1-based instance of a numbered probe, 0: aggregate
  };
  void append(double t, const std::vector<double>& values);  // one row into the Result
  void emit(double t, const std::vector<double>& values);    // a row past decimation
  Result& result_;
  std::vector<Signal> signals_;
  // Planned (a transient): decimation, sink and the bounded Result.
  bool planned_ = false;
  double spacing_ = 0.0, keepLast_ = 0.0, spreadSpacing_ = 0.0;
  RowSink* sink_ = nullptr;
  std::vector<double> values_;  // the row being recorded
  std::size_t rows_ = 0;        // recorded rows
  double lastEmitted_ = 0.0;    // time of the last row past decimation
  bool pending_ = false;        // values_ / pendingTime_ held back by decimation
  double pendingTime_ = 0.0;
  std::vector<double> pendingValues_;
  std::vector<Extent> extents_;
  std::deque<double> tail_;  // keepLast: rows (time, values...) of the last seconds
  double lastSpread_ = 0.0;  // time of the last row kept before the tail
  bool spreadAny_ = false;
};

/// A device quantity named by a signal ("i:R1", "temp:SR1#3"): the device, its probe and the
/// instance of a numbered probe (0: the aggregate).
struct DeviceSignal {
  const Device* device = nullptr;
  int probe = -1;
  int instance = 0;
};
/// Resolves `kind:device[#n]` against a circuit. Throws InputError naming what exists (the
/// probes, the number of instances); the parser checks `record` with it before any run.
DeviceSignal deviceSignal(const Circuit& circuit, const std::string& spec);

/// Throws InputError for `v:a,a`: a difference across one node reads 0 whatever happens.
void checkVoltagePair(const std::string& spec, const std::string& a, const std::string& b);

/// The default signal set: every node voltage and every device current.
std::vector<std::string> defaultSignals(const System& sys);

}  // namespace disc::detail
