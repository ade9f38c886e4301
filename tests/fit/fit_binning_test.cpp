// Long traces: binning before the fit (docs/fitting.md, "Long traces"), checked against the
// Shockley diode equation with series resistance and a shunt (W. Shockley, Bell System
// Technical Journal 28, 1949, 435; the thermal voltage from the exact SI values of k and q,
// BIPM SI Brochure, 9th edition, 2019) and against the mean of a sine over a window, sinc(pi f w)
// (the Fourier transform of a rectangular window, common practice). The traces are invented
// plates with noise from a seeded generator. Progress and cancellation of the fit.
#include <catch2/catch.hpp>
#include <cmath>
#include <nlohmann/json.hpp>
#include <random>
#include <string>
#include <vector>

#include "disc/error.hpp"
#include "disc/plate_fit.hpp"
#include "fit/trace_binning.hpp"
#include "fit_noise.hpp"

namespace {

constexpr double kBoltzmann = 1.380649e-23;            // J/K, exact (SI 2019)
constexpr double kElementaryCharge = 1.602176634e-19;  // C, exact (SI 2019)

/// Shockley's diode with a series resistance and a shunt across the junction: the current at
/// junction voltage u is is (exp(u / (n kT/q)) - 1) + g u, and the terminal voltage u + rs I.
struct Shockley {
  double is = 1.25e-4;  // A: 2.5e-5 A/cm2 on the 5 cm2 of se-25mm-square
  double n = 2.6;
  double rs = 2.8;        // ohm: 14 ohm cm2 on 5 cm2
  double g = 1.5e-4;      // S: 3e-5 S/cm2 on 5 cm2
  double kelvin = 300.0;  // the reference type's t0, where Js = Js0
  double nvt() const { return n * kBoltzmann * kelvin / kElementaryCharge; }
  double atJunction(double u) const { return is * std::expm1(u / nvt()) + g * u; }
  /// The junction voltage at terminal voltage v, by bisection (u + rs I(u) rises with u).
  double junction(double v) const {
    double lo = std::min(v, 0.0), hi = std::max(v, 0.0);
    for (int k = 0; k < 200 && hi - lo > 1e-15 * (1.0 + std::abs(v)); ++k) {
      const double mid = 0.5 * (lo + hi);
      (mid + rs * atJunction(mid) < v ? lo : hi) = mid;
    }
    return 0.5 * (lo + hi);
  }
  double current(double v) const { return atJunction(junction(v)); }
  /// d2I/dv2 = is exp(u/a) / (a^2 (1 + rs dI/du)^3): at most is exp(u/a) / a^2.
  double exponentialPart(double v) const { return is * std::exp(junction(v) / nvt()); }
};

/// A sweep from 0 to `forward` and from 0 to -`reverse` volts, `rows` rows in all, equally
/// spaced in each direction (as a scope samples a linear ramp).
disc::Trace shockleySweep(const Shockley& d, int rows, double forward = 1.9,
                          double reverse = 20.0) {
  disc::Trace t;
  t.source = "shockley";
  const int half = rows / 2;
  for (int k = 1; k <= half; ++k) t.voltage.push_back(forward * k / half);
  for (int k = 1; k <= rows - half; ++k) t.voltage.push_back(-reverse * k / (rows - half));
  for (double v : t.voltage) {
    t.current.push_back(d.current(v));
    t.lines.push_back(static_cast<int>(t.lines.size()) + 2);
  }
  return t;
}

using disc::test::addNoise;

disc::FitOptions at300() {
  disc::FitOptions o;
  o.temperature = 300.0;
  return o;
}

}  // namespace

TEST_CASE("binning: a bin's mean of the Shockley curve lies above the curve by w^2/(24 (n kT/q)^2)",
          "[fit][binning]") {
  // Pure exponential (no series or shunt resistance): the mean of exp(v/a) over a bin of
  // width w exceeds exp(vbar/a) by sinh(x)/x - 1 = x^2/6 + ..., x = w / (2a), i.e. w^2/(24 a^2).
  Shockley pure;
  pure.rs = 0.0;
  pure.g = 0.0;
  const disc::Trace t = shockleySweep(pure, 200000);
  const auto b = disc::detail::binStatic(t, 1, 1000);
  CHECK(b.forwardWidth == Approx(1.9 / 1000));
  CHECK(b.reverseWidth == Approx(20.0 / 1000));
  REQUIRE(b.trace.size() == 2000);
  double rows = 0;
  for (double r : b.rows) rows += r;
  CHECK(rows == 200000);
  const double a = pure.nvt(), w = b.forwardWidth;
  const double bound = w * w / (24.0 * a * a);
  int checked = 0;
  for (std::size_t k = 1; k + 1 < b.trace.size(); ++k) {
    const double v = b.trace.voltage[k];
    if (v < 0.05) continue;  // interior forward bins where the exponential dominates the -1
    CHECK(b.trace.voltage[k] > b.trace.voltage[k - 1]);
    const double excess = (b.trace.current[k] + pure.is) / (pure.current(v) + pure.is) - 1.0;
    // 100 rows per bin: its variance is w^2/12 within 2 % (a row more or less).
    CHECK(excess >= 0.95 * bound);
    CHECK(excess <= 1.03 * bound);
    ++checked;
  }
  CHECK(checked > 900);

  // With series resistance and shunt the curve bends less: the excess stays below the bound
  // applied to the exponential part, is exp(u/a), and is never negative (the curve is convex).
  const Shockley d;
  const disc::Trace u = shockleySweep(d, 200000);
  const auto c = disc::detail::binStatic(u, 1, 1000);
  for (std::size_t k = 0; k < c.trace.size(); ++k) {
    const double v = c.trace.voltage[k];
    if (v <= 0) continue;
    const double excess = c.trace.current[k] - d.current(v);
    CHECK(excess >= -1e-12 * std::abs(d.current(v)) - 1e-18);
    CHECK(excess <= 1.01 * bound * d.exponentialPart(v));
  }
  // A stack: bins are in volts per plate, the points keep the stack's volts.
  disc::Trace stack = u;
  for (double& v : stack.voltage) v *= 4;
  const auto s = disc::detail::binStatic(stack, 4, 1000);
  CHECK(s.forwardWidth == Approx(c.forwardWidth));
  CHECK(s.trace.voltage.back() == Approx(4 * c.trace.voltage.back()));
}

TEST_CASE("binning: 0.5 K temperature bins keep traces at two temperatures apart",
          "[fit][binning]") {
  const Shockley d;
  disc::Trace t = shockleySweep(d, 10000);
  const std::size_t n = t.size();
  for (std::size_t k = 0; k < n; ++k) t.temperature.push_back(k % 2 ? 300.1 : 320.2);
  const auto b = disc::detail::binStatic(t, 1, 100);
  CHECK(b.trace.size() == 400);
  for (double k : b.trace.temperature) CHECK((k == Approx(300.1) || k == Approx(320.2)));
}

TEST_CASE("binning: a timed trace's windows attenuate a sine by sinc(pi f w)", "[fit][binning]") {
  // Ten periods of a 50 Hz sine, 200 000 rows, into 1000 groups of 200 rows: 100 windows per
  // period. The mean of sin over a window w about its centre is sinc(pi f w) sin(2 pi f tbar).
  const double f = 50.0, amplitude = 20.0;
  disc::Trace t;
  t.source = "sine";
  const int rows = 200000;
  const double dt = 10.0 / f / rows;
  for (int k = 0; k < rows; ++k) {
    t.time.push_back(k * dt);
    t.voltage.push_back(amplitude * std::sin(2.0 * M_PI * f * k * dt));
    t.current.push_back(1e-3 * t.voltage.back());
    t.lines.push_back(k + 2);
  }
  const auto b = disc::detail::binTimed(t, 1000, 1);
  REQUIRE(b.trace.size() == 1000);
  CHECK(b.group == 200);
  CHECK(b.window == Approx(200 * dt).epsilon(1e-4));
  CHECK(b.period == Approx(1.0 / f).epsilon(1e-3));
  const double x = M_PI * f * b.window;
  const double keeps = std::sin(x) / x;
  CHECK(keeps == Approx(0.999836).epsilon(1e-5));
  for (std::size_t k = 0; k < b.trace.size(); ++k) {
    CHECK(b.rows[k] == 200);
    CHECK(b.trace.voltage[k] ==
          Approx(keeps * amplitude * std::sin(2.0 * M_PI * f * b.trace.time[k])).margin(1e-6));
  }
  // Rows that do not divide evenly: equal groups, the last one shorter.
  t.time.pop_back();
  t.voltage.pop_back();
  t.current.pop_back();
  t.lines.pop_back();
  const auto c = disc::detail::binTimed(t, 1000, 1);
  CHECK(c.trace.size() == 1000);
  CHECK(c.rows.back() == 199);
  CHECK(disc::detail::repeatPeriod(disc::Trace{}) == 0.0);
}

TEST_CASE("fit: a binned long trace gives the unbinned fit's parameters within their uncertainty",
          "[fit][binning]") {
  const Shockley d;
  disc::Trace t = shockleySweep(d, 10000);
  addNoise(t, 1717);
  disc::FitOptions off = at300();
  off.binAbove = 0;
  const auto whole = disc::fitPlate({t}, off);
  disc::FitOptions on = at300();
  on.binAbove = 4000;
  on.binsPerDirection = 500;
  const auto binned = disc::fitPlate({t}, on);
  CHECK(whole.binning.empty());
  CHECK(whole.points == 10000);
  REQUIRE(binned.binning.size() == 1);
  CHECK(binned.points == 1000);
  CHECK_THAT(binned.binning.front(), Catch::Contains("10000 rows into 1000 points"));
  CHECK(binned.rmsWeighted == Approx(1.0).margin(0.2));  // sqrt(rows) weights: noise of a mean
  for (const char* name : {"js0_A_per_cm2", "ideality", "rs_ohm_cm2", "gsh_S_per_cm2"}) {
    const auto* p = whole.find(name);
    const auto* q = binned.find(name);
    REQUIRE(p != nullptr);
    REQUIRE(q != nullptr);
    INFO(name << ": unbinned " << p->value << " +- " << p->uncertainty << ", binned " << q->value
              << " +- " << q->uncertainty);
    CHECK(std::abs(q->value - p->value) <= p->uncertainty);
    CHECK(q->uncertainty == Approx(p->uncertainty).epsilon(0.25));
  }
  // And both find the forward law the trace was made from (expanded uncertainty, k = 2). Not
  // the reverse: below breakdown the shunt and the image-force lowering trade along a valley
  // (docs/fitting.md, "Uncertainty"), and this trace's reverse, at the noise floor, has two
  // minima of equal residual (image force 0 with the true shunt, or 1.9 with 0.64 of it).
  CHECK(binned.find("ideality")->covers(d.n));
  CHECK(binned.find("rs_ohm_cm2")->covers(14.0));
  CHECK(binned.find("js0_A_per_cm2")->covers(2.5e-5));
  bool warned = false;
  for (const auto& w : binned.warnings) warned |= w.find("binning:") != std::string::npos;
  CHECK_FALSE(warned);

  // The report lists the binning in text and JSON.
  CHECK_THAT(disc::fitReportText(binned), Catch::Contains("binned shockley: 10000 rows"));
  const auto j = nlohmann::json::parse(disc::fitReportJson(binned));
  REQUIRE(j.at("binning").size() == 1);
  CHECK_THAT(j["binning"][0].get<std::string>(), Catch::Contains("at most"));
  CHECK(nlohmann::json::parse(disc::fitReportJson(whole)).at("binning").empty());
}

TEST_CASE("fit: a million-row trace is binned, and wide bins or windows are warned of",
          "[fit][binning]") {
  const Shockley d;
  disc::Trace t = shockleySweep(d, 1000000);
  addNoise(t, 99);
  const auto fit = disc::fitPlate({t}, at300());
  CHECK(fit.points == 2000);
  CHECK(fit.find("ideality")->covers(d.n));
  // 50 bins per direction: 38 mV forward bins, 0.57 n kT/q, a bias bound of 1.4 %.
  disc::FitOptions coarse = at300();
  coarse.binsPerDirection = 50;
  const auto c = disc::fitPlate({t}, coarse);
  bool warned = false;
  for (const auto& w : c.warnings)
    warned |= w.find("binning: the forward bins") != std::string::npos;
  CHECK(warned);

  // Timed traces of 20 periods of 50 Hz, 40 000 rows, fitted as static curves.
  const auto timed = [&d](double forward) {
    disc::Trace t;
    t.source = "timed";
    const int rows = 40000;
    for (int k = 0; k < rows; ++k) {
      const double time = 0.4 * k / rows;
      const double s = std::sin(2.0 * M_PI * 50.0 * time);
      t.time.push_back(time);
      t.voltage.push_back(s > 0 ? forward * s : 20.0 * s);
      t.current.push_back(d.current(t.voltage.back()));
      t.lines.push_back(k + 2);
    }
    addNoise(t, 5);
    return t;
  };
  const auto binningWarning = [](const disc::PlateFit& f) {
    for (const auto& w : f.warnings)
      if (w.find("binning:") != std::string::npos) return w;
    return std::string();
  };
  disc::FitOptions few = at300();
  few.dynamic = false;
  // 4000 windows of 100 us: 200 per period, and a forward window spans at most
  // 2 pi 50 Hz 0.3 V 100 us = 9.4 mV, below 0.155 n kT/q = 10.4 mV.
  const auto gentle = disc::fitPlate({timed(0.3)}, few);
  REQUIRE(gentle.binning.size() == 1);
  CHECK_THAT(gentle.binning.front(), Catch::Contains("groups of 10 into 4000 points"));
  CHECK(binningWarning(gentle).empty());
  // 1.5 V forward: 47 mV per window, 0.7 n kT/q, warned of (bias about 2 %).
  CHECK_THAT(binningWarning(disc::fitPlate({timed(1.5)}, few)),
             Catch::Contains("200 per repeat period") && Catch::Contains("spans up to"));
  // 400 windows: 20 per period, fewer than 40.
  few.binAbove = 400;
  CHECK_THAT(binningWarning(disc::fitPlate({timed(0.3)}, few)),
             Catch::Contains("too long: 20 per repeat period"));
}

TEST_CASE("fit: binning options are checked", "[fit][binning]") {
  disc::FitOptions o;
  o.binAbove = 50;
  CHECK_THROWS_AS(o.validate(), disc::InputError);
  CHECK_THROWS_WITH(o.validate(), Catch::Contains("0 (never bin) or at least 100"));
  o.binAbove = 0;
  CHECK_NOTHROW(o.validate());
  o.binsPerDirection = 10;
  CHECK_THROWS_WITH(o.validate(), Catch::Contains("between 50 and 10000000"));
}

TEST_CASE("fit: progress is reported by stage, and a false return cancels the fit",
          "[fit][binning][progress]") {
  const Shockley d;
  disc::Trace t = shockleySweep(d, 400);
  addNoise(t, 4);
  std::vector<std::string> lines;
  disc::FitOptions o = at300();
  o.progress = [&lines](const std::string& line) {
    lines.push_back(line);
    return true;
  };
  disc::fitPlate({t}, o);
  // Each stage reports as it starts: forward, reverse, static, then the intervals.
  REQUIRE(lines.size() >= 4);
  CHECK_THAT(lines.front(), Catch::StartsWith("fit: forward stage"));
  bool intervals = false;
  for (const auto& l : lines)
    intervals |= l.find("profile-likelihood intervals") != std::string::npos;
  CHECK(intervals);
  int calls = 0;
  o.progress = [&calls](const std::string&) { return ++calls < 3; };
  CHECK_THROWS_AS(disc::fitPlate({t}, o), disc::Cancelled);
  CHECK(calls == 3);
  // Stopped from inside the optimiser: a stage's later lines come from its model evaluations
  // (the first comes as it starts, with none counted yet). Unbinned, the forward stage of
  // 20 000 rows lasts past the first 0.2 s.
  disc::Trace longer = shockleySweep(d, 20000);
  addNoise(longer, 6);
  o.binAbove = 0;
  std::string stopped;
  o.progress = [&stopped](const std::string& line) {
    if (line.find(", 0 model evaluations") != std::string::npos) return true;
    stopped = line;
    return false;
  };
  CHECK_THROWS_AS(disc::fitPlate({longer}, o), disc::Cancelled);
  CHECK_THAT(stopped, Catch::StartsWith("fit: forward stage"));
}
