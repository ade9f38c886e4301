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
  // J = Js(T) (exp(qV/(n k T)) - 1), Js(T) = Js0 (T/T0)^2 exp(-(q phiB/k)(1/T - 1/T0))
  // (S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed., ch. 3).
  const PlateType t = bareBarrier();
  const auto k = detail::makePlateConstants(t, 1.0, 1.0, 1.0, 1.0);
  const double kb = constants::kBoltzmannEv;
  for (double T : {260.0, 300.0, 345.0}) {
    for (double v : {-0.5, 0.1, 0.4, 0.8}) {
      detail::PlateState s;
      detail::evaluatePlate(k, T, 0.0, v, 0.0, 0.0, 1.0, s);
      const auto& p = t.physics;
      const double js =
          p.js0 * std::pow(T / p.t0, 2) * std::exp(-p.barrierEv / kb * (1 / T - 1 / p.t0));
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
    }
  }
}
