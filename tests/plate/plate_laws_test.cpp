// The plate's laws against their published formulas, to 1e-9 relative.
#include <catch2/catch.hpp>
#include <cmath>

#include "disc/disc.hpp"
#include "plate/plate_model.hpp"

using namespace disc;

namespace {

PlateType bareBarrier() {
  // Only the thermionic barrier law left on: no leakage, image force, breakdown or deformation.
  PlateType t = PlateLibrary::builtIn().at("se-25mm-square");
  t.set("gsh_S_per_cm2", 0.0);
  t.set("image_force_per_V4", 0.0);
  t.set("breakdown_J0_A_per_cm2", 0.0);
  return t;
}

}  // namespace

TEST_CASE("Barrier current follows thermionic emission with ideality n", "[plate][laws]") {
  // J = Js(T) (exp(qV/(n k T)) - 1) (S. M. Sze and K. K. Ng, Physics of Semiconductor Devices,
  // 3rd ed., ch. 3), Js(T) = Js0 (T/T0)^2 exp(-(q phiB/(n k))(1/T - 1/T0)): the activation
  // scaled with the ideality (docs/plate-model.md, law 1).
  const PlateType t = bareBarrier();
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const double kb = constants::kBoltzmannEv;
  for (double T : {260.0, 300.0, 345.0}) {
    for (double v : {-0.5, 0.1, 0.4, 0.8}) {
      detail::PlateState s;
      detail::evaluatePlate(k, T, 0.0, v, 0.0, 0.0, 1.0, s);
      const auto& p = t.physics;
      const double js = p.js0 * std::pow(T / p.t0, 2) *
                        std::exp(-p.barrierEv / (p.ideality * kb) * (1 / T - 1 / p.t0));
      const double expected = js * p.areaCm2 * (std::exp(v / (p.ideality * kb * T)) - 1.0);
      INFO("T = " << T << " K, V = " << v << " V");
      CHECK(s.ib == Approx(expected).epsilon(1e-9));
    }
  }
}

TEST_CASE("Barrier capacitance obeys Mott-Schottky: 1/C^2 linear in V", "[plate][laws]") {
  // C = A C0 / sqrt(1 - V/Vbi) (Sze and Ng, ch. 3: depletion capacitance of an abrupt barrier).
  const PlateType t = bareBarrier();
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const double c0 = t.physics.c0Area * t.physics.areaCm2, vbi = t.physics.builtIn;
  for (double v : {-30.0, -10.0, -1.0, 0.0, 0.3}) {
    detail::PlateState s;
    detail::evaluatePlate(k, 300.0, 0.0, v, 0.0, 0.0, 1.0, s);
    CHECK(1.0 / (s.c * s.c) == Approx((1.0 - v / vbi) / (c0 * c0)).epsilon(1e-9));
    // The charge is the integral of C: Q = 2 A C0 Vbi (1 - sqrt(1 - V/Vbi)).
    CHECK(s.q == Approx(2.0 * c0 * vbi * (1.0 - std::sqrt(1.0 - v / vbi))).epsilon(1e-9));
  }
}

TEST_CASE("Trap emission is thermally activated: gt follows Arrhenius", "[plate][laws]") {
  // gt(T) = (Ct / tau) exp(-(Et/k)(1/T - 1/T0)): the emission rate of a deep level is thermally
  // activated (D. V. Lang, J. Appl. Phys. 45, 3023 (1974); simplified here: Lang's rate has a
  // T^2 prefactor the law leaves out), so the branch's time constant
  // Ct / gt shortens as the plate warms. dIt/dT = It Et / (k T^2).
  const PlateType t = bareBarrier();
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const auto& p = t.physics;
  const double kb = constants::kBoltzmannEv, ct = p.trapCArea * p.areaCm2;
  REQUIRE(p.trapActivationEv > 0.0);
  for (double T : {260.0, 300.0, 345.0}) {
    detail::PlateState s;
    detail::evaluatePlate(k, T, 0.0, -5.0, -2.0, 0.0, 1.0, s);
    const double gt = ct / p.trapTau * std::exp(-p.trapActivationEv / kb * (1 / T - 1 / p.t0));
    INFO("T = " << T << " K");
    CHECK(s.gt == Approx(gt).epsilon(1e-9));
    CHECK(s.it == Approx(gt * -3.0).epsilon(1e-9));
    CHECK(s.dItDth == Approx(gt * -3.0 * p.trapActivationEv / (kb * T * T)).epsilon(1e-9));
  }
}

TEST_CASE("Series resistance follows the Arrhenius law (NTC)", "[plate][laws]") {
  // Rs(T) = (rho0 t / A) exp[(Ea/k)(1/T - 1/T0)] (Arrhenius; activation energy of selenium: Annalen
  // der Physik 1954, docs/sources.md).
  const PlateType t = bareBarrier();
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const double kb = constants::kBoltzmannEv;
  for (double T : {280.0, 300.0, 360.0}) {
    detail::PlateState s;
    detail::evaluatePlate(k, T, 1.2, 0.4, 0.0, 0.0, 1.0, s);
    const double rs = t.physics.rsArea / t.physics.areaCm2 *
                      std::exp(t.physics.rsActivationEv / kb * (1 / T - 1 / t.physics.t0));
    CHECK(s.is == Approx((1.2 - 0.4) / rs).epsilon(1e-9));
  }
}

TEST_CASE("Ageing raises Rs logarithmically, storage lowers the forming state", "[plate][laws]") {
  const PlateType& t = PlateLibrary::builtIn().at("se-25mm-square");
  CHECK(detail::ageingFactor(t, 0.0, 300.0) == 1.0);
  const double a15k = detail::ageingFactor(t, 15000.0, t.physics.t0);
  CHECK(a15k == Approx(1.0 + t.history.ageCoefficient * std::log1p(15.0)).epsilon(1e-12));
  // Hours at a hotter plate count for more (Arrhenius weighting).
  CHECK(detail::ageingFactor(t, 15000.0, 340.0) > a15k);
  CHECK(detail::formingAfterStorage(t, 20.0) == Approx(std::exp(-20.0 / 10.0)).epsilon(1e-12));
}

TEST_CASE("Storage deforms faster when warm: Arrhenius in the storage temperature",
          "[plate][laws]") {
  // F = exp(-(years / tau) exp((Est/k)(1/T0 - 1/T_store))) (docs/plate-model.md, law 8):
  // twenty years in a warm attic (35 degC) against a cool room (15 degC).
  const PlateType& t = PlateLibrary::builtIn().at("se-25mm-square");
  const auto& h = t.history;
  auto expected = [&](double years, double kelvin) {
    return std::exp(-years / h.storageTauYears *
                    std::exp(h.storageActivationEv / constants::kBoltzmannEv *
                             (1.0 / t.physics.t0 - 1.0 / kelvin)));
  };
  const double attic = detail::formingAfterStorage(t, 20.0, 308.15);
  const double room = detail::formingAfterStorage(t, 20.0, 288.15);
  CHECK(attic == Approx(expected(20.0, 308.15)).epsilon(1e-12));
  CHECK(room == Approx(expected(20.0, 288.15)).epsilon(1e-12));
  CHECK(attic < room);
  // The stack takes the storage temperature from its options.
  StackOptions o;
  o.storedYears = 20.0;
  o.storageTemperature = 308.15;
  CHECK(Stack("S", 1, 0, t, o).initialForming() == Approx(attic).epsilon(1e-12));
}

TEST_CASE("An idle plate deforms during a run at the rate of its own temperature",
          "[plate][laws]") {
  // Unpowered at 330 K for 1e7 s (four months): dF/dt = -F / tau exp((Est/k)(1/T0 - 1/T)),
  // so F = exp(-t w(330 K) / tau). The trapezoidal steps err by far less than the 1e-4 here
  // (the engine's state tolerance).
  const PlateType& t = PlateLibrary::builtIn().at("se-25mm-square");
  Circuit c;
  c.setAmbient(330.0);
  c.emplace<Resistor>("R1", c.node("a"), kGround, 1e6);
  c.emplace<Stack>("SR1", c.node("a"), kGround, t, StackOptions{});
  TransientOptions o;
  o.stop = 1e7;
  o.start = Start::Cold;
  o.record = {"form:SR1"};
  const Result r = transient(c, o);
  const double w = std::exp(t.history.storageActivationEv / constants::kBoltzmannEv *
                            (1.0 / t.physics.t0 - 1.0 / 330.0));
  const double tau = t.history.storageTauYears * 365.25 * 24 * 3600;
  CHECK(r["form:SR1"].back() == Approx(std::exp(-o.stop * w / tau)).epsilon(1e-4));
}

TEST_CASE("The ageing term raises Rs, leakage and threshold in their stated proportions",
          "[plate][laws]") {
  // docs/plate-model.md, law 9: with A = a s, Rs (1 + A), the shunt (1 + p A), and the forward
  // threshold + v A, i.e. Is divided by exp(v A / (n kT/q)).
  PlateType t = PlateLibrary::builtIn().at("se-25mm-square");
  t.set("image_force_per_V4", 0.0);
  t.set("breakdown_J0_A_per_cm2", 0.0);
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const auto& h = t.history;
  const double s = std::log1p(60.0), A = h.ageCoefficient * s, T = 320.0;
  detail::PlateState fresh, aged;
  // Series resistance: the current through Rs at a fixed drop across it.
  detail::evaluatePlate(k, T, 1.2, 0.4, 0.4, 0.0, 1.0, fresh);
  detail::evaluatePlate(k, T, 1.2, 0.4, 0.4, 0.0, 1.0, aged, nullptr, s);
  CHECK(fresh.is / aged.is == Approx(1.0 + A).epsilon(1e-12));
  // Forward barrier: the same current at a barrier voltage higher by v A.
  const double nvt = t.physics.ideality * constants::kBoltzmannEv * T;
  const double gsh = t.physics.gshArea * t.physics.areaCm2 *
                     std::exp(t.physics.gshActivationEv / constants::kBoltzmannEv *
                              (1.0 / t.physics.t0 - 1.0 / T));
  const double uj = 0.5, ujAged = uj + h.ageThresholdV * A;
  detail::evaluatePlate(k, T, uj, uj, uj, 0.0, 1.0, fresh);
  detail::evaluatePlate(k, T, ujAged, ujAged, ujAged, 0.0, 1.0, aged, nullptr, s);
  const double barrierFresh = fresh.ib - gsh * uj;
  const double barrierAged = aged.ib - gsh * (1.0 + h.ageLeakProportion * A) * ujAged;
  // Is e^-x (exp((uj + v A)/nvt) - 1) against Is (exp(uj/nvt) - 1), x = v A/nvt: the same but
  // for the "-1" terms.
  const double x = h.ageThresholdV * A / nvt, e = std::exp(uj / nvt);
  CHECK(barrierAged == Approx(barrierFresh * (e - std::exp(-x)) / (e - 1.0)).epsilon(1e-9));
  // Reverse at -20 V (no image force or breakdown): the shunt grows by 1 + p A and the
  // saturation current falls by exp(-v A / (n kT/q)).
  detail::evaluatePlate(k, T, -20.0, -20.0, -20.0, 0.0, 1.0, fresh);
  detail::evaluatePlate(k, T, -20.0, -20.0, -20.0, 0.0, 1.0, aged, nullptr, s);
  const double isFresh = -(fresh.ib + gsh * 20.0);
  CHECK(isFresh > 0.0);
  CHECK(aged.ib == Approx(-gsh * (1.0 + h.ageLeakProportion * A) * 20.0 -
                          isFresh * std::exp(-h.ageThresholdV * A / nvt))
                       .epsilon(1e-9));
}

TEST_CASE("The Arrhenius cache reproduces the uncached laws", "[plate][laws]") {
  // The cache replaces four exponentials by a series within 10 mK of the cached temperature,
  // and recomputes beyond it: every output must match the uncached evaluation to rounding.
  const auto k =
      detail::makePlateConstants(PlateLibrary::builtIn().at("se-25mm-square"), 1.0, 1.0, 1.0, 1.0);
  detail::ArrheniusCache cache;
  for (double theta : {10.0, 10.005, 10.01, 10.03, 40.0, 40.002, -90.0, -89.99}) {
    for (double uj : {-20.0, -1.0, 0.3, 0.7}) {
      detail::PlateState a, b;
      detail::evaluatePlate(k, 300.0, uj + 0.05, uj, 0.01, theta, 0.8, a);
      detail::evaluatePlate(k, 300.0, uj + 0.05, uj, 0.01, theta, 0.8, b, &cache);
      CHECK(b.ib == Approx(a.ib).epsilon(1e-13));
      CHECK(b.is == Approx(a.is).epsilon(1e-13));
      CHECK(b.dIbDth == Approx(a.dIbDth).epsilon(1e-12));
      CHECK(b.p == Approx(a.p).epsilon(1e-13));
      CHECK(b.g == Approx(a.g).epsilon(1e-13));
      CHECK(b.it == Approx(a.it).epsilon(1e-13));
      CHECK(b.dItDth == Approx(a.dItDth).epsilon(1e-12));
    }
  }
}

TEST_CASE("Forward drop at rated current falls with temperature by the stated law",
          "[plate][laws]") {
  // Law 1 at a constant current I >> Is: Vj(T) = phiB + (T/T0)(Vj0 - phiB) - 2 n (kT/q) ln(T/T0),
  // so dVj/dT = (Vj0 - phiB)/T0 - 2 n k/q at T0, and the line extrapolates to phiB at 0 K
  // (derived from the thermionic law, Sze and Ng ch. 3, with the activation phiB/n). The bulk
  // adds I dRs/dT = -I Rs Ea/(k T^2) (Arrhenius, Annalen der Physik 1954). The shunt carries
  // under 1e-3 of the current, the "+1" of the barrier law 1/3000 of it: the coefficient from
  // the curve and the sum agree within 1 %. Central differences over +-1 K err by (1 K)^2/6 of
  // the third derivative, far below that.
  const double kb = constants::kBoltzmannEv, t0 = 300.0;
  for (const char* name : {"se-25mm-square", "cuox-12mm-meter"}) {
    const PlateType& t = PlateLibrary::builtIn().at(name);
    const auto& p = t.physics;
    const PlateCurve curve(t);
    const double i = t.ratedCurrent();
    const double coefficient = (curve.voltage(i, t0 + 1.0) - curve.voltage(i, t0 - 1.0)) / 2.0;
    const double rs = p.rsArea / p.areaCm2;
    const double vj = curve.voltage(i, t0) - i * rs;
    const double barrierPart = (vj - p.barrierEv) / t0 - 2.0 * p.ideality * kb;
    const double bulkPart = -i * rs * p.rsActivationEv / (kb * t0 * t0);
    INFO(name << ": " << coefficient * 1e3 << " mV/K at " << i << " A, barrier "
              << barrierPart * 1e3 << " mV/K, bulk " << bulkPart * 1e3 << " mV/K, drop "
              << curve.voltage(i, t0) << " V");
    CHECK(coefficient == Approx(barrierPart + bulkPart).epsilon(1e-2));
    // The barrier part stays that of one junction: with the full phiB as activation it would be
    // (Vj0 - n phiB)/T0, about -5 mV/K for selenium's n = 3 (the bulk then doubling the fall).
    CHECK(std::abs(barrierPart) < 2e-3);
    const double relative = coefficient / curve.voltage(i, t0);
    if (t.material == "selenium") {
      // A selenium plate's forward drop at rated current falls by a few mV/K (from memory):
      // -2 to -8 mV/K per plate near room temperature.
      CHECK(coefficient < -2e-3);
      CHECK(coefficient > -8e-3);
    } else {
      // Copper oxide's forward drop is mostly its strongly NTC oxide resistance and falls
      // faster, relative to the drop, than selenium's: -1 to -3 %/K (from memory).
      CHECK(relative < -0.01);
      CHECK(relative > -0.03);
    }
  }
}
