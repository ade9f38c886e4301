// The analyses' numeric settings and their ranges, one table for the parser and the bindings.
#include "disc/analysis_settings.hpp"

#include <fmt/format.h>

#include <cmath>
#include <string>

#include "disc/error.hpp"
#include "disc/limits.hpp"

namespace disc {

const std::vector<AnalysisSetting>& analysisSettings() {
  // reltol at 0.1 and above no longer controls the error; abstol below about 1e-6 relative
  // accuracy, not reltol, sets it, so above 1e-3 V or A it would hide the signal itself. A
  // warm-up judges temperatures over hours and accepts a coarser floor than a transient.
  static const std::vector<AnalysisSetting> table = {
      {"reltol", "", "", 0.0, 0.1, false},
      {"abstol", "", "", 0.0, 1e-3, true},
      {"temperature-abstol", "warm-up", "K", 0.0, 10.0, true},
      {"temperature-abstol", "", "K", 0.0, 1.0, true},
      {"periodic-reltol", "", "", 0.0, 0.1, false},
      {"max-steps", "", "", 1.0, static_cast<double>(RunLimits::kMaxSteps), true},
  };
  return table;
}

double checkSetting(std::string_view name, double value, std::string_view analysis) {
  for (const auto& s : analysisSettings()) {
    if (name != s.name || (*s.analysis && analysis != s.analysis)) continue;
    if (name == "max-steps") {
      // Written so that NaN fails too.
      if (!(value >= s.lo && value <= s.hi))
        throw InputError(fmt::format("max-steps must lie between 1 and {}, got {:g}",
                                     RunLimits::kMaxSteps, value));
      return value;
    }
    const std::string unit = *s.unit ? fmt::format(" ({})", s.unit) : std::string();
    const bool inside = value > s.lo && (s.hiIncluded ? value <= s.hi : value < s.hi);
    if (!inside)
      throw InputError(s.hiIncluded
                           ? fmt::format("{}{} must lie above {:g} and at most {:g}, got {:g}",
                                         s.name, unit, s.lo, s.hi, value)
                           : fmt::format("{}{} must lie between {:g} and {:g}, got {:g}", s.name,
                                         unit, s.lo, s.hi, value));
    return value;
  }
  throw Error(fmt::format("checkSetting: no setting named '{}'", name));
}

long long stepBudget(double value) {
  return static_cast<long long>(std::ceil(checkSetting("max-steps", value)));
}

}  // namespace disc
