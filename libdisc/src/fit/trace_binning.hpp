// Binning of long traces before a fit (private; docs/fitting.md, "Long traces"). A bin is one
// point of the fit: the means of its rows, weighted by the square root of its row count, so a
// fit of a million rows costs what one of a few thousand does.
#pragma once

#include <cstddef>
#include <vector>

#include "disc/trace.hpp"

namespace disc::detail {

struct BinnedTrace {
  Trace trace;               ///< one point per bin, the means of its rows (same volts as the input)
  std::vector<double> rows;  ///< rows binned into each point
  double forwardWidth = 0;   ///< static: width of a forward voltage bin, V per plate
  double reverseWidth = 0;   ///< static: width of a reverse voltage bin, V per plate
  std::size_t group = 0;     ///< timed: rows per group (the last one may be shorter)
  double window = 0;         ///< timed: s, a group's span (group x mean sample interval)
  double period = 0;         ///< timed: s, the voltage's repeat period (0: none found)
  std::vector<double> spans;  ///< timed: per point, its rows' voltage span, V per plate
};

/// Width of a temperature bin of a static trace, K.
inline constexpr double kTemperatureBin = 0.5;

/// A static trace in `binsPerDirection` equal voltage bins from 0 to the largest forward and
/// from 0 to the largest reverse voltage per plate (`plates` in series), and 0.5 K temperature
/// bins; only occupied bins become points, in order of voltage.
BinnedTrace binStatic(const Trace& t, int plates, std::size_t binsPerDirection);

/// A timed trace in consecutive groups of equal size, at most `points` of them, so it stays a
/// time series the transient model can be driven by (`plates` in series, for the spans).
BinnedTrace binTimed(const Trace& t, std::size_t points, int plates);

/// The repeat period of a timed trace's voltage, s: the mean spacing of its upward crossings of
/// the mean voltage (with a hysteresis of a tenth of the swing, so noise does not count); 0
/// when it crosses upward fewer than twice.
double repeatPeriod(const Trace& t);

}  // namespace disc::detail
