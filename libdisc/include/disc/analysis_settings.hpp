// The numeric settings of the analyses by their netlist names, with their ranges.
#pragma once

#include <cstdint>
#include <string_view>
#include <vector>

namespace disc {

/// The largest `seed=` a netlist (or the Python builder) may give a stack's spread draw. Only
/// the input is limited: campaigns seed their variants' stacks with full 64-bit draws.
inline constexpr std::uint64_t kMaxStackSeed = 1000000000;

/// One numeric setting of a run statement and the range it may take. The netlist parser and the
/// Python module check every value of these through checkSetting(), so a value is refused in the
/// same words wherever it comes from (docs/netlist.md).
struct AnalysisSetting {
  const char* name;      ///< as the netlist writes it: "reltol", "abstol", ...
  const char* analysis;  ///< "" for every analysis, or the one it differs on ("warm-up")
  const char* unit;      ///< "" or the unit the message names ("K")
  double lo, hi;
  bool hiIncluded;  ///< (lo, hi] when true, (lo, hi) when false; [lo, hi] for max-steps
};

/// Every setting: reltol, abstol, temperature-abstol (a wider range on a warm-up),
/// periodic-reltol, max-steps.
const std::vector<AnalysisSetting>& analysisSettings();

/// `value` when it lies in the named setting's range (that of `analysis` where it has its own);
/// throws InputError naming the range and the value otherwise (NaN and infinities included).
/// An unknown name is a logic error (Error).
double checkSetting(std::string_view name, double value, std::string_view analysis = "");

/// The step budget a max-steps value asks for: checked as checkSetting("max-steps") does,
/// rounded up to a whole number of steps.
long long stepBudget(double value);

}  // namespace disc
