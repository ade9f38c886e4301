// Plate equations. Laws (S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed.,
// ch. 3, metal-semiconductor contacts, from memory):
//   Js(T)  = Js0 (T/T0)^2 exp(-(phiB/(n k))(1/T - 1/T0))             thermionic emission, its
//                                                      activation scaled with the ideality
//   Ib     = Is(T) [1 + D(F) (exp(b(T) X) - 1)] (exp(uj/(n kT/q)) - 1)
//            X = (Vbi + Vr)^(1/4) - Vbi^(1/4), Vr = smooth max(0, -uj), b(T) = b0 T0/T
//                                                                      image-force lowering
//          + Gsh0 exp((Esh/k)(1/T0 - 1/T)) D(F) uj                     shunt leakage
//          - I0 exp((-uj - Vbd)/Vs)                                    soft breakdown
//   Rs(T)  = Rs0 exp((Ea/k)(1/T - 1/T0)) * ageing                      Arrhenius, NTC
//   Q(uj)  = Mott-Schottky depletion charge, C = Cj0 / sqrt(1 - uj/Vbi)
//   It     = gt0 exp(-(Et/k)(1/T - 1/T0)) (uj - ut), Ct d ut/dt = It     trap branch: thermally
//            activated emission (D. V. Lang, J. Appl. Phys. 45, 3023 (1974))
//   D(F)   = 1 + (L - 1)(1 - F)                                        deformed leakage
//   dF/dt  = (1 - F) Vr / (Vref tau) exp((Ef/k)(1/T0 - 1/T))
//            - F / tau_storage exp((Est/k)(1/T0 - 1/T))                deforming, also stored
//   s      = ln(1 + H/H0), ds/dt = exp((Eage/k)(1/T0 - 1/T)) exp(-s) / H0   ageing state:
//            Rs (1 + a s), shunt (1 + p a s), threshold + v a s
// The forming and ageing laws are libdisc's own proposal (docs/plate-model.md).
#include "plate_model.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "devices/junction_math.hpp"
#include "disc/constants.hpp"

namespace disc::detail {
namespace {

constexpr double kSecondsPerYear = 365.25 * 24 * 3600;
constexpr double kExpLimitCurrent = 1e4;  // A, where the forward exponential turns linear
// exp(-40) = 4e-18 is lost to rounding next to 1: the forward exponential is not evaluated
// below that.
constexpr double kNegligibleExponent = 40.0;

}  // namespace

PlateConstants makePlateConstants(const PlateType& type, double jsFactor, double rsFactor,
                                  double gshFactor, double ageFactor) {
  const auto& p = type.physics;
  const double kEv = constants::kBoltzmannEv;
  PlateConstants k;
  k.is0 = p.js0 * p.areaCm2 * jsFactor;
  k.expLimitLog = std::log(kExpLimitCurrent / k.is0 + 1.0);
  k.n = p.ideality;
  // The activation is phiB/n: the barrier voltage at a constant current then extrapolates to
  // phiB at 0 K, as a junction's forward voltage extrapolates to its barrier (docs/plate-model.md,
  // law 1). With phiB itself it would extrapolate to n phiB, and fall n times too steeply.
  k.phiOverK = p.barrierEv / (kEv * p.ideality);
  k.t0 = p.t0;
  k.b0 = p.imageForce;
  k.vbi = p.builtIn;
  k.vbi4 = std::sqrt(std::sqrt(p.builtIn));
  k.rs0 = p.rsArea / p.areaCm2 * rsFactor * ageFactor;
  k.rsEaOverK = p.rsActivationEv / kEv;
  k.gsh0 = p.gshArea * p.areaCm2 * gshFactor;
  k.gshEaOverK = p.gshActivationEv / kEv;
  k.leakFactor = type.history.deformedLeakFactor;
  k.bdV = p.breakdownV;
  k.bdSlope = p.breakdownSlopeV;
  k.bdI0 = p.breakdownJ0 * p.areaCm2;
  k.cj0 = p.c0Area * p.areaCm2;
  k.fc = p.fc;
  k.depletion = DepletionShape(k.cj0, k.vbi, 0.5, k.fc);
  k.ct = p.trapCArea * p.areaCm2;
  k.gt = k.ct > 0.0 ? k.ct / p.trapTau : 0.0;
  k.trapEaOverK = p.trapActivationEv / kEv;
  k.rth = type.thermal.rth;
  k.cth = type.thermal.cth;
  k.reformRate0 = 1.0 / (type.history.reformTau * type.history.reformVoltage);
  k.reformEaOverK = type.history.reformActivationEv / kEv;
  k.storageRate = 1.0 / (type.history.storageTauYears * kSecondsPerYear);
  k.storageEaOverK = type.history.storageActivationEv / kEv;
  k.ageCoefficient = type.history.ageCoefficient;
  k.ageRate0 = 1.0 / (3600.0 * type.history.ageHoursScale);
  k.ageEaOverK = type.history.ageActivationEv / kEv;
  k.ageLeak = type.history.ageLeakProportion;
  k.ageThreshold = type.history.ageThresholdV;
  return k;
}

double ageingState(const PlateType& type, double hours, double kelvin) {
  const auto& h = type.history;
  const double weight = std::exp(h.ageActivationEv / constants::kBoltzmannEv *
                                 (1.0 / type.physics.t0 - 1.0 / kelvin));
  return std::log1p(hours * weight / h.ageHoursScale);
}

double ageingFactor(const PlateType& type, double hours, double kelvin) {
  return 1.0 + type.history.ageCoefficient * ageingState(type, hours, kelvin);
}

double formingAfterStorage(const PlateType& type, double years, double kelvin) {
  const auto& h = type.history;
  const double t = kelvin > 0.0 ? kelvin : type.physics.t0;
  const double w =
      std::exp(h.storageActivationEv / constants::kBoltzmannEv * (1.0 / type.physics.t0 - 1.0 / t));
  return std::exp(-years * w / h.storageTauYears);
}

namespace {

// exp(x) for |x| below about 5e-3: the series to x^5 (relative error under x^6 / 720, 2e-17).
inline double expSmall(double x) {
  return 1.0 + x * (1.0 + x * (0.5 + x * (1.0 / 6.0 + x * (1.0 / 24.0 + x * (1.0 / 120.0)))));
}

// Within this distance of the cached temperature the factors follow by the series. At most
// 10 mK the largest exponent step (phiB/k * dT/T^2, phiB below 1.5 eV, T above 200 K) is below
// 4.4e-3, inside the series' accuracy. A conducting plate warms by up to about a millikelvin
// per time step, so a narrower band would recompute the four exponentials at every step.
constexpr double kCacheKelvin = 1e-2;

struct Factors {
  double is, rs, gsh, rate, age, store, trap;
};

Factors arrhenius(const PlateConstants& k, double T, double dInv, ArrheniusCache* c) {
  if (c && c->temperature >= 0.0 && std::abs(T - c->temperature) <= kCacheKelvin) {
    const double d = dInv - c->dInv;
    return {c->is * expSmall(-k.phiOverK * d),     c->rs * expSmall(k.rsEaOverK * d),
            c->gsh * expSmall(-k.gshEaOverK * d),  c->rate * expSmall(-k.reformEaOverK * d),
            c->age * expSmall(-k.ageEaOverK * d),  c->store * expSmall(-k.storageEaOverK * d),
            c->trap * expSmall(-k.trapEaOverK * d)};
  }
  const Factors e{std::exp(-k.phiOverK * dInv),   std::exp(k.rsEaOverK * dInv),
                  std::exp(-k.gshEaOverK * dInv), std::exp(-k.reformEaOverK * dInv),
                  std::exp(-k.ageEaOverK * dInv), std::exp(-k.storageEaOverK * dInv),
                  std::exp(-k.trapEaOverK * dInv)};
  if (c) {
    *c = {};
    c->temperature = T;
    c->dInv = dInv;
    c->is = e.is;
    c->rs = e.rs;
    c->gsh = e.gsh;
    c->rate = e.rate;
    c->age = e.age;
    c->store = e.store;
    c->trap = e.trap;
  }
  return e;
}

}  // namespace

void plateLimitScale(const PlateConstants& k, double t, double& nvt, double& vcrit,
                     ArrheniusCache* cache) {
  t = std::clamp(t, kPlateLawTmin, kPlateLawTmax);
  if (cache && cache->limitScaleSet && std::abs(t - cache->temperature) <= kCacheKelvin) {
    nvt = cache->limitNvt;
    vcrit = cache->limitVcrit;
    return;
  }
  nvt = k.n * constants::thermalVoltage(t);
  const double dInv = 1.0 / t - 1.0 / k.t0;
  const double is = k.is0 * (t / k.t0) * (t / k.t0) * arrhenius(k, t, dInv, cache).is;
  vcrit = nvt * std::log(nvt / (std::numbers::sqrt2 * is));
  if (cache) {
    cache->limitScaleSet = true;
    cache->limitNvt = nvt;
    cache->limitVcrit = vcrit;
  }
}

void evaluatePlate(const PlateConstants& k, double ambient, double vt, double uj, double ut,
                   double theta, double f, PlateState& s, ArrheniusCache* cache, double age) {
  const double tPlate = ambient + theta;
  const bool clamped = tPlate < kPlateLawTmin || tPlate > kPlateLawTmax;
  const double T = std::clamp(tPlate, kPlateLawTmin, kPlateLawTmax);
  const double invT = 1.0 / T, dInv = invT - 1.0 / k.t0;  // d(dInv)/dT = -1/T^2
  const Factors e = arrhenius(k, T, dInv, cache);
  // Outside the clamp the laws do not move with temperature: their T-derivatives vanish.
  const double invT2 = clamped ? 0.0 : invT * invT;
  const double tSlope = clamped ? 0.0 : 1.0;
  s.temperature = tPlate;

  // Ageing term A = a s: Rs (1 + A), leakage (1 + ageLeak A), threshold + ageThreshold A.
  const double ageTerm = k.ageCoefficient * age, dAgeTerm = k.ageCoefficient;
  const double nvt = k.n * constants::thermalVoltage(T);

  // Saturation current and its temperature slope; the aged threshold divides it by
  // exp(ageThreshold A / (n kT/q)).
  const double tr = T / k.t0;
  const double shift = k.ageThreshold * ageTerm / nvt;
  const double is = k.is0 * tr * tr * e.is * std::exp(-shift);
  const double dLnIsDT = tSlope * (2.0 * invT + shift * invT) + k.phiOverK * invT2;
  const double dLnIsDs = -k.ageThreshold * dAgeTerm / nvt;

  // Image-force enhancement of the reverse saturation current, scaled by deformation.
  double vr, dVrDuj;
  smoothRamp(-uj, kPlateRampWidth, vr, dVrDuj);
  dVrDuj = -dVrDuj;
  const double root4 = std::sqrt(std::sqrt(k.vbi + vr));
  const double x = root4 - k.vbi4;
  const double b = k.b0 * k.t0 * invT;
  const double eb = std::exp(b * x);
  const double e1 = eb - 1.0;
  const double dXdUj = 0.25 / (root4 * root4 * root4) * dVrDuj;
  const double dE1dUj = eb * b * dXdUj;
  const double dE1dT = eb * x * (-b * invT) * tSlope;
  const double d = 1.0 + (k.leakFactor - 1.0) * (1.0 - f);
  const double dDdF = -(k.leakFactor - 1.0);
  const double enh = 1.0 + d * e1;

  // Forward exponential (continued linearly past a large current).
  // Overflow guard only: the log of the limit ratio is taken at t0 (precomputed), not at T.
  const double ulimit = nvt * k.expLimitLog;
  double ex, dEx;
  if (uj < -kNegligibleExponent * nvt) {
    ex = 0.0;  // below 4e-18 of the "- 1" it joins: the reverse-biased half of a bridge's plates
    dEx = 0.0;
  } else {
    limitedExp(uj, nvt, ulimit, ex, dEx);
  }
  // d(ex)/dT at fixed uj: nvt grows with T, so exp(uj/nvt) falls.
  const double dExDT = -(uj <= ulimit ? ex * uj / nvt : dEx * uj) * invT * tSlope;
  const double em1 = ex - 1.0;

  double ib = is * enh * em1;
  double dIbDuj = is * enh * dEx + is * d * dE1dUj * em1;
  double dIbDT = is * enh * em1 * dLnIsDT + is * d * dE1dT * em1 + is * enh * dExDT;
  double dIbDf = is * e1 * dDdF * em1;
  double dIbDs = ib * dLnIsDs;

  // Shunt leakage.
  const double gAge = 1.0 + k.ageLeak * ageTerm;
  const double gArr = k.gsh0 * e.gsh * gAge;
  const double gsh = gArr * d;
  ib += gsh * uj;
  dIbDuj += gsh;
  dIbDT += gsh * k.gshEaOverK * invT2 * uj;
  dIbDf += gArr * dDdF * uj;
  dIbDs += k.gsh0 * e.gsh * k.ageLeak * dAgeTerm * d * uj;

  // Soft breakdown.
  // Below 40 slopes from breakdown the term is under 1e-17 of its scale: skip the exponential.
  if (k.bdI0 > 0.0 && -uj - k.bdV > -40.0 * k.bdSlope) {
    double eb2, deb2;
    limitedExp(-uj - k.bdV, k.bdSlope, 50.0 * k.bdSlope, eb2, deb2);
    ib -= k.bdI0 * eb2;
    dIbDuj += k.bdI0 * deb2;
  }
  s.ib = ib;
  s.dIbDuj = dIbDuj;
  s.dIbDth = dIbDT;
  s.dIbDf = dIbDf;
  s.dIbDs = dIbDs;

  // Series resistance.
  const double rs = k.rs0 * e.rs * (1.0 + ageTerm);
  const double gs = 1.0 / rs;
  s.is = (vt - uj) * gs;
  s.dIsDvt = gs;
  s.dIsDuj = -gs;
  s.dIsDth = s.is * k.rsEaOverK * invT2;  // d(1/Rs)/dT = (1/Rs) Ea/(k T^2)
  s.dIsDs = -s.is * dAgeTerm / (1.0 + ageTerm);

  // Trap branch: its conductance, so its emission rate gt/Ct, is thermally activated.
  s.gt = k.gt * e.trap;
  s.it = s.gt * (uj - ut);
  s.dItDth = s.it * k.trapEaOverK * invT2;

  // Dissipation: Rs loss + barrier static loss + trap-resistor loss.
  s.p = s.is * (vt - uj) + ib * uj + s.it * (uj - ut);
  s.dPdVt = 2.0 * s.is;
  s.dPdUj = -2.0 * s.is + ib + uj * dIbDuj + 2.0 * s.it;
  s.dPdUt = -2.0 * s.it;
  s.dPdTh = (vt - uj) * s.dIsDth + uj * dIbDT + (uj - ut) * s.dItDth;
  s.dPdF = uj * dIbDf;
  s.dPdS = (vt - uj) * s.dIsDs + uj * dIbDs;

  // Ageing state: hours weighted by the Arrhenius factor at the plate's own temperature.
  const double ageDecay = std::exp(-age);
  s.ageRate = k.ageRate0 * e.age * ageDecay;
  s.dAgeRateDth = s.ageRate * k.ageEaOverK * invT2;
  s.dAgeRateDs = -s.ageRate;

  // Forming state.
  const double rate = k.reformRate0 * e.rate, store = k.storageRate * e.store;
  s.g = (1.0 - f) * rate * vr - f * store;
  s.dGdF = -rate * vr - store;
  s.dGdUj = (1.0 - f) * rate * dVrDuj;
  s.dGdTh = ((1.0 - f) * rate * vr * k.reformEaOverK - f * store * k.storageEaOverK) * invT2;

  // Barrier charge (Mott-Schottky: grading 1/2).
  if (k.cj0 > 0.0) {
    depletionCharge(uj, k.depletion, s.q, s.c);
  } else {
    s.q = 0.0;
    s.c = 0.0;
  }
}

}  // namespace disc::detail
