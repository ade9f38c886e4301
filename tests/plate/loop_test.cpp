// A plate's I-V loop against temperature: the trap branch's share from its exact periodic
// response, and the loop's trend with heating. Each check names its source or mark.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>
#include <vector>

#include "disc/disc.hpp"

using namespace disc;

namespace {

/// The last period of a sine sweep through 50 ohm, the plate held at the ambient.
struct Loop {
  double area = 0.0;          // the I-V loop's area, V A
  std::vector<double> t, vj;  // barrier voltage over the last period
};

Loop sweep(const PlateType& type, double ambient, double frequency, double amplitude,
           int cycles = 10) {
  Circuit c;
  c.setAmbient(ambient);
  c.emplace<VoltageSource>("V1", c.node("s"), kGround, Waveform::sine(amplitude, frequency));
  c.emplace<Resistor>("R1", c.node("s"), c.node("a"), 50.0);
  StackOptions o;
  o.cooling = 1e4;  // Rth / 1e4: a tenth of a watt heats the plate by under a millikelvin
  c.emplace<Stack>("X1", c.node("a"), kGround, type, o);
  TransientOptions tr;
  tr.stop = cycles / frequency;
  tr.start = Start::Cold;
  tr.maxStep = 1.0 / (frequency * 2000.0);
  tr.tol.reltol = 1e-6;
  tr.record = {"v:a", "i:X1", "vj:X1"};
  const Result r = transient(c, tr);
  const auto& t = r.time();
  const auto &v = r["v:a"], &i = r["i:X1"], &vj = r["vj:X1"];
  Loop l;
  const double from = tr.stop - 1.0 / frequency;
  for (std::size_t k = 1; k < t.size(); ++k) {
    if (t[k - 1] < from) continue;
    l.area += 0.5 * (i[k] + i[k - 1]) * (v[k] - v[k - 1]);
    if (l.t.empty()) l.t.push_back(t[k - 1]), l.vj.push_back(vj[k - 1]);
    l.t.push_back(t[k]);
    l.vj.push_back(vj[k]);
  }
  l.area = std::abs(l.area);
  return l;
}

/// The loop area a linear Rt-Ct branch (capacitance ct, time constant tau) adds when driven by
/// the periodic barrier voltage of `l`: with u = sum U_n cos(n w t + p_n), the branch's
/// admittance Y = j w Ct / (1 + j w tau) gives, harmonic by harmonic (cross terms vanish over a
/// period), the area pi U_n^2 n Im Y(n w) = pi n^2 w Ct U_n^2 / (1 + (n w tau)^2)
/// (phasor analysis, Nilsson and Riedel, Electric Circuits).
double trapArea(const Loop& l, double frequency, double ct, double tau, int harmonics = 80) {
  const double w = 2.0 * std::numbers::pi * frequency, period = 1.0 / frequency;
  double area = 0.0;
  for (int n = 1; n <= harmonics; ++n) {
    double a = 0.0, b = 0.0;
    for (std::size_t k = 1; k < l.t.size(); ++k) {
      const double h = l.t[k] - l.t[k - 1];
      a += 0.5 * h *
           (l.vj[k] * std::cos(n * w * l.t[k]) + l.vj[k - 1] * std::cos(n * w * l.t[k - 1]));
      b += 0.5 * h *
           (l.vj[k] * std::sin(n * w * l.t[k]) + l.vj[k - 1] * std::sin(n * w * l.t[k - 1]));
    }
    const double un2 = (a * a + b * b) * 4.0 / (period * period);
    area += std::numbers::pi * n * n * w * ct * un2 / (1.0 + std::pow(n * w * tau, 2));
  }
  return area;
}

}  // namespace

TEST_CASE("A heated plate's loop at 50 Hz grows: its traps empty faster", "[plate][loops]") {
  // The trap branch's time constant Ct/gt shortens with heating as deep-level emission does
  // (Arrhenius, simplified from D. V. Lang, J. Appl. Phys. 45, 3023 (1974)); heated plates show
  // wider loops (from memory; issue #19). With the plate held at the ambient and Rs constant, v =
  // uj + Rs i, and the static barrier current is single-valued in uj, so the loop's area is the
  // barrier charge's share plus the trap branch's: A = A_barrier(uj) + A_trap(uj).
  const PlateType& se = PlateLibrary::builtIn().at("se-25mm-square");
  PlateType noTrap = se;
  noTrap.set("trap_c_F_per_cm2", 0.0);
  PlateType fixedTrap = se;
  fixedTrap.set("trap_activation_eV", 0.0);
  const auto& p = se.physics;
  const double f = 50.0, amplitude = 10.0, ct = p.trapCArea * p.areaCm2;
  const double kb = constants::kBoltzmannEv;
  auto tau = [&](double kelvin) {
    return p.trapTau * std::exp(p.trapActivationEv / kb * (1.0 / kelvin - 1.0 / p.t0));
  };
  const double cold = 293.15, hot = 343.15;  // 20 and 70 degC
  const Loop a20 = sweep(se, cold, f, amplitude), a70 = sweep(se, hot, f, amplitude);
  const Loop b20 = sweep(noTrap, cold, f, amplitude), b70 = sweep(noTrap, hot, f, amplitude);
  const Loop fixed20 = sweep(fixedTrap, cold, f, amplitude);
  const Loop fixed70 = sweep(fixedTrap, hot, f, amplitude);
  const double t20 = trapArea(a20, f, ct, tau(cold)), t70 = trapArea(a70, f, ct, tau(hot));
  INFO("loop areas (V A): 20 degC " << a20.area << ", 70 degC " << a70.area << "; barrier alone "
                                    << b20.area << ", " << b70.area << "; trap terms " << t20
                                    << ", " << t70 << "; fixed traps " << fixed20.area << ", "
                                    << fixed70.area);
  // The window (derived): the trap branch's current, at most w Ct U = 0.5 mA at 10 V, moves the
  // barrier voltage through the 50 ohm source by 25 mV of 10 V, 0.25 %, so the barrier's share
  // in the run without traps differs by up to 0.5 % (it goes as U^2); the last period starts
  // nine periods (180 ms) in, over six of the slowest trap time constants (29 ms at 20 degC):
  // the branch's start-up transient is below e^-6 = 0.25 % of its swing. 2 % of the loop covers
  // both with room.
  CHECK(a20.area == Approx(b20.area + t20).epsilon(0.02));
  CHECK(a70.area == Approx(b70.area + t70).epsilon(0.02));
  // The trend: tau falls from 29 ms to 2.9 ms (Et = 0.4 eV), w tau from 9 to 0.9, so the trap
  // term per volt squared, w Ct / (1 + (w tau)^2), grows about 45-fold and the loop widens by
  // more than the barrier's share can shrink. With fixed traps it does not widen as much.
  CHECK(a70.area > 1.3 * a20.area);
  CHECK(t70 > 20.0 * t20);
  CHECK(a70.area - fixed70.area > 0.5 * t70);
}
