// Waveform figures.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "disc/error.hpp"
#include "disc/measures.hpp"

namespace disc::measure {
namespace {

void checkWindow(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  if (t.size() != y.size()) throw InputError("measure: time and value columns differ in length");
  if (t.size() < 2) throw InputError("measure: at least two points are needed");
  if (!(t1 > t0) || t0 < t.front() - 1e-15 || t1 > t.back() + 1e-15)
    throw InputError(fmt::format("measure: window [{}, {}] s lies outside the data [{}, {}] s", t0,
                                 t1, t.front(), t.back()));
}

double at(const std::vector<double>& t, const std::vector<double>& y, double when) {
  auto it = std::lower_bound(t.begin(), t.end(), when);
  if (it == t.begin()) return y.front();
  if (it == t.end()) return y.back();
  const std::size_t k = static_cast<std::size_t>(it - t.begin());
  if (t[k] == t[k - 1]) return y[k];
  return y[k - 1] + (y[k] - y[k - 1]) * (when - t[k - 1]) / (t[k] - t[k - 1]);
}

/// Calls f(ta, ya, tb, yb) for every interpolated segment inside [t0, t1].
template <class F>
void segments(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1,
              F&& f) {
  double ta = t0, ya = at(t, y, t0);
  auto k = static_cast<std::size_t>(std::upper_bound(t.begin(), t.end(), t0) - t.begin());
  for (; k < t.size() && t[k] < t1; ++k) {
    f(ta, ya, t[k], y[k]);
    ta = t[k];
    ya = y[k];
  }
  f(ta, ya, t1, at(t, y, t1));
}

}  // namespace

double integral(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double s = 0.0;
  segments(t, y, t0, t1,
           [&](double a, double ya, double b, double yb) { s += 0.5 * (ya + yb) * (b - a); });
  return s;
}

double mean(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  return integral(t, y, t0, t1) / (t1 - t0);
}

double rms(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double s = 0.0;
  // Exact integral of the square of a linear segment.
  segments(t, y, t0, t1, [&](double a, double ya, double b, double yb) {
    s += (ya * ya + ya * yb + yb * yb) * (b - a) / 3.0;
  });
  return std::sqrt(s / (t1 - t0));
}

double maximum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double m = -INFINITY;
  segments(t, y, t0, t1, [&](double, double ya, double, double yb) { m = std::max({m, ya, yb}); });
  return m;
}

double minimum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double m = INFINITY;
  segments(t, y, t0, t1, [&](double, double ya, double, double yb) { m = std::min({m, ya, yb}); });
  return m;
}

std::vector<double> crossings(const std::vector<double>& t, const std::vector<double>& y,
                              double level, int direction, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  std::vector<double> out;
  segments(t, y, t0, t1, [&](double a, double ya, double b, double yb) {
    const double da = ya - level, db = yb - level;
    const bool rising = da < 0.0 && db >= 0.0, falling = da > 0.0 && db <= 0.0;
    if ((rising && direction >= 0) || (falling && direction <= 0))
      out.push_back(a + (b - a) * da / (da - db));
  });
  return out;
}

}  // namespace disc::measure

namespace disc::measure {

OutputFigures outputFigures(const std::vector<double>& t, const std::vector<double>& v,
                            double frequency, int cycles) {
  if (!(frequency > 0.0)) throw InputError("output figures: frequency must be positive");
  if (cycles < 1) throw InputError("output figures: at least one cycle is needed");
  OutputFigures f;
  f.cycles = cycles;
  f.window1 = t.back();
  f.window0 = f.window1 - cycles / frequency;
  // A window of exactly the run (one periodic steady-state period) may round below its start.
  if (f.window0 < t.front() && f.window0 > t.front() - 1e-9 * (f.window1 - t.front()))
    f.window0 = t.front();
  if (f.window0 < t.front())
    throw InputError(
        fmt::format("output figures: the run ({} s) is shorter than {} cycle(s) at {} Hz",
                    t.back() - t.front(), cycles, frequency));
  f.mean = mean(t, v, f.window0, f.window1);
  f.ripplePeakToPeak = maximum(t, v, f.window0, f.window1) - minimum(t, v, f.window0, f.window1);
  // The rms of (v - mean), integrated directly: sqrt(rms^2 - mean^2) loses every digit of a
  // small ripple on a high DC level.
  double s = 0.0;
  segments(t, v, f.window0, f.window1, [&](double a, double ya, double b, double yb) {
    const double da = ya - f.mean, db = yb - f.mean;
    s += (da * da + da * db + db * db) * (b - a) / 3.0;
  });
  f.rippleRms = std::sqrt(s / (f.window1 - f.window0));
  return f;
}

}  // namespace disc::measure
