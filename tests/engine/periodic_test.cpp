// Periodic steady state (Newton shooting, T. J. Aprille and T. N. Trick, Proc. IEEE 60(1),
// 1972) against the settled cycles of long transients and against closed forms.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <string>

#include "disc/disc.hpp"

using namespace disc;

namespace {

struct Figures {
  double mean = 0, ripple = 0, peak = 0;
};

/// Mean and peak-to-peak of `v`, peak of |i| over [t0, t1].
Figures figures(const Result& r, const std::string& v, const std::string& i, double t0, double t1) {
  Figures f;
  f.mean = measure::mean(r.time(), r[v], t0, t1);
  double lo = 1e300, hi = -1e300;
  for (std::size_t k = 0; k < r.time().size(); ++k) {
    if (r.time()[k] < t0 - 1e-12 || r.time()[k] > t1 + 1e-12) continue;
    lo = std::min(lo, r[v][k]);
    hi = std::max(hi, r[v][k]);
    f.peak = std::max(f.peak, std::abs(r[i][k]));
  }
  f.ripple = hi - lo;
  return f;
}

/// The periodic steady state and the last period of a long transient with the slow states held
/// (both at reltol 1e-7: at 1e-6 the two integrations' local errors reach 1e-4 of the table
/// radio's peak current), on one example netlist.
void compareWithTransient(const std::string& file, const std::string& v, const std::string& i,
                          double settle, int stepsPerPeriod = 100) {
  Netlist nl = loadNetlist(std::string(DISC_NETLIST_DIR) + "/" + file);
  PeriodicOptions po;
  po.tol.reltol = 1e-7;
  po.record = {v, i};
  po.maxStep = circuitPeriod(nl.circuit) / stepsPerPeriod;
  const PeriodicResult pr = periodicSteadyState(nl.circuit, po);
  const double T = pr.period;
  const Figures p = figures(pr.waveforms, v, i, 0.0, T);

  TransientOptions to;
  to.stop = std::ceil(settle / T) * T;
  to.tol.reltol = 1e-7;
  to.holdSlow = true;
  to.maxStep = po.maxStep;
  to.recordFrom = to.stop - 1.01 * T;
  to.record = {v, i};
  const Result tr = transient(nl.circuit, to);
  const Figures b = figures(tr, v, i, to.stop - T, to.stop);
  INFO(file << ": mean " << p.mean << " / " << b.mean << ", ripple " << p.ripple << " / "
            << b.ripple << ", peak " << p.peak << " / " << b.peak << "; shooting iterations "
            << pr.stats.iterations << ", largest Floquet multiplier "
            << pr.stats.largestMultiplier);
  // The agreement: 1e-4 relative on the mean, the ripple and the peak current. The
  // transient must have settled: its slowest mode decays by the multiplier per period.
  CHECK(std::pow(pr.stats.largestMultiplier, to.stop / T) < 1e-6);
  CHECK(p.mean == Approx(b.mean).epsilon(1e-4));
  CHECK(p.ripple == Approx(b.ripple).epsilon(1e-4));
  CHECK(p.peak == Approx(b.peak).epsilon(1e-4));
}

}  // namespace

TEST_CASE("Periodic steady state agrees with a long transient: table radio",
          "[periodic][examples]") {
  compareWithTransient("table-radio-half-wave.disc", "v:c", "i:SR1", 4.0);
}

namespace {

/// A self-heated diode driven by a current source with no capacitance and a temperature-free
/// saturation current: its voltage n k T/q ln(1 + i/Is) + Rs i is linear in T for the fixed
/// current waveform, so the period-average dissipation is exactly P0 + P1 (T - Ta) and the
/// lumped thermal RC cth dT/dt = P - (T - Ta)/rth has the closed form
///   T - Ta = dT_inf (1 - exp(-t / tau)), dT_inf = P0 / (1/rth - P1), tau = cth / (1/rth - P1)
/// (the first-order linear ODE's solution).
struct HeatedDiode {
  double idc = 1.0, iac = 0.5, f = 50.0, is = 1e-9, n = 1.5, rs = 0.5, rth = 20.0, cth = 2.0;
  double ambient = 300.0;
  Circuit circuit() const {
    Circuit c;
    c.setAmbient(ambient);
    c.emplace<CurrentSource>("I1", kGround, c.node("a"), Waveform::sine(iac, f, 0.0, idc));
    DiodeParams p;
    p.saturationCurrent = is;
    p.ideality = n;
    p.seriesResistance = rs;
    p.junctionCapacitance = 0.0;
    p.saturationTempExponent = 0.0;
    p.bandGap = 1e-12;
    p.breakdownVoltage = 0.0;
    p.thermalResistance = rth;
    p.heatCapacity = cth;
    c.emplace<Diode>("D1", c.node("a"), kGround, p);
    return c;
  }
  /// P0 and P1 by the trapezoidal rule over 20000 points of one period (independent of the
  /// engine).
  void dissipation(double& p0, double& p1) const {
    const int m = 20000;
    const double kq = 1.380649e-23 / 1.602176634e-19;  // k/q, V/K (CODATA 2018)
    p0 = p1 = 0.0;
    for (int j = 0; j < m; ++j) {
      const double i = idc + iac * std::sin(2.0 * std::numbers::pi * (j + 0.5) / m);
      const double lnTerm = n * kq * std::log1p(i / is) * i;
      p0 += (lnTerm * ambient + rs * i * i) / m;
      p1 += lnTerm / m;
    }
  }
};

}  // namespace

TEST_CASE("Warm-up: a self-heated diode follows the thermal RC closed form",
          "[periodic][envelope]") {
  const HeatedDiode d;
  double p0, p1;
  d.dissipation(p0, p1);
  const double g = 1.0 / d.rth - p1;
  const double rise = p0 / g, tau = d.cth / g;
  Circuit c = d.circuit();
  EnvelopeOptions eo;
  eo.duration = 5.0 * tau;
  eo.record = {"temp:D1"};
  const EnvelopeResult er = warmUp(c, eo);
  const auto& t = er.series.time();
  const auto& T = er.series["temp:D1"];
  REQUIRE(t.size() >= 5);
  INFO("rise " << rise << " K, tau " << tau << " s, slow steps " << er.stats.slowSteps
               << ", periodic solves " << er.stats.periodicSolves);
  double worst = 0.0;
  for (std::size_t k = 0; k < t.size(); ++k) {
    const double exact = d.ambient + rise * (1.0 - std::exp(-t[k] / tau));
    worst = std::max(worst, std::abs(T[k] - exact));
  }
  // The envelope's slow tolerance is reltol 1e-3 of the rise plus 0.02 K; the period average
  // of the temperature carries its ripple, rth-cth filtered: amplitude below P_ripple / (w cth).
  CHECK(worst < 1e-3 * rise + 0.05);
  CHECK(er.endTime == Approx(eo.duration));
}

// Two more bundled examples without a transformer's slow magnetizing mode, so a few seconds of
// transient settle them to the check's 1e-6 (the multiplier check above guards this).
TEST_CASE("Periodic steady state agrees with a long transient: television doubler",
          "[periodic][examples]") {
  compareWithTransient("tv-doubler-half-wave.disc", "v:top", "i:SR2", 4.0);
}

// The meter's reading is the movement's mean current; a peak taken from samples needs a finer
// grid than a hundred a period to agree to 1e-4 on this sharp rectified waveform.
TEST_CASE("Periodic steady state agrees with a long transient: copper-oxide meter rectifier",
          "[periodic][examples]") {
  compareWithTransient("meter-rectifier-cuox.disc", "i:RMETER", "i:D1", 0.5, 1000);
}

// The high-voltage stack's pulse into its small reservoir is narrow: its crest curves at
// |i''| = 1.6e4 A/s^2 on a 5.05 mA peak (read from a transient at 2 us steps). A sampled peak
// lies below the crest by up to |i''| h^2 / 8 for samples h apart, 1e-3 of the peak at the
// trapezoidal transient's own 50 us steps there under a hundred a period (its peak scattered
// by 6e-4 from period to period) and 4e-5 at 10 us, two thousand a period. Both runs therefore
// take 10 us steps: the shooting's BDF2 crest then lies 4e-5 above the converged one (2 us
// steps, where both agree to 2e-6), so the sampled peaks differ by 0 to 8e-5. The
// transformer's magnetizing inductance settles with a multiplier of 0.96 per period: 7 s.
TEST_CASE("Periodic steady state agrees with a long transient: high-voltage stack",
          "[periodic][examples]") {
  compareWithTransient("hv-stack-half-wave.disc", "v:hv", "i:SRHV", 7.0, 2000);
}

// A start from a neighbouring circuit's orbit (a campaign's variant started from its nominal
// circuit) solves the same shooting problem as a start from a warm-up: both end where Newton's
// last update is within the tolerance.
TEST_CASE("Periodic steady state from another circuit's orbit: the same settled period",
          "[periodic]") {
  const Netlist nl = loadNetlist(std::string(DISC_NETLIST_DIR) + "/table-radio-half-wave.disc");
  PeriodicOptions po;
  po.tol.reltol = 1e-6;
  po.record = {"v:c", "i:SR1"};
  const PeriodicResult nominal = periodicSteadyState(nl.circuit, po);
  REQUIRE(nominal.orbit);
  CHECK_FALSE(nominal.stats.fromOrbit);

  Netlist variant = nl;  // mains 6 % high, a reservoir 20 % larger
  Device& mains = variant.circuit.at("MAINS");
  mains.setParameter("rms", 1.06 * mains.parameter("rms"));
  Device& c1 = variant.circuit.at("C1");
  c1.setParameter("capacitance", 1.2 * c1.parameter("capacitance"));
  const PeriodicResult cold = periodicSteadyState(variant.circuit, po);
  PeriodicOptions from = po;
  from.from = nominal.orbit;
  const PeriodicResult warm = periodicSteadyState(variant.circuit, from);
  CHECK(warm.stats.fromOrbit);
  CHECK(warm.stats.warmupPeriods == 0);
  CHECK(warm.startTime == nominal.startTime);
  const double T = warm.period;
  const Figures a = figures(cold.waveforms, "v:c", "i:SR1", 0.0, T);
  const Figures b = figures(warm.waveforms, "v:c", "i:SR1", 0.0, T);
  const Figures n = figures(nominal.waveforms, "v:c", "i:SR1", 0.0, T);
  INFO("mean " << a.mean << " / " << b.mean << " (nominal " << n.mean << "), ripple " << a.ripple
               << " / " << b.ripple << ", peak " << a.peak << " / " << b.peak);
  // The variant's figures are its own, not the nominal's: 6 % more mains moves the output by
  // several percent.
  CHECK(std::abs(b.mean - n.mean) > 0.03 * n.mean);
  // Each start is settled to the tolerance, and the figures of one period carry the step
  // grids' truncation errors (each within 2 tolerances a step, summed over the period by the
  // circuit's slowest decay, 1 / (1 - multiplier)); 1e-4 relative bounds both at reltol 1e-6,
  // as the transient comparisons above allow.
  CHECK(b.mean == Approx(a.mean).epsilon(1e-4));
  CHECK(b.ripple == Approx(a.ripple).epsilon(1e-4));
  CHECK(b.peak == Approx(a.peak).epsilon(1e-4));

  // An orbit of another structure is not used: the warm-up runs.
  const Netlist other = loadNetlist(std::string(DISC_NETLIST_DIR) + "/tv-doubler-half-wave.disc");
  PeriodicOptions mismatch;
  mismatch.tol.reltol = 1e-4;
  mismatch.from = nominal.orbit;
  mismatch.record = {"v:top"};
  const PeriodicResult own = periodicSteadyState(other.circuit, mismatch);
  CHECK_FALSE(own.stats.fromOrbit);
  CHECK(own.stats.warmupPeriods == mismatch.warmupPeriods);
}
