// Compiles signal names against a system and appends their values to a Result (private).
#pragma once

#include <string>
#include <vector>

#include "disc/result.hpp"
#include "system.hpp"

namespace disc::detail {

class Recorder {
 public:
  /// Throws InputError for an unknown node, device or probe, naming what exists.
  Recorder(const System& sys, std::vector<std::string> specs, Result& result);
  /// Appends one time point.
  void record(const EvalContext& ctx);
  /// Drops every point recorded so far (the signals stay).
  void clear();
  const Result& result() const { return result_; }

 private:
  struct Signal {
    int a = -1, b = -1;              // node difference x[a] - x[b], or raw unknown (a)
    const Device* device = nullptr;  // probe source
    int probe = -1;
    int instance = 0;  // 1-based instance of a numbered probe, 0: aggregate
  };
  Result& result_;
  std::vector<Signal> signals_;
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
