// Rectifier circuits against closed forms, and energy conservation.
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "disc/disc.hpp"

using namespace disc;
using std::numbers::pi;

namespace {

struct HartFigures {
  double offDeg, onDeg, ripple;
};

// Half-wave rectifier with RC load and an ideal diode (D. W. Hart, Power Electronics, 2011,
// ch. 3, from memory): turn-off theta = pi - atan(w R C); turn-on alpha solves
// sin(alpha) = sin(theta) exp(-(2 pi + alpha - theta) / (w R C)); ripple Vm (1 - sin alpha).
HartFigures hart(double vm, double f, double R, double C) {
  const double wrc = 2 * pi * f * R * C;
  const double theta = pi - std::atan(wrc);
  double lo = 0.0, hi = pi / 2;
  for (int k = 0; k < 200; ++k) {
    const double a = 0.5 * (lo + hi);
    const double g = std::sin(a) - std::sin(theta) * std::exp(-(2 * pi + a - theta) / wrc);
    (g > 0 ? hi : lo) = a;
  }
  const double alpha = 0.5 * (lo + hi);
  return {theta * 180 / pi, alpha * 180 / pi, vm * (1 - std::sin(alpha))};
}

}  // namespace

TEST_CASE("Half-wave RC rectifier matches Hart's turn-off and turn-on angles",
          "[engine][rectifier]") {
  // Check values (derived from Hart's two equations; docs/sources.md, rectifier circuits):
  // 120 V rms, 60 Hz, 500 ohm;
  // 100 uF: theta 93.04 deg, alpha 48.23 deg, ripple 43.13 V; 3300 uF: alpha 81.96 deg,
  // ripple 1.667 V.
  const auto h100 = hart(120 * std::sqrt(2.0), 60, 500, 100e-6);
  CHECK(h100.offDeg == Approx(93.04).margin(0.01));
  CHECK(h100.onDeg == Approx(48.23).margin(0.01));
  CHECK(h100.ripple == Approx(43.13).margin(0.01));
  const auto h3300 = hart(120 * std::sqrt(2.0), 60, 500, 3300e-6);
  CHECK(h3300.onDeg == Approx(81.96).margin(0.01));
  CHECK(h3300.ripple == Approx(1.667).margin(0.001));

  for (double C : {100e-6, 3300e-6}) {
    for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::TrBdf2, Method::Ida}) {
      reference::HalfWaveRc spec;
      spec.capacitance = C;
      Circuit c = reference::halfWaveRc(spec);
      TransientOptions o;
      o.stop = 20.0 / 60.0;
      o.method = m;
      o.start = Start::Cold;
      o.tol.reltol = 1e-5;
      o.maxStep = 1.0 / 60.0 / 2000.0;
      o.record = {"v:out", "i:D1"};
      const Result r = transient(c, o);
      const double t1 = o.stop, t0 = t1 - 1.0 / 60.0;
      const auto& t = r.time();
      const auto& id = r["i:D1"];
      // The exponential diode's current tails off where the ideal one stops; a thousandth of the
      // peak marks conduction to within a small fraction of a degree.
      const double threshold = 1e-3 * measure::maximum(t, id, t0, t1);
      const auto off = measure::crossings(t, id, threshold, -1, t0, t1);
      const auto on = measure::crossings(t, id, threshold, +1, t0, t1);
      REQUIRE(off.size() == 1);
      REQUIRE(on.size() == 1);
      auto deg = [](double time) { return std::fmod(time * 60.0, 1.0) * 360.0; };
      const auto ref = hart(120 * std::sqrt(2.0), 60, 500, C);
      const double ripple =
          measure::maximum(t, r["v:out"], t0, t1) - measure::minimum(t, r["v:out"], t0, t1);
      INFO(methodName(m) << " C = " << C);
      CHECK(deg(off[0]) == Approx(ref.offDeg).margin(0.5));
      CHECK(deg(on[0]) == Approx(ref.onDeg).margin(0.5));
      CHECK(ripple == Approx(ref.ripple).epsilon(0.01));
    }
  }
}

TEST_CASE("Energy balance over a bridge-supply switch-on", "[engine][energy]") {
  // Conservation of energy (Tellegen's theorem): the EMF's energy equals dissipation in load,
  // diodes and windings plus the change of stored electric and magnetic energy.
  reference::BridgeSupply spec;
  spec.mainsResistance = 0.0;
  Circuit c = reference::bridgeSupply(spec);
  for (Method m : {Method::Trapezoidal, Method::Bdf2, Method::TrBdf2, Method::Ida}) {
    TransientOptions o;
    o.stop = 0.1;
    o.method = m;
    o.start = Start::Cold;
    o.tol.reltol = 1e-5;
    o.record = {"p:MAINS", "p:RL",    "p:D1",      "p:D2",     "p:D3",
                "p:D4",    "loss:T1", "energy:T1", "energy:C1"};
    const Result r = transient(c, o);
    const auto& t = r.time();
    auto energy = [&](const char* s) { return measure::integral(t, r[s], 0.0, o.stop); };
    const double source = -energy("p:MAINS");
    const double dissipated = energy("p:RL") + energy("p:D1") + energy("p:D2") + energy("p:D3") +
                              energy("p:D4") + energy("loss:T1");
    const double stored = r["energy:T1"].back() - r["energy:T1"].front() + r["energy:C1"].back() -
                          r["energy:C1"].front();
    INFO(methodName(m) << ": source " << source << " J, dissipated " << dissipated << " J, stored "
                       << stored << " J");
    CHECK(std::abs(source - dissipated - stored) <= 1e-3 * source);
  }
}

TEST_CASE("Bridge supply output is near the peak secondary voltage less two diode drops",
          "[engine][rectifier]") {
  // Capacitor-input full-wave: V_dc ~ V_m - 2 V_diode - I_dc / (4 f C) (ripple about I/(2 f C)
  // peak-to-peak; J. Millman and C. C. Halkias, Electronic Devices and Circuits, 1967, from
  // memory). The transformer's resistance lowers it further; accept within 10 %.
  Circuit c = reference::bridgeSupply();
  TransientOptions o;
  o.stop = 1.0;
  o.method = Method::Bdf2;
  o.start = Start::Cold;
  o.record = {"v:out"};
  const Result r = transient(c, o);
  const auto fig = measure::outputFigures(r.time(), r["v:out"], 50.0, 2);
  const double vm = 15.0 * std::sqrt(2.0), idc = fig.mean / 18.0;
  const double estimate = vm - 2 * 0.8 - idc / (4 * 50.0 * 2200e-6);
  CHECK(fig.mean == Approx(estimate).epsilon(0.10));
  // I/(2 f C) assumes the reservoir discharges for the whole half cycle: an upper bound.
  const double bound = idc / (2 * 50.0 * 2200e-6);
  CHECK(fig.ripplePeakToPeak < bound);
  CHECK(fig.ripplePeakToPeak > 0.6 * bound);
}
