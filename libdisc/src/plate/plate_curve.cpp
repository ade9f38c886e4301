// Static plate curve: the series resistance and the barrier solved for the barrier voltage with a
// bracketed Newton iteration (the barrier current rises monotonically with its voltage, so the
// root is unique and a bracket always holds it).
#include "disc/plate_curve.hpp"

#include <cmath>
#include <limits>
#include <string>

#include "disc/constants.hpp"
#include "disc/error.hpp"
#include "plate/plate_model.hpp"

namespace disc {
namespace {

struct BarrierPoint {
  double ib, dIb, rs;
};

BarrierPoint barrierAt(const detail::PlateConstants& k, double kelvin, double uj, double forming) {
  detail::PlateState s;
  // Ambient = plate temperature and zero rise; trap branch at rest (ut = uj).
  detail::evaluatePlate(k, kelvin, uj, uj, uj, 0.0, forming, s);
  return {s.ib, s.dIbDuj, -1.0 / s.dIsDuj};
}

// Root of h(u) = 0 for increasing h on [lo, hi] with h(lo) <= 0 <= h(hi).
template <class H>
double bracketedNewton(H h, double lo, double hi, double guess) {
  double u = guess > lo && guess < hi ? guess : 0.5 * (lo + hi);
  for (int it = 0; it < 200; ++it) {
    double value, slope;
    h(u, value, slope);
    if (value == 0.0) return u;
    if (value < 0.0)
      lo = u;
    else
      hi = u;
    double next = slope > 0.0 ? u - value / slope : 0.5 * (lo + hi);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::abs(next - u) <= 1e-13 * (1.0 + std::abs(u)) || hi - lo <= 1e-14 * (1.0 + std::abs(u)))
      return next;
    u = next;
  }
  return u;
}

void checkFinite(double value, const char* what) {
  if (!std::isfinite(value))
    throw InputError(std::string("plate curve: the ") + what + " must be a finite number");
}

}  // namespace

PlateCurve::PlateCurve(const PlateType& type, double forming)
    : k_(std::make_unique<detail::PlateConstants>(
          detail::makePlateConstants(type, 1.0, 1.0, 1.0, 1.0))),
      forming_(forming) {
  type.validate();
  if (!(forming >= 0.0 && forming <= 1.0))
    throw InputError("plate curve: the forming state must lie between 0 and 1");
}

PlateCurve::~PlateCurve() = default;
PlateCurve::PlateCurve(const PlateCurve& other)
    : k_(std::make_unique<detail::PlateConstants>(*other.k_)), forming_(other.forming_) {}
PlateCurve& PlateCurve::operator=(const PlateCurve& other) {
  if (this != &other) {
    *k_ = *other.k_;
    forming_ = other.forming_;
  }
  return *this;
}

double PlateCurve::current(double volts, double kelvin) const {
  checkFinite(volts, "voltage");
  checkFinite(kelvin, "temperature");
  if (volts == 0.0) return 0.0;
  // h(u) = Ib(u) - (V - u)/Rs rises with u; the root lies between 0 and V.
  const auto h = [&](double u, double& value, double& slope) {
    const BarrierPoint b = barrierAt(*k_, kelvin, u, forming_);
    value = b.ib - (volts - u) / b.rs;
    slope = b.dIb + 1.0 / b.rs;
  };
  const double lo = std::min(0.0, volts), hi = std::max(0.0, volts);
  // Reverse: nearly all the voltage is across the barrier. Forward: the barrier voltage that
  // would carry V/Rs, from above, where Newton on the convex h cannot overshoot the root.
  double guess = volts;
  if (volts > 0.0) {
    const BarrierPoint at0 = barrierAt(*k_, kelvin, 0.0, forming_);
    const double nvt = k_->n * constants::thermalVoltage(kelvin);
    guess = std::min(volts, nvt * std::log1p(volts / at0.rs / k_->is0));
  }
  const double uj = bracketedNewton(h, lo, hi, guess);
  return barrierAt(*k_, kelvin, uj, forming_).ib;
}

double PlateCurve::voltage(double amps, double kelvin) const {
  checkFinite(amps, "current");
  checkFinite(kelvin, "temperature");
  if (amps == 0.0) return 0.0;
  // The barrier voltage that carries the current, then the drop across Rs.
  const auto h = [&](double u, double& value, double& slope) {
    const BarrierPoint b = barrierAt(*k_, kelvin, u, forming_);
    value = b.ib - amps;
    slope = b.dIb;
  };
  double lo = amps > 0.0 ? 0.0 : -1.0, hi = amps > 0.0 ? 1.0 : 0.0;
  bool bracketed = false;
  for (int grow = 0; grow < 60 && !bracketed; ++grow) {
    double v, s;
    h(amps > 0.0 ? hi : lo, v, s);
    bracketed = amps > 0.0 ? v >= 0.0 : v <= 0.0;
    if (!bracketed) (amps > 0.0 ? hi : lo) *= 2.0;
  }
  if (!bracketed)
    throw InputError("plate curve: no voltage drives " + std::to_string(amps) +
                     " A through this plate (a reverse current beyond its leakage and breakdown)");
  const double uj = bracketedNewton(h, lo, hi, 0.5 * (lo + hi));
  return uj + amps * barrierAt(*k_, kelvin, uj, forming_).rs;
}

}  // namespace disc
