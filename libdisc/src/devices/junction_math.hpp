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

/// A depletion capacitance's parameters (zero-bias capacitance cj0, built-in potential vj,
/// grading m, m = 0.5: abrupt, Mott-Schottky) with the constants of its forward continuation
/// above fc * vj computed once: a device evaluated millions of times should not call pow for
/// them.
struct DepletionShape {
  double cj0 = 0.0, vj = 1.0, m = 0.5, fc = 0.5;
  double f1 = 0.0, f2 = 1.0, f3 = 0.0;
  DepletionShape() = default;
  DepletionShape(double cj0_, double vj_, double m_, double fc_)
      : cj0(cj0_), vj(vj_), m(m_), fc(fc_) {
    // (1 - fc)^(1 - m) and (1 - fc)^(1 + m); square roots for abrupt barriers.
    const double r = m == 0.5 ? std::sqrt(1.0 - fc) : std::pow(1.0 - fc, 1.0 - m);
    f1 = vj / (1.0 - m) * (1.0 - r);
    f2 = m == 0.5 ? (1.0 - fc) * r : std::pow(1.0 - fc, 1.0 + m);
    f3 = 1.0 - fc * (1.0 + m);
  }
};

/// Depletion charge q and capacitance c = dq/dv of a junction; above fc * vj the capacitance
/// continues linearly, as device models usually do, so nothing diverges.
inline void depletionCharge(double v, const DepletionShape& d, double& q, double& c) {
  if (v < d.fc * d.vj) {
    const double s = 1.0 - v / d.vj;
    // s^(1-m) = s * s^-m: one power instead of two, and a square root for abrupt barriers.
    const double sm = d.m == 0.5 ? 1.0 / std::sqrt(s) : std::pow(s, -d.m);
    q = d.cj0 * d.vj / (1.0 - d.m) * (1.0 - s * sm);
    c = d.cj0 * sm;
  } else {
    const double vf = d.fc * d.vj;
    q = d.cj0 * (d.f1 + (d.f3 * (v - vf) + d.m / (2.0 * d.vj) * (v * v - vf * vf)) / d.f2);
    c = d.cj0 / d.f2 * (d.f3 + d.m * v / d.vj);
  }
}

/// A smooth ramp: about max(0, x), with a rounded corner of width w; value and derivative.
inline void smoothRamp(double x, double w, double& r, double& dr) {
  const double root = std::sqrt(x * x + w * w);
  r = 0.5 * (x + root - w);
  dr = 0.5 * (1.0 + x / root);
}

}  // namespace disc::detail
