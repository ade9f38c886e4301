// Waveform figures of sampled waveforms.
//
// Integrals (mean, rms) use the chords between samples. Crests, troughs and crossings use the
// quadratic through each pair of samples whose curvature comes from the neighbouring samples,
// y(t) = L(t) + c (t - t_k)(t - t_k+1), L the chord: the chord alone reads a sine's crest low
// by up to (w h)^2 / 8 for samples h apart. c is the mean of the second divided differences on
// either side (the quadratics through the left and the right neighbour); where they disagree in
// sign or by more than a factor of two (a junction's knee, a clipped current, a breakpoint's
// two rows) the smaller in magnitude is taken, or none, so the interpolant overshoots no more
// than the sharper side's own parabola would.
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

/// The interpolant of one segment [t_k, t_k+1] of positive length.
struct Piece {
  double ta, tb, ya, slope, c;
  double operator()(double when) const {
    return ya + slope * (when - ta) + c * (when - ta) * (when - tb);
  }
  double derivative(double when) const { return slope + c * (2.0 * when - ta - tb); }
};

/// Second divided difference over points i < j < k (NaN when two of them coincide: a jump).
double divided2(const std::vector<double>& t, const std::vector<double>& y, std::size_t i,
                std::size_t j, std::size_t k) {
  if (!(t[j] > t[i]) || !(t[k] > t[j])) return NAN;
  const double left = (y[j] - y[i]) / (t[j] - t[i]), right = (y[k] - y[j]) / (t[k] - t[j]);
  return (right - left) / (t[k] - t[i]);
}

Piece piece(const std::vector<double>& t, const std::vector<double>& y, std::size_t k) {
  Piece p{t[k], t[k + 1], y[k], (y[k + 1] - y[k]) / (t[k + 1] - t[k]), 0.0};
  const double dl = k >= 1 ? divided2(t, y, k - 1, k, k + 1) : NAN;
  const double dr = k + 2 < t.size() ? divided2(t, y, k, k + 1, k + 2) : NAN;
  if (std::isnan(dl) && std::isnan(dr)) return p;
  if (std::isnan(dl) || std::isnan(dr)) {
    p.c = std::isnan(dl) ? dr : dl;
    return p;
  }
  if (dl * dr <= 0.0) return p;
  const double small = std::min(std::abs(dl), std::abs(dr)),
               large = std::max(std::abs(dl), std::abs(dr));
  p.c = large <= 2.0 * small ? 0.5 * (dl + dr) : std::copysign(small, dl);
  return p;
}

/// Calls f(piece, a, b) for every part [a, b] of positive length of [t0, t1] inside one segment.
template <class F>
void pieces(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1,
            F&& f) {
  const std::size_t n = t.size();
  auto k = static_cast<std::size_t>(std::upper_bound(t.begin(), t.end(), t0) - t.begin());
  k = std::clamp<std::size_t>(k, 1, n - 1) - 1;
  for (; k + 1 < n && t[k] < t1; ++k) {
    const double a = std::max(t[k], t0), b = std::min(t[k + 1], t1);
    if (b > a && t[k + 1] > t[k]) f(piece(t, y, k), a, b);
  }
}

/// Linear value at `when` (for the chord's window ends).
double chordAt(const std::vector<double>& t, const std::vector<double>& y, double when) {
  auto it = std::lower_bound(t.begin(), t.end(), when);
  if (it == t.begin()) return y.front();
  if (it == t.end()) return y.back();
  const std::size_t k = static_cast<std::size_t>(it - t.begin());
  if (t[k] == t[k - 1]) return y[k];
  return y[k - 1] + (y[k] - y[k - 1]) * (when - t[k - 1]) / (t[k] - t[k - 1]);
}

/// Calls f(ta, ya, tb, yb) for every chord inside [t0, t1]. Integrals use the chords: the
/// trapezoidal rule on the integrator's own points keeps its balances exact (a choke's mean
/// voltage is its resistive drop, the losses sum to the input less the output).
template <class F>
void chords(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1,
            F&& f) {
  double ta = t0, ya = chordAt(t, y, t0);
  auto k = static_cast<std::size_t>(std::upper_bound(t.begin(), t.end(), t0) - t.begin());
  for (; k < t.size() && t[k] < t1; ++k) {
    f(ta, ya, t[k], y[k]);
    ta = t[k];
    ya = y[k];
  }
  f(ta, ya, t1, chordAt(t, y, t1));
}

/// Largest value of sign * y on [t0, t1]: the samples inside, the interpolated ends and each
/// segment's interpolated crest.
double extreme(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1,
               double sign) {
  double m = -INFINITY;
  for (std::size_t k = 0; k < t.size(); ++k)
    if (t[k] >= t0 && t[k] <= t1) m = std::max(m, sign * y[k]);
  pieces(t, y, t0, t1, [&](const Piece& p, double a, double b) {
    m = std::max({m, sign * p(a), sign * p(b)});
    if (p.c != 0.0) {
      const double crest = 0.5 * (p.ta + p.tb) - p.slope / (2.0 * p.c);
      if (crest > a && crest < b) m = std::max(m, sign * p(crest));
    }
  });
  return sign * m;
}

}  // namespace

double integral(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double s = 0.0;
  chords(t, y, t0, t1,
         [&](double a, double ya, double b, double yb) { s += 0.5 * (ya + yb) * (b - a); });
  return s;
}

double mean(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  return integral(t, y, t0, t1) / (t1 - t0);
}

double rms(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  double s = 0.0;
  // Exact integral of the square of a chord.
  chords(t, y, t0, t1, [&](double a, double ya, double b, double yb) {
    s += (ya * ya + ya * yb + yb * yb) * (b - a) / 3.0;
  });
  return std::sqrt(s / (t1 - t0));
}

double maximum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  return extreme(t, y, t0, t1, 1.0);
}

double minimum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  return extreme(t, y, t0, t1, -1.0);
}

std::vector<double> crossings(const std::vector<double>& t, const std::vector<double>& y,
                              double level, int direction, double t0, double t1) {
  checkWindow(t, y, t0, t1);
  std::vector<double> out;
  pieces(t, y, t0, t1, [&](const Piece& p, double a, double b) {
    const double da = p(a) - level, db = p(b) - level;
    const bool rising = da < 0.0 && db >= 0.0, falling = da > 0.0 && db <= 0.0;
    if (!((rising && direction >= 0) || (falling && direction <= 0))) return;
    // The interpolant's root in [a, b]: the chord's, refined by safeguarded Newton steps.
    double lo = a, hi = b, fl = da, x = a + (b - a) * da / (da - db);
    for (int it = 0; it < 30; ++it) {
      const double fx = p(x) - level;
      if (fx == 0.0) break;
      if ((fx < 0.0) == (fl < 0.0))
        lo = x, fl = fx;
      else
        hi = x;
      const double d = p.derivative(x);
      double next = d != 0.0 ? x - fx / d : 0.5 * (lo + hi);
      if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
      if (std::abs(next - x) <= 1e-15 * (std::abs(x) + (b - a))) {
        x = next;
        break;
      }
      x = next;
    }
    out.push_back(x);
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
  chords(t, v, f.window0, f.window1, [&](double a, double ya, double b, double yb) {
    const double da = ya - f.mean, db = yb - f.mean;
    s += (da * da + da * db + db * db) * (b - a) / 3.0;
  });
  f.rippleRms = std::sqrt(s / (f.window1 - f.window0));
  return f;
}

}  // namespace disc::measure
