// Junction arithmetic shared by the silicon diode and the metal-disc plate (private).
#pragma once

#include <cmath>

namespace disc::detail {

/// exp(u / nv) and its derivative in u, continued linearly above `ulimit` (so a wild Newton
/// iterate cannot overflow) and flushed to zero far below (where libm would take its slow path).
inline void limitedExp(double u, double nv, double ulimit, double& e, double& de) {
  if (u > ulimit) {
    const double e0 = std::exp(ulimit / nv);
    e = e0 * (1.0 + (u - ulimit) / nv);
    de = e0 / nv;
  } else if (u < -700.0 * nv) {
    e = 0.0;
    de = 0.0;
  } else {
    e = std::exp(u / nv);
    de = e / nv;
  }
}

/// The classical logarithmic damping of a large forward step of a junction voltage.
inline double limitJunction(double v, double vnew, double nvt, double vcrit) {
  if (vnew > vcrit && std::abs(vnew - v) > 2.0 * nvt) {
    if (v > 0.0) {
      const double arg = 1.0 + (vnew - v) / nvt;
      return arg > 0.0 ? v + nvt * std::log(arg) : vcrit;
    }
    return nvt * std::log(vnew / nvt);
  }
  return vnew;
}

/// Depletion charge q and capacitance c = dq/dv of a junction with zero-bias capacitance cj0,
/// built-in potential vj and grading m (m = 0.5: abrupt, Mott-Schottky); above fc * vj the
/// capacitance continues linearly, as device models usually do, so nothing diverges.
inline void depletionCharge(double v, double cj0, double vj, double m, double fc, double& q,
                            double& c) {
  if (v < fc * vj) {
    const double s = 1.0 - v / vj;
    // s^(1-m) = s * s^-m: one power instead of two, and a square root for abrupt barriers.
    const double sm = m == 0.5 ? 1.0 / std::sqrt(s) : std::pow(s, -m);
    q = cj0 * vj / (1.0 - m) * (1.0 - s * sm);
    c = cj0 * sm;
  } else {
    const double vf = fc * vj;
    const double f1 = vj / (1.0 - m) * (1.0 - std::pow(1.0 - fc, 1.0 - m));
    const double f2 = std::pow(1.0 - fc, 1.0 + m);
    const double f3 = 1.0 - fc * (1.0 + m);
    q = cj0 * (f1 + (f3 * (v - vf) + m / (2.0 * vj) * (v * v - vf * vf)) / f2);
    c = cj0 / f2 * (f3 + m * v / vj);
  }
}

/// A smooth ramp: about max(0, x), with a rounded corner of width w; value and derivative.
inline void smoothRamp(double x, double w, double& r, double& dr) {
  const double root = std::sqrt(x * x + w * w);
  r = 0.5 * (x + root - w);
  dr = 0.5 * (1.0 + x / root);
}

}  // namespace disc::detail
