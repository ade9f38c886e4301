// Plate fit. Stages (docs/fitting.md): forward (Js, n, Rs) on the forward points, reverse
// (leakage, image force, breakdown when reached) on the reverse points, then all static
// parameters together (with the activation energies when the traces span temperatures), then,
// for traces with a time column, the barrier capacitance and the trap branch together with the
// static parameters against transient simulations of the traces' own excitation.
#include "disc/plate_fit.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <numeric>
#include <set>

#include "disc/constants.hpp"
#include "disc/plate_curve.hpp"
#include "fit/levenberg_marquardt.hpp"
#include "fit/trace_binning.hpp"

namespace disc {
namespace {

constexpr double kForwardMin = 0.02;  // V per plate: points below are neither forward nor reverse
constexpr double kReverseMin = 0.2;   // V per plate
constexpr int kMinPoints = 10, kMinForward = 4, kMinReverse = 3;
constexpr double kSettleFraction = 0.2;  // of a dynamic trace, simulated but not fitted
constexpr double kUnidentifiable = 1.0;  // relative standard uncertainty above which a value is
                                         // taken as not determined by the data

struct ParamSpec {
  const char* name;
  const char* unit;
  const char* stage;
  bool log;
  double lower, upper;
};

// Bounds are wide physical ranges for plates of either material, not the field-note bands.
const ParamSpec kSpecs[] = {
    {"js0_A_per_cm2", "A/cm2", "forward", true, 1e-12, 1e-1},
    {"ideality", "", "forward", false, 1.0, 10.0},
    {"rs_ohm_cm2", "ohm cm2", "forward", true, 1e-2, 1e4},
    {"gsh_S_per_cm2", "S/cm2", "reverse", true, 1e-10, 1e-1},
    {"image_force_per_V4", "V^-1/4", "reverse", false, 0.0, 6.0},
    {"breakdown_V", "V", "reverse", false, 2.0, 500.0},
    {"breakdown_J0_A_per_cm2", "A/cm2", "reverse", true, 1e-8, 1.0},
    {"barrier_eV", "eV", "thermal", false, 0.2, 1.5},
    {"rs_activation_eV", "eV", "thermal", false, 0.0, 1.0},
    {"gsh_activation_eV", "eV", "thermal", false, 0.0, 1.5},
    {"c0_F_per_cm2", "F/cm2", "dynamic", true, 1e-10, 1e-5},
    {"trap_c_F_per_cm2", "F/cm2", "dynamic", true, 1e-11, 1e-5},
    {"trap_tau_s", "s", "dynamic", true, 1e-4, 10.0},
};

const ParamSpec& specOf(const std::string& name) {
  for (const auto& s : kSpecs)
    if (name == s.name) return s;
  throw std::logic_error("no fit parameter " + name);
}

/// The trace without its time column: the static curve along its points.
Trace staticView(Trace t) {
  t.time.clear();
  return t;
}

double toZ(const ParamSpec& s, double v) {
  return s.log ? std::log(v) : v;
}
double fromZ(const ParamSpec& s, double z) {
  return s.log ? std::exp(z) : z;
}

/// A point of the fit, per plate, SI units.
struct Point {
  int trace = 0;
  std::size_t index = 0;  // within its trace
  double v = 0, i = 0, kelvin = 0;
  double floor = 0;   // A, noise floor of its trace
  double weight = 1;  // square root of the rows binned into it
};

struct Data {
  std::vector<Trace> traces;   // voltages already per plate
  std::vector<double> kelvin;  // per trace: mean plate temperature (for dynamic runs)
  std::vector<Point> points;
  std::vector<std::vector<double>> rows;  // per trace and point: rows binned into it (or empty)
  double relative = 0.01;                 // noise model: sigma = relative |I| + the point's floor
  /// Weighted residual. The noise is taken in proportion to the model's current, not the
  /// measured one: weights from noisy readings would favour points that read low.
  double residual(const Point& p, double model) const {
    return p.weight * (p.i - model) / (relative * std::abs(model) + p.floor);
  }
};

double linearSlope(const std::vector<double>& x, const std::vector<double>& y, double* intercept) {
  const double n = static_cast<double>(x.size());
  const double mx = std::accumulate(x.begin(), x.end(), 0.0) / n;
  const double my = std::accumulate(y.begin(), y.end(), 0.0) / n;
  double sxy = 0, sxx = 0;
  for (std::size_t k = 0; k < x.size(); ++k) {
    sxy += (x[k] - mx) * (y[k] - my);
    sxx += (x[k] - mx) * (x[k] - mx);
  }
  const double slope = sxx > 0 ? sxy / sxx : 0.0;
  if (intercept) *intercept = my - slope * mx;
  return slope;
}

/// A trace binned before the fit, for the report's `binning` lines and warnings.
struct Binning {
  std::string source;
  std::size_t rows = 0, points = 0;
  bool timed = false;
  double forwardWidth = 0, reverseWidth = 0;    // static: V per plate
  std::size_t group = 0;                        // timed: rows per group
  double window = 0, period = 0, duration = 0;  // timed: s
  double forwardSpan = 0;  // timed: V per plate, the widest forward window above the floor
  double coolest = 0;      // K, the trace's lowest plate temperature
};

Data prepareData(const std::vector<Trace>& input, const FitOptions& o,
                 std::vector<Binning>& binning) {
  if (input.empty()) throw InputError("fit: no trace given");
  Data d;
  std::vector<Trace> traces;
  for (const auto& t : input) {
    d.rows.emplace_back();
    if (o.binAbove == 0 || t.size() <= o.binAbove) {
      traces.push_back(t);
      continue;
    }
    detail::BinnedTrace bt = t.dynamic() ? detail::binTimed(t, o.binAbove, o.plates)
                                         : detail::binStatic(t, o.plates, o.binsPerDirection);
    Binning b;
    b.source = t.source;
    b.rows = t.size();
    b.points = bt.trace.size();
    b.timed = t.dynamic();
    b.forwardWidth = bt.forwardWidth;
    b.reverseWidth = bt.reverseWidth;
    b.group = bt.group;
    b.window = bt.window;
    b.period = bt.period;
    b.duration = t.dynamic() ? t.time.back() - t.time.front() : 0.0;
    // The windows whose curvature matters: forward, with a mean current above the noise floor.
    double iMax = 0;
    for (double i : bt.trace.current) iMax = std::max(iMax, std::abs(i));
    const double floor = o.noiseFloor > 0 ? o.noiseFloor : 1e-3 * iMax;
    for (std::size_t k = 0; k < bt.spans.size(); ++k)
      if (bt.trace.voltage[k] > 0 && std::abs(bt.trace.current[k]) > floor)
        b.forwardSpan = std::max(b.forwardSpan, bt.spans[k]);
    b.coolest = t.temperature.empty()
                    ? o.temperature
                    : *std::min_element(t.temperature.begin(), t.temperature.end());
    binning.push_back(b);
    d.rows.back() = std::move(bt.rows);
    traces.push_back(std::move(bt.trace));
  }
  for (const auto& t : traces) {
    Trace per = t;
    for (auto& v : per.voltage) v /= o.plates;
    const double tMean = per.temperature.empty() ? o.temperature
                                                 : std::accumulate(per.temperature.begin(),
                                                                   per.temperature.end(), 0.0) /
                                                       static_cast<double>(per.temperature.size());
    d.kelvin.push_back(tMean);
    d.traces.push_back(std::move(per));
  }
  for (std::size_t k = 0; k < d.traces.size(); ++k) {
    const Trace& t = d.traces[k];
    for (std::size_t j = 0; j < t.size(); ++j) {
      Point p;
      p.trace = static_cast<int>(k);
      p.index = j;
      p.v = t.voltage[j];
      p.i = t.current[j];
      p.kelvin = t.temperature.empty() ? o.temperature : t.temperature[j];
      if (!d.rows[k].empty()) p.weight = std::sqrt(d.rows[k][j]);
      d.points.push_back(p);
    }
  }
  const Trace& first = d.traces.front();
  const int endLine = first.lines.empty() ? 0 : first.lines.back();
  if (d.points.size() < static_cast<std::size_t>(kMinPoints))
    throw TraceError(first.source, endLine, 0, "",
                     fmt::format("only {} data row(s): a fit needs at least {} points spread over "
                                 "the forward and reverse directions",
                                 d.points.size(), kMinPoints));
  int forward = 0, reverse = 0;
  for (const auto& p : d.points) {
    if (p.v > kForwardMin && p.i > 0) ++forward;
    if (p.v < -kReverseMin && p.i < 0) ++reverse;
  }
  if (reverse < kMinReverse)
    throw TraceError(first.source, endLine, 0, "",
                     fmt::format("the trace has no reverse part ({} point(s) below -{} V per "
                                 "plate with reverse current; at least {} needed): measure the "
                                 "reverse direction too, or check the polarity of the voltage "
                                 "and current columns",
                                 reverse, kReverseMin, kMinReverse));
  if (forward < kMinForward)
    throw TraceError(first.source, endLine, 0, "",
                     fmt::format("the trace has no forward part ({} point(s) above {} V per plate "
                                 "with forward current; at least {} needed): measure the forward "
                                 "direction too, or check the polarity",
                                 forward, kForwardMin, kMinForward));
  d.relative = o.noiseRelative;
  // Each trace has its own floor (its own instrument range): 1e-3 of its largest reading.
  std::vector<double> traceMax(d.traces.size(), 0.0);
  for (const auto& p : d.points)
    traceMax[static_cast<std::size_t>(p.trace)] =
        std::max(traceMax[static_cast<std::size_t>(p.trace)], std::abs(p.i));
  for (auto& p : d.points)
    p.floor = o.noiseFloor > 0 ? o.noiseFloor : 1e-3 * traceMax[static_cast<std::size_t>(p.trace)];
  return d;
}

/// Sweep rate of a timed trace: its mean |dV/dt| in V/s.
double sweepRate(const Trace& t) {
  double travel = 0;
  for (std::size_t k = 1; k < t.size(); ++k) travel += std::abs(t.voltage[k] - t.voltage[k - 1]);
  return travel / (t.time.back() - t.time.front());
}

/// Starting values from the data: Rs from the slope at the top of the forward curve, n and Js
/// from the exponential part after removing the Rs drop, leakage from the low reverse slope.
void startFromData(const Data& d, PlateType& t, std::vector<std::string>& notes) {
  const double area = t.physics.areaCm2;
  std::vector<const Point*> fwd, rev;
  for (const auto& p : d.points) {
    if (p.v > kForwardMin && p.i > 0) fwd.push_back(&p);
    if (p.v < -kReverseMin && p.i < 0) rev.push_back(&p);
  }
  std::sort(fwd.begin(), fwd.end(), [](auto* a, auto* b) { return a->i < b->i; });
  const double iMax = fwd.back()->i;
  double rs = t.physics.rsArea / area;
  {
    std::vector<double> x, y;
    for (const auto* p : fwd)
      if (p->i >= 0.5 * iMax) {
        x.push_back(p->i);
        y.push_back(p->v);
      }
    if (x.size() >= 3) {
      // The slope includes the junction's n kT/q / I; take that off at the mean current.
      const double slope = linearSlope(x, y, nullptr);
      const double iMean = std::accumulate(x.begin(), x.end(), 0.0) / static_cast<double>(x.size());
      const double junction = t.physics.ideality * constants::thermalVoltage(d.kelvin[0]) / iMean;
      if (slope - junction > 0) rs = slope - junction;
    }
  }
  t.set("rs_ohm_cm2", std::clamp(rs * area, 1e-2, 1e4));
  {
    std::vector<double> x, y;
    for (const auto* p : fwd)
      if (p->i <= 0.3 * iMax) {
        x.push_back(p->v - p->i * rs);
        y.push_back(std::log(p->i));
      }
    double lnIs = 0;
    const double slope = x.size() >= 3 ? linearSlope(x, y, &lnIs) : 0.0;
    if (slope > 0) {
      const double n = 1.0 / (slope * constants::thermalVoltage(d.kelvin[0]));
      if (n >= 1.0 && n <= 10.0) {
        t.set("ideality", n);
        t.set("js0_A_per_cm2", std::clamp(std::exp(lnIs) / area, 1e-12, 1e-1));
      } else {
        notes.push_back(
            fmt::format("the forward curve's low part gives an ideality of {:.3g}, "
                        "outside 1-10: started from the reference's",
                        n));
      }
    }
  }
  {
    double vMax = 0;
    for (const auto* p : rev) vMax = std::max(vMax, -p->v);
    double sxy = 0, sxx = 0;
    for (const auto* p : rev)
      if (std::abs(p->v) <= 0.5 * vMax) {
        sxy += p->v * p->i;
        sxx += p->v * p->v;
      }
    if (sxx > 0 && sxy > 0) t.set("gsh_S_per_cm2", std::clamp(sxy / sxx / area, 1e-10, 1e-1));
  }
}

class Fitter {
 public:
  Fitter(Data data, PlateType start, const FitOptions& o)
      : d_(std::move(data)), type_(std::move(start)), o_(o) {}

  /// The weighted residuals of `names` on the chosen points (and, with `withDynamic`, of the
  /// timed traces' points through transient runs).
  detail::LeastSquaresProblem problem(const std::vector<std::string>& names,
                                      const std::vector<std::size_t>& staticPoints,
                                      bool withDynamic) {
    detail::LeastSquaresProblem p;
    const int n = static_cast<int>(names.size());
    p.lower.resize(n);
    p.upper.resize(n);
    for (int k = 0; k < n; ++k) {
      const auto& s = specOf(names[k]);
      p.lower[k] = toZ(s, s.lower);
      p.upper[k] = toZ(s, s.upper);
    }
    std::vector<std::size_t> dynamicPoints;
    if (withDynamic)
      for (std::size_t k = 0; k < d_.points.size(); ++k)
        if (fittedDynamically(d_.points[k])) dynamicPoints.push_back(k);
    p.residuals = static_cast<int>(staticPoints.size() + dynamicPoints.size());
    p.evaluate = [this, names, staticPoints, dynamicPoints](const Eigen::VectorXd& z,
                                                            Eigen::VectorXd& r) {
      const PlateType t = typeAt(names, z);
      const PlateCurve curve(t);
      for (std::size_t k = 0; k < staticPoints.size(); ++k) {
        const Point& pt = d_.points[staticPoints[k]];
        r[static_cast<Eigen::Index>(k)] = d_.residual(pt, curve.current(pt.v, pt.kelvin));
      }
      ++evaluations_;
      tick();
      if (dynamicPoints.empty()) return;
      std::vector<std::vector<double>> simulated(d_.traces.size());
      for (std::size_t tr = 0; tr < d_.traces.size(); ++tr)
        if (d_.traces[tr].dynamic())
          simulated[tr] = modelCurrent(t, d_.traces[tr], 1, d_.kelvin[tr]);
      for (std::size_t k = 0; k < dynamicPoints.size(); ++k) {
        const Point& pt = d_.points[dynamicPoints[k]];
        r[static_cast<Eigen::Index>(staticPoints.size() + k)] =
            d_.residual(pt, simulated[pt.trace][pt.index]);
      }
    };
    return p;
  }

  Eigen::VectorXd current(const std::vector<std::string>& names) const {
    Eigen::VectorXd z(static_cast<Eigen::Index>(names.size()));
    for (std::size_t k = 0; k < names.size(); ++k) {
      const auto& s = specOf(names[k]);
      z[static_cast<Eigen::Index>(k)] = toZ(s, std::clamp(type_.get(names[k]), s.lower, s.upper));
    }
    return z;
  }

  /// Runs one stage over `names` on the chosen points; returns the least-squares result.
  detail::LeastSquaresResult stage(const std::vector<std::string>& names,
                                   const std::vector<std::size_t>& staticPoints, bool withDynamic) {
    const auto p = problem(names, staticPoints, withDynamic);
    detail::LeastSquaresOptions lo;
    if (withDynamic) {
      // Transient results carry the integrator's error: a coarser difference step and
      // one-sided differences keep the Jacobian above that noise at half the runs.
      lo.difference = 1e-3;
      lo.central = false;
      lo.maxIterations = 40;
    }
    auto res = detail::levenbergMarquardt(p, current(names), lo);
    if (!std::isfinite(res.cost))
      throw InputError(
          "fit: the model cannot be evaluated at the starting values; check the "
          "trace's units and the --plates count");
    type_ = typeAt(names, res.z);
    return res;
  }

  /// Profile-likelihood interval of parameter `k` (in z) at coverage factor 2: where the cost,
  /// minimised over the other parameters, has risen by 2 s^2, i.e. chi-square by 4 (D. J.
  /// Venzon and S. H. Moolgavkar, Applied Statistics 37, 1988). Follows the curved valleys
  /// that a linearised covariance misses. Static points only.
  std::pair<double, double> profileInterval(const std::vector<std::string>& names,
                                            const std::vector<std::size_t>& points,
                                            const detail::LeastSquaresResult& best, int k,
                                            double sigmaZ) {
    const auto full = problem(names, points, false);
    const auto m = best.r.size(), n = best.z.size();
    const double s2 = best.r.squaredNorm() / static_cast<double>(std::max<Eigen::Index>(1, m - n));
    const double target = best.cost + 2.0 * s2;
    const auto others = [&](double zk, Eigen::VectorXd& zOthers) {
      detail::LeastSquaresProblem p;
      p.residuals = full.residuals;
      p.lower.resize(n - 1);
      p.upper.resize(n - 1);
      for (Eigen::Index j = 0, q = 0; j < n; ++j)
        if (j != k) {
          p.lower[q] = full.lower[j];
          p.upper[q++] = full.upper[j];
        }
      p.evaluate = [&full, zk, k, n](const Eigen::VectorXd& zr, Eigen::VectorXd& r) {
        Eigen::VectorXd z(n);
        for (Eigen::Index j = 0, q = 0; j < n; ++j) z[j] = j == k ? zk : zr[q++];
        full.evaluate(z, r);
      };
      detail::LeastSquaresOptions lo;
      lo.maxIterations = 50;
      lo.central = false;  // a smooth static model: one-sided differences suffice here
      lo.costTolerance = 1e-8;
      const auto res = detail::levenbergMarquardt(p, zOthers, lo);
      zOthers = res.z;
      return res.cost;
    };
    Eigen::VectorXd start(n - 1);
    for (Eigen::Index j = 0, q = 0; j < n; ++j)
      if (j != k) start[q++] = best.z[j];
    // Near the optimum the profile rises quadratically, so sqrt(cost - best) grows linearly
    // with the distance: a secant on it finds the crossing in a few refits.
    const double gTarget = std::sqrt(target - best.cost);
    std::pair<double, double> out;
    for (const int dir : {-1, 1}) {
      const double bound = dir < 0 ? full.lower[k] : full.upper[k];
      double dist =
          std::isfinite(sigmaZ) && sigmaZ > 0 ? 2.0 * sigmaZ : std::abs(bound - best.z[k]);
      const double maxDist = std::abs(bound - best.z[k]);
      double inDist = 0.0, inG = 0.0, outDist = -1.0;
      Eigen::VectorXd zo = start;
      double result = maxDist;
      for (int it = 0; it < 12; ++it) {
        dist = std::min(dist, maxDist);
        Eigen::VectorXd zt = zo;
        const double g = std::sqrt(std::max(0.0, others(best.z[k] + dir * dist, zt) - best.cost));
        if (std::abs(g - gTarget) <= 0.02 * gTarget) {
          result = dist;
          break;
        }
        if (g < gTarget) {
          inDist = dist;
          inG = g;
          zo = zt;
          if (dist >= maxDist) break;  // the profile stays low to the bound
        } else {
          outDist = dist;
        }
        // Secant through the last inside point and this one, kept inside any bracket.
        double next = g > inG && dist != inDist
                          ? inDist + (gTarget - inG) * (dist - inDist) / (g - inG)
                          : 2.0 * dist;
        if (outDist > 0 && !(next > inDist && next < outDist)) next = 0.5 * (inDist + outDist);
        if (outDist < 0 && next <= inDist) next = 2.0 * std::max(inDist, dist);
        result = next;
        dist = next;
      }
      result = std::min(result, maxDist);
      (dir < 0 ? out.first : out.second) = best.z[k] + dir * result;
    }
    return out;
  }

  bool fittedDynamically(const Point& p) const {
    const Trace& t = d_.traces[static_cast<std::size_t>(p.trace)];
    if (!t.dynamic() || !o_.dynamic) return false;
    const double t0 = t.time.front(), t1 = t.time.back();
    return t.time[p.index] >= t0 + kSettleFraction * (t1 - t0);
  }

  PlateType typeAt(const std::vector<std::string>& names, const Eigen::VectorXd& z) const {
    PlateType t = type_;
    for (std::size_t k = 0; k < names.size(); ++k)
      t.set(names[k], fromZ(specOf(names[k]), z[static_cast<Eigen::Index>(k)]));
    return t;
  }

  /// Names the stage for the progress line.
  void setStage(std::string name) {
    stage_ = std::move(name);
    nextReport_ = {};
    tick();
  }

  const Data& data() const { return d_; }
  const PlateType& type() const { return type_; }
  void setType(PlateType t) { type_ = std::move(t); }
  int evaluations() const { return evaluations_; }

 private:
  Data d_;
  PlateType type_;
  const FitOptions& o_;
  int evaluations_ = 0;
  std::string stage_ = "starting";
  std::chrono::steady_clock::time_point nextReport_{};

  // Progress at most every 0.2 s of wall time; a false answer stops the fit.
  void tick() {
    if (!o_.progress) return;
    const auto now = std::chrono::steady_clock::now();
    if (now < nextReport_) return;
    nextReport_ = now + std::chrono::milliseconds(200);
    if (!o_.progress(fmt::format("fit: {} stage, {} model evaluations", stage_, evaluations_)))
      throw Cancelled("fit: stopped");
  }
};

// Binning's limits (docs/fitting.md, "Long traces"): a warning when a forward bin's or
// window's mean current may exceed the curve's by more than kBinBias of it, or a timed trace
// has fewer than kWindowsPerPeriod windows per repeat period (its fundamental then loses more
// than 0.1 %).
constexpr double kBinBias = 1e-3;
constexpr double kWindowsPerPeriod = 40.0;

/// The report's line for each binned trace, and warnings where binning may bias the fit.
void describeBinning(const std::vector<Binning>& binning, const PlateType& fitted,
                     const FitOptions& o, PlateFit& fit) {
  for (const auto& b : binning) {
    // Mean of an exponential over a bin or window spanning w volts (uniformly) about its mean
    // voltage: the curve's current there times 1 + w^2 / (24 (n kT/q)^2) (its Taylor series'
    // second-order term); the series resistance only bends the curve less.
    const double nvt = fitted.physics.ideality * constants::thermalVoltage(b.coolest);
    const auto biasOf = [nvt](double w) { return w * w / (24.0 * nvt * nvt); };
    if (!b.timed) {
      const double bound = biasOf(b.forwardWidth);
      fit.binning.push_back(fmt::format(
          "{}: {} rows into {} points ({} voltage bins per direction, {:.3g} mV forward and "
          "{:.3g} mV reverse per plate; {} K temperature bins); a forward bin's mean current "
          "lies above the curve's by at most {:.2g} of it (w^2 / (24 (n kT/q)^2), n {:.3g})",
          b.source, b.rows, b.points, o.binsPerDirection, 1e3 * b.forwardWidth,
          1e3 * b.reverseWidth, detail::kTemperatureBin, bound, fitted.physics.ideality));
      if (bound > kBinBias)
        fit.warnings.push_back(fmt::format(
            "binning: the forward bins of {} are {:.3g} mV wide, {:.2f} n kT/q, so a bin's mean "
            "current may lie {:.2g} % above the curve's (more than {:.1f} %): give {} or more "
            "bins per direction (--bins-per-direction, bins_per_direction), or switch binning "
            "off (0)",
            b.source, 1e3 * b.forwardWidth, b.forwardWidth / nvt, 100.0 * bound, 100.0 * kBinBias,
            static_cast<long>(
                std::ceil(static_cast<double>(o.binsPerDirection) * std::sqrt(bound / kBinBias)))));
      continue;
    }
    // The mean of a sine of period T over a window w keeps sinc(pi w / T) of its amplitude.
    const double period = b.period > 0 ? b.period : b.duration;
    const double x = M_PI * b.window / period;
    const double keeps = x > 0 ? std::sin(x) / x : 1.0;
    const double bound = biasOf(b.forwardSpan);
    fit.binning.push_back(fmt::format(
        "{}: {} rows averaged in consecutive groups of {} into {} points (windows of {:.3g} s, "
        "{:.0f} per {} of {:.3g} s: a sine of that period keeps {:.5f} of its amplitude, its "
        "k-th harmonic sinc(k pi w / T)); a forward window spans at most {:.3g} mV per plate, "
        "so its mean current lies above the curve's by at most {:.2g} of it",
        b.source, b.rows, b.group, b.points, b.window, period / b.window,
        b.period > 0 ? "repeat period" : "trace (no repeat period found)", period, keeps,
        1e3 * b.forwardSpan, bound));
    // Windows short enough for both: at most 1/40 of the period, and spanning at most
    // sqrt(24 kBinBias) n kT/q where the sweep is steepest.
    const double shorter = std::max(b.window * kWindowsPerPeriod / period,
                                    b.forwardSpan / (std::sqrt(24.0 * kBinBias) * nvt));
    if (shorter > 1.0)
      fit.warnings.push_back(fmt::format(
          "binning: the windows of {} are too long: {:.0f} per repeat period of {:.3g} s (a "
          "sine of that period keeps {:.4f} of its amplitude, its harmonics less), and a "
          "forward window spans up to {:.3g} mV, {:.2f} n kT/q, so its mean current may lie "
          "{:.2g} % above the curve's; raise the binning limit (--bin-above, bin_above) to {} "
          "or more points, or switch binning off (0)",
          b.source, period / b.window, period, keeps, 1e3 * b.forwardSpan, b.forwardSpan / nvt,
          100.0 * bound, static_cast<long>(std::ceil(shorter * static_cast<double>(b.points)))));
  }
}

PlateType referenceType(const FitOptions& o) {
  if (o.reference) {
    PlateType t = *o.reference;
    if (o.areaCm2 > 0) t.physics.areaCm2 = o.areaCm2;
    return t;
  }
  std::string like = o.like;
  if (like.empty()) {
    if (o.material == "selenium")
      like = "se-25mm-square";
    else if (o.material == "copper-oxide")
      like = "cuox-12mm-meter";
    else
      throw InputError("fit: unknown material '" + o.material +
                       "': give selenium or copper-oxide, or name a reference type with like");
  }
  PlateType t = PlateLibrary::builtIn().at(like);
  if (o.areaCm2 > 0) t.physics.areaCm2 = o.areaCm2;
  return t;
}

}  // namespace

void FitOptions::validate() const {
  if (plates < 1 || plates > 100000)
    throw InputError("fit: the plate count must be between 1 and 100000");
  if (!(areaCm2 >= 0.0 && areaCm2 < 1e4))
    throw InputError("fit: the plate area must be positive and below 1e4 cm2 (0: the reference's)");
  if (!(temperature > 150.0 && temperature < 600.0))
    throw InputError("fit: the trace temperature must lie between 150 K and 600 K");
  if (!(noiseRelative >= 0.0 && noiseRelative < 1.0))
    throw InputError("fit: the relative noise must lie between 0 and 1");
  if (!(noiseFloor >= 0.0) || !std::isfinite(noiseFloor))
    throw InputError("fit: the noise floor must be a non-negative current in A");
  if (name.empty()) throw InputError("fit: the fitted type needs a name");
  if (binAbove != 0 && binAbove < 100)
    throw InputError(
        "fit: the binning limit must be 0 (never bin) or at least 100 points per trace");
  if (binsPerDirection < 50 || binsPerDirection > 10000000)
    throw InputError("fit: the voltage bins per direction must lie between 50 and 10000000");
  for (const auto& f : fixed) {
    bool known = false;
    for (const auto& s : kSpecs) known |= f == s.name;
    if (!known)
      throw InputError("fit: '" + f +
                       "' is not a fitted parameter; the fitted ones are the "
                       "physics names of docs/fitting.md, e.g. image_force_per_V4");
  }
}

const FittedParameter* PlateFit::find(const std::string& name) const {
  for (const auto& p : parameters)
    if (p.name == name) return &p;
  return nullptr;
}

PlateFit fitPlate(const std::vector<Trace>& traces, const FitOptions& o) {
  o.validate();
  const PlateType reference = referenceType(o);
  PlateFit fit;
  std::vector<Binning> binning;
  Data data = prepareData(traces, o, binning);
  PlateType start = reference;
  start.name = o.name;
  startFromData(data, start, fit.warnings);
  const PlateType fromData = start;

  // Which points and parameters each stage sees.
  std::vector<std::size_t> fwdPts, revPts, allPts;
  double reverseReach = 0;
  std::set<long> temps;
  for (std::size_t k = 0; k < data.points.size(); ++k) {
    const auto& p = data.points[k];
    if (p.v > 0) fwdPts.push_back(k);
    if (p.v < 0) revPts.push_back(k);
    allPts.push_back(k);
    reverseReach = std::max(reverseReach, -p.v);
    temps.insert(std::lround(p.kelvin));
  }
  const double tSpan = temps.empty() ? 0.0 : static_cast<double>(*temps.rbegin() - *temps.begin());
  const bool anyDynamic = std::any_of(data.traces.begin(), data.traces.end(),
                                      [](const Trace& t) { return t.dynamic(); });

  std::vector<std::string> forward = {"js0_A_per_cm2", "ideality", "rs_ohm_cm2"};
  std::vector<std::string> reverse = {"gsh_S_per_cm2", "image_force_per_V4"};
  if (reverseReach >= 0.7 * reference.physics.breakdownV) {
    reverse.push_back("breakdown_V");
    reverse.push_back("breakdown_J0_A_per_cm2");
  } else {
    fit.warnings.push_back(fmt::format(
        "the reverse data reach {:.3g} V per plate, below the soft breakdown near {:.3g} V: "
        "breakdown_V and breakdown_J0_A_per_cm2 are kept at the reference's values",
        reverseReach, reference.physics.breakdownV));
  }
  std::vector<std::string> thermal;
  if (tSpan >= 10.0) {
    thermal = {"barrier_eV", "rs_activation_eV", "gsh_activation_eV"};
  } else {
    fit.warnings.push_back(
        "all points are at one plate temperature: the activation energies (barrier_eV, "
        "rs_activation_eV, gsh_activation_eV) cannot be seen and are kept at the reference's "
        "values; add traces at other plate temperatures (10 K apart or more) to fit them");
  }
  std::vector<std::string> dynamic;
  if (anyDynamic && o.dynamic) {
    // The trap branch and the barrier capacitance look alike at one sweep rate; rates a few
    // times apart separate them (the trap follows slow sweeps and not fast ones).
    double rateLo = INFINITY, rateHi = 0;
    for (const auto& t : data.traces)
      if (t.dynamic()) {
        const double r = sweepRate(t);
        rateLo = std::min(rateLo, r);
        rateHi = std::max(rateHi, r);
      }
    dynamic = {"c0_F_per_cm2"};
    if (rateHi >= 3.0 * rateLo) {
      dynamic.push_back("trap_c_F_per_cm2");
      dynamic.push_back("trap_tau_s");
    } else {
      fit.warnings.push_back(
          "the timed traces share one sweep rate: the trap branch cannot be told from the "
          "barrier capacitance, so trap_c_F_per_cm2 and trap_tau_s are kept at the reference's "
          "values; add a trace at a rate 3 times faster or slower to fit them");
    }
  } else {
    fit.warnings.push_back(
        anyDynamic ? "the dynamic fit was switched off: c0_F_per_cm2, trap_c_F_per_cm2 and "
                     "trap_tau_s are kept at the reference's values"
                   : "no time column: a static trace does not show the barrier capacitance or "
                     "the trap branch, so c0_F_per_cm2, trap_c_F_per_cm2 and trap_tau_s are kept "
                     "at the reference's values; a trace at mains frequency with a time column "
                     "shows them as loops");
  }
  // Parameters the user holds: kept at the reference's value in every stage.
  for (auto* list : {&forward, &reverse, &thermal, &dynamic})
    list->erase(std::remove_if(list->begin(), list->end(),
                               [&](const std::string& n) {
                                 return std::find(o.fixed.begin(), o.fixed.end(), n) !=
                                        o.fixed.end();
                               }),
                list->end());
  for (const auto& n : o.fixed) start.set(n, reference.get(n));
  std::vector<std::string> joint = forward;
  joint.insert(joint.end(), reverse.begin(), reverse.end());
  joint.insert(joint.end(), thermal.begin(), thermal.end());

  Fitter fitter(std::move(data), start, o);
  const auto cost = [&](const detail::LeastSquaresResult& r, const char* name) {
    fit.stages.push_back(
        fmt::format("{}: {} parameters, {} points, rms weighted residual {:.4g}, "
                    "{} iterations",
                    name, r.z.size(), r.r.size(),
                    std::sqrt(r.r.squaredNorm() / std::max<double>(1, r.r.size())), r.iterations));
  };
  if (joint.empty() && dynamic.empty())
    throw InputError(
        "fit: every parameter these traces could determine is held (fixed): "
        "nothing is left to fit");
  if (!forward.empty()) {
    fitter.setStage("forward");
    cost(fitter.stage(forward, fwdPts, false), "forward");
  }
  if (!reverse.empty()) {
    fitter.setStage("reverse");
    cost(fitter.stage(reverse, revPts, false), "reverse");
  }
  detail::LeastSquaresResult final;
  if (!joint.empty()) {
    fitter.setStage("static");
    final = fitter.stage(joint, allPts, false);
    cost(final, tSpan >= 10.0 ? "static with temperature" : "static");
  }

  std::vector<std::string> names = joint;
  if (!dynamic.empty()) {
    names.insert(names.end(), dynamic.begin(), dynamic.end());
    std::vector<std::size_t> staticOnly;
    for (std::size_t k = 0; k < fitter.data().points.size(); ++k)
      if (!fitter.data().traces[static_cast<std::size_t>(fitter.data().points[k].trace)].dynamic())
        staticOnly.push_back(k);
    fitter.setStage("dynamic (transient runs)");
    final = fitter.stage(names, staticOnly, true);
    cost(final, "dynamic (transient of each timed trace)");
  }

  // Parameters, uncertainties and warnings.
  const Eigen::MatrixXd cov = detail::leastSquaresCovariance(final);
  if (dynamic.empty()) fitter.setStage("profile-likelihood intervals");
  fit.type = fitter.type();
  for (std::size_t k = 0; k < names.size(); ++k) {
    const auto& s = specOf(names[k]);
    const auto kk = static_cast<Eigen::Index>(k);
    FittedParameter p;
    p.name = names[k];
    p.unit = s.unit;
    p.stage = s.stage;
    p.value = fit.type.get(p.name);
    p.start = fromData.get(p.name);
    p.lower = s.lower;
    p.upper = s.upper;
    const double sz = std::sqrt(cov(kk, kk));
    p.uncertainty = s.log ? p.value * sz : sz;
    p.logScale = s.log;
    p.logUncertainty = s.log ? sz : 0.0;
    if (dynamic.empty()) {
      const auto [lo, hi] = fitter.profileInterval(names, allPts, final, static_cast<int>(k), sz);
      p.low = fromZ(s, lo);
      p.high = fromZ(s, hi);
      p.interval = "profile likelihood";
    } else {
      // Profiles through transient runs would cost hundreds of them: linearised interval.
      p.low =
          std::isfinite(sz) ? fromZ(s, std::max(final.z[kk] - 2.0 * sz, toZ(s, s.lower))) : s.lower;
      p.high =
          std::isfinite(sz) ? fromZ(s, std::min(final.z[kk] + 2.0 * sz, toZ(s, s.upper))) : s.upper;
      p.interval = "linearised";
    }
    p.atBound = std::abs(final.z[kk] - toZ(s, s.lower)) < 1e-9 ||
                std::abs(final.z[kk] - toZ(s, s.upper)) < 1e-9;
    const double rel = s.log ? sz : sz / std::max(std::abs(p.value), 1e-300);
    p.identifiable = std::isfinite(rel) && rel <= kUnidentifiable && !p.atBound;
    if (p.atBound)
      fit.warnings.push_back(
          fmt::format("{} ended at its bound {:.4g} {}: the data push it out of "
                      "the physical range; check the trace and the --plates "
                      "count",
                      p.name, p.value, p.unit));
    else if (!p.identifiable)
      fit.warnings.push_back(
          fmt::format("{} is not determined by these data (relative "
                      "uncertainty {:.0f} %); treat its value as a guess",
                      p.name, 100.0 * rel));
    fit.parameters.push_back(p);
  }
  describeBinning(binning, fit.type, o, fit);
  // Residuals and curves with the fitted type.
  const Data& d = fitter.data();
  double sw = 0, si = 0;
  int count = 0;
  for (std::size_t tr = 0; tr < d.traces.size(); ++tr) {
    const Trace& t = d.traces[tr];
    FitCurve c;
    c.trace = t.source;
    c.dynamic = t.dynamic() && o.dynamic;
    c.time = t.time;
    c.voltage = t.voltage;
    c.measured = t.current;
    c.fitted = modelCurrent(fit.type, c.dynamic ? t : staticView(t), 1,
                            c.dynamic ? d.kelvin[tr] : o.temperature);
    fit.curves.push_back(std::move(c));
  }
  for (const auto& p : d.points) {
    const auto& c = fit.curves[static_cast<std::size_t>(p.trace)];
    if (c.dynamic && !fitter.fittedDynamically(p)) continue;
    const double r = p.i - c.fitted[p.index];
    const double w = d.residual(p, c.fitted[p.index]);
    sw += w * w;
    si += r * r;
    ++count;
  }
  fit.points = count;
  fit.rmsWeighted = std::sqrt(sw / std::max(1, count));
  fit.rmsCurrent = std::sqrt(si / std::max(1, count));
  fit.evaluations = fitter.evaluations();

  // The fitted type: say where each value came from.
  std::string sources;
  for (const auto& t : traces) sources += (sources.empty() ? "" : ", ") + t.source;
  fit.type.description = fmt::format(
      "fitted by libdisc to {} ({} plate(s) in series), "
      "reference {}",
      sources, o.plates, reference.name);
  for (const auto& p : fit.parameters)
    fit.type.notes[p.name] =
        fmt::format("fitted to {}: {:.4g} +- {:.2g} {} (k = 2){}", sources, p.value, p.expanded(),
                    p.unit, p.identifiable ? "" : "; not determined by the data");
  for (const auto& name : PlateType::parameterNames())
    if (!fit.find(name)) {
      const auto it = reference.notes.find(name);
      fit.type.notes[name] = "from reference " + reference.name +
                             (it != reference.notes.end() ? ": " + it->second : "");
    }
  fit.type.validate();
  fit.health = judgePlateHealth(fit.type, reference, o.temperature);
  return fit;
}

}  // namespace disc
