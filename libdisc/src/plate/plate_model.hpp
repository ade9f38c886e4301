// The equations of one metal-disc plate, with analytic derivatives (private).
//
// A plate, seen from its terminals: series bulk resistance Rs(T) into an internal barrier node;
// across the barrier the thermionic barrier current (with image-force lowering in reverse), a
// shunt leakage Gsh(T, F), soft breakdown, the Mott-Schottky barrier charge, and a slow trap
// branch Rt-Ct. Temperature rise theta and forming state F are unknowns of the plate too.
// Voltages are per plate and relative to the plate's cathode (counter-electrode).
#pragma once

#include "devices/junction_math.hpp"
#include "disc/plate_type.hpp"

namespace disc::detail {

/// The laws are evaluated within this temperature range (K). Beyond it the plate has long failed
/// (selenium melts near 490 K); the clamp keeps Newton iterates and runaways finite.
inline constexpr double kPlateLawTmin = 200.0, kPlateLawTmax = 700.0;
/// Rounding of the reverse-voltage ramp at zero bias (V).
inline constexpr double kPlateRampWidth = 0.05;

/// Per-plate constants after area scaling, spread and ageing.
struct PlateConstants {
  double is0 = 0;  // A, saturation current at t0
  double expLimitLog =
      0;                  // ln(limit current / is0 + 1): where the forward exponential turns linear
  double n = 3;           // ideality
  double phiOverK = 0;    // barrier / (n k), K: the activation of Is
  double t0 = 300;        // K
  double b0 = 0;          // image-force coefficient at t0, V^-1/4
  double vbi = 0.8;       // V
  double vbi4 = 0;        // vbi^(1/4)
  double rs0 = 1;         // ohm at t0, ageing included
  double rsEaOverK = 0;   // K
  double gsh0 = 0;        // S at t0, formed
  double gshEaOverK = 0;  // K
  double leakFactor = 1;  // deformed leakage multiplier at F = 0
  double bdV = 50, bdSlope = 3, bdI0 = 0;  // V, V, A
  double cj0 = 0;                          // F
  double fc = 0.5;
  DepletionShape depletion;   // cj0, vbi, grading 1/2 (Mott-Schottky), fc
  double ct = 0, gt = 0;      // trap capacitance F, conductance S at t0
  double trapEaOverK = 0;     // K: the trap conductance's activation
  double rth = 1, cth = 1;    // K/W, J/K
  double reformRate0 = 0;     // 1/(s V) at t0: (1/tau) / V_ref
  double reformEaOverK = 0;   // K
  double storageRate = 0;     // 1/s at t0
  double storageEaOverK = 0;  // K
  // Ageing state s = ln(1 + H/H0), H the operating hours weighted to t0:
  // ds/dt = ageRate0 exp((Eage/k)(1/t0 - 1/T)) exp(-s). Its term A = ageCoefficient s raises Rs
  // by (1 + A), the leakage by (1 + ageLeak A) and the forward threshold by ageThreshold A.
  double ageCoefficient = 0;  // a
  double ageRate0 = 0;        // 1/s: 1/(3600 H0)
  double ageEaOverK = 0;      // K
  double ageLeak = 0;         // leakage proportion
  double ageThreshold = 0;    // V per unit of A
};

/// Builds the constants of one plate from its type, spread multipliers and ageing factor.
PlateConstants makePlateConstants(const PlateType& type, double jsFactor, double rsFactor,
                                  double gshFactor, double ageFactor);

/// Rs multiplier after `hours` of operation at plate temperature `kelvin`.
double ageingFactor(const PlateType& type, double hours, double kelvin);
/// Ageing state s = ln(1 + H/H0) after `hours` of operation at plate temperature `kelvin`.
double ageingState(const PlateType& type, double hours, double kelvin);
/// Forming state after `years` unpowered at `kelvin` (0: the type's t0), starting fully formed.
double formingAfterStorage(const PlateType& type, double years, double kelvin = 0.0);

/// Values and derivatives of one plate at (vt, uj, ut, theta, F). Rows: Is = series current
/// into the plate; Ib = barrier static current; It = trap-branch current; P = dissipation;
/// g = dF/dt; Q = barrier charge and C = dQ/duj; gt = the trap conductance at the plate's
/// temperature, dIt/duj = gt = -dIt/dut.
struct PlateState {
  double is, dIsDvt, dIsDuj, dIsDth, dIsDs;
  double ib, dIbDuj, dIbDth, dIbDf, dIbDs;
  double it, gt, dItDth;  // trap current, its conductance (dIt/duj = -dIt/dut), dIt/dT
  double p, dPdVt, dPdUj, dPdUt, dPdTh, dPdF, dPdS;
  double g, dGdUj, dGdTh, dGdF;
  double ageRate, dAgeRateDth, dAgeRateDs;  // ds/dt of the ageing state, 1/s
  double q, c;
  double temperature;  // K
};

/// The Arrhenius factors of a plate at one law temperature, kept between evaluations: the
/// plate temperature moves by about a millikelvin or less per time step, so within 10 mK of the
/// cached temperature a Taylor series replaces four exponentials (docs/performance.md).
struct ArrheniusCache {
  double temperature = -1.0;                         // K (law temperature), < 0: empty
  double dInv = 0.0;                                 // 1/T - 1/t0 at that temperature
  double is = 0.0, rs = 0.0, gsh = 0.0, rate = 0.0;  // exp(-phi/k dInv), exp(Ea/k dInv), ...
  double age = 0.0;                                  // exp(-Eage/k dInv)
  double store = 0.0;                                // exp(-Est/k dInv)
  double trap = 0.0;                                 // exp(-Et/k dInv)
  // Junction limiting's scale (n kT/q and the critical voltage) at a temperature within the
  // cache's band; limiting is a damping heuristic, a 10 mK offset (3e-5 of kT) does not matter.
  bool limitScaleSet = false;
  double limitNvt = 0.0, limitVcrit = 0.0;
};

/// Evaluates the plate at ageing state `age` (s = ln(1 + H/H0); 0 for a new plate, or when
/// the ageing is folded into the constants).
void evaluatePlate(const PlateConstants& k, double ambient, double vt, double uj, double ut,
                   double theta, double f, PlateState& s, ArrheniusCache* cache = nullptr,
                   double age = 0.0);

/// Critical voltage and thermal voltage n kT/q for junction limiting at temperature t (the
/// saturation current through the same Arrhenius cache as evaluatePlate).
void plateLimitScale(const PlateConstants& k, double t, double& nvt, double& vcrit,
                     ArrheniusCache* cache = nullptr);

}  // namespace disc::detail
