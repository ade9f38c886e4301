#include "fit/trace_binning.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <utility>

namespace disc::detail {

BinnedTrace binStatic(const Trace& t, int plates, std::size_t binsPerDirection) {
  BinnedTrace out;
  double vmin = 0, vmax = 0;
  for (double v : t.voltage) {
    vmin = std::min(vmin, v / plates);
    vmax = std::max(vmax, v / plates);
  }
  const double bins = static_cast<double>(binsPerDirection);
  out.forwardWidth = vmax > 0 ? vmax / bins : 0.0;
  out.reverseWidth = vmin < 0 ? -vmin / bins : 0.0;
  struct Sum {
    double v = 0, i = 0, kelvin = 0, n = 0;
    int line = 0;
  };
  // Keyed by (voltage bin, temperature bin): reverse bins are negative, so the points come out
  // in order of voltage.
  std::map<std::pair<long, long>, Sum> sums;
  for (std::size_t k = 0; k < t.size(); ++k) {
    const double v = t.voltage[k] / plates;
    // Clamped as doubles before the cast: the largest |v| falls in the last bin. Zero volts
    // joins the first forward bin.
    long vb = 0;
    if (v > 0)
      vb = static_cast<long>(std::min(v / out.forwardWidth, bins - 1.0));
    else if (v < 0)
      vb = -1 - static_cast<long>(std::min(-v / out.reverseWidth, bins - 1.0));
    const long tb = t.temperature.empty()
                        ? 0
                        : static_cast<long>(std::lround(t.temperature[k] / kTemperatureBin));
    Sum& s = sums[{vb, tb}];
    if (s.n == 0) s.line = t.lines.empty() ? 0 : t.lines[k];
    s.v += t.voltage[k];
    s.i += t.current[k];
    s.kelvin += t.temperature.empty() ? 0.0 : t.temperature[k];
    s.n += 1;
  }
  out.trace.source = t.source;
  for (const auto& [key, s] : sums) {
    out.trace.voltage.push_back(s.v / s.n);
    out.trace.current.push_back(s.i / s.n);
    if (!t.temperature.empty()) out.trace.temperature.push_back(s.kelvin / s.n);
    out.trace.lines.push_back(s.line);
    out.rows.push_back(s.n);
  }
  return out;
}

BinnedTrace binTimed(const Trace& t, std::size_t points, int plates) {
  BinnedTrace out;
  const std::size_t n = t.size();
  out.group = (n + points - 1) / points;
  out.window = n > 1 ? (t.time.back() - t.time.front()) * static_cast<double>(out.group) /
                           static_cast<double>(n - 1)
                     : 0.0;
  out.period = repeatPeriod(t);
  out.trace.source = t.source;
  for (std::size_t a = 0; a < n; a += out.group) {
    const std::size_t b = std::min(n, a + out.group);
    const double rows = static_cast<double>(b - a);
    const auto mean = [&](const std::vector<double>& x) {
      return std::accumulate(x.begin() + static_cast<std::ptrdiff_t>(a),
                             x.begin() + static_cast<std::ptrdiff_t>(b), 0.0) /
             rows;
    };
    out.trace.time.push_back(mean(t.time));
    out.trace.voltage.push_back(mean(t.voltage));
    out.trace.current.push_back(mean(t.current));
    if (!t.temperature.empty()) out.trace.temperature.push_back(mean(t.temperature));
    out.trace.lines.push_back(t.lines.empty() ? 0 : t.lines[a]);
    out.rows.push_back(rows);
    const auto [lo, hi] = std::minmax_element(t.voltage.begin() + static_cast<std::ptrdiff_t>(a),
                                              t.voltage.begin() + static_cast<std::ptrdiff_t>(b));
    out.spans.push_back((*hi - *lo) / plates);
  }
  return out;
}

double repeatPeriod(const Trace& t) {
  if (t.size() < 3 || t.time.size() != t.size()) return 0.0;
  const auto [lo, hi] = std::minmax_element(t.voltage.begin(), t.voltage.end());
  const double mean =
      std::accumulate(t.voltage.begin(), t.voltage.end(), 0.0) / static_cast<double>(t.size());
  const double h = 0.1 * (*hi - *lo);
  if (!(h > 0)) return 0.0;
  bool armed = false;
  int crossings = 0;
  double first = 0, last = 0;
  for (std::size_t k = 0; k < t.size(); ++k) {
    const double v = t.voltage[k];
    if (v < mean - h) armed = true;
    if (armed && v > mean + h) {
      armed = false;
      (crossings++ == 0 ? first : last) = t.time[k];
    }
  }
  return crossings >= 2 ? (last - first) / (crossings - 1) : 0.0;
}

}  // namespace disc::detail
