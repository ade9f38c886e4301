// Source waveforms.
#include "disc/waveform.hpp"

#include <fmt/format.h>
#include <cmath>
#include <numbers>

#include "disc/error.hpp"

namespace disc {

Waveform Waveform::dc(double value) {
  if (!std::isfinite(value)) throw InputError("DC value must be finite");
  Waveform w;
  w.shape_ = Shape::Dc;
  w.offset_ = value;
  return w;
}

Waveform Waveform::sine(double amplitude, double frequency, double phase, double offset) {
  if (!std::isfinite(amplitude) || !std::isfinite(phase) || !std::isfinite(offset))
    throw InputError("sine amplitude, phase and offset must be finite");
  if (!(frequency > 0.0) || !std::isfinite(frequency))
    throw InputError(fmt::format("sine frequency must be positive, got {} Hz", frequency));
  Waveform w;
  w.shape_ = Shape::Sine;
  w.amplitude_ = amplitude;
  w.frequency_ = frequency;
  w.phase_ = phase;
  w.offset_ = offset;
  return w;
}

Waveform Waveform::sineRms(double rms, double frequency, double phase, double offset) {
  return sine(std::numbers::sqrt2 * rms, frequency, phase, offset);
}

namespace {

/// Checks (time, value) pairs of a piecewise-linear function; `what` names it in messages.
void checkPairs(const std::vector<std::pair<double, double>>& pts, const char* what) {
  if (pts.empty())
    throw InputError(fmt::format("a {} needs at least one (time, value) pair", what));
  for (std::size_t k = 0; k < pts.size(); ++k) {
    if (!std::isfinite(pts[k].first) || !std::isfinite(pts[k].second))
      throw InputError(fmt::format("{}: pair {} is not finite", what, k + 1));
    if (k > 0 && !(pts[k].first > pts[k - 1].first))
      throw InputError(
          fmt::format("{}: times must increase, but pair {} has t = {} s after t = {} s", what,
                      k + 1, pts[k].first, pts[k - 1].first));
  }
}

/// Linear interpolation between pairs, constant outside.
double interpolate(const std::vector<std::pair<double, double>>& pts, double t) {
  if (t <= pts.front().first) return pts.front().second;
  if (t >= pts.back().first) return pts.back().second;
  std::size_t hi = 1;
  while (pts[hi].first < t) ++hi;
  const auto& [t0, v0] = pts[hi - 1];
  const auto& [t1, v1] = pts[hi];
  return v0 + (v1 - v0) * (t - t0) / (t1 - t0);
}

}  // namespace

Waveform Waveform::points(std::vector<std::pair<double, double>> pts) {
  checkPairs(pts, "points waveform");
  Waveform w;
  w.shape_ = Shape::Points;
  w.points_ = std::move(pts);
  return w;
}

void Waveform::setAmplitude(double amplitude) {
  if (shape_ != Shape::Sine) throw InputError("only a sine waveform has an amplitude");
  if (!std::isfinite(amplitude)) throw InputError("sine amplitude must be finite");
  amplitude_ = amplitude;
}

void Waveform::setFrequency(double frequency) {
  if (shape_ != Shape::Sine) throw InputError("only a sine waveform has a frequency");
  if (!(frequency > 0.0) || !std::isfinite(frequency))
    throw InputError(fmt::format("sine frequency must be positive, got {} Hz", frequency));
  frequency_ = frequency;
}

void Waveform::setOffset(double offset) {
  if (shape_ == Shape::Points) throw InputError("a points waveform has no DC value to set");
  if (!std::isfinite(offset)) throw InputError("DC value must be finite");
  offset_ = offset;
}

Waveform& Waveform::gate(double on, double off) {
  if (!(off > on)) throw InputError("switch-off time must come after switch-on time");
  on_ = on;
  off_ = off;
  return *this;
}

Waveform& Waveform::schedule(std::vector<std::pair<double, double>> factors) {
  checkPairs(factors, "level schedule");
  for (std::size_t k = 0; k < factors.size(); ++k)
    if (factors[k].second < 0.0)
      throw InputError(fmt::format("level schedule: pair {} has a negative factor {}", k + 1,
                                   factors[k].second));
  schedule_ = std::move(factors);
  return *this;
}

double Waveform::level(double slow) const {
  return schedule_.empty() ? 1.0 : interpolate(schedule_, slow);
}

double Waveform::value(double t, double slow) const {
  if (t < on_ || t >= off_) return 0.0;
  double v = 0.0;
  switch (shape_) {
    case Shape::Dc:
      v = offset_;
      break;
    case Shape::Sine: {
      // A gated sine starts at its own zero phase when switched on.
      const double t0 = std::isfinite(on_) ? on_ : 0.0;
      v = offset_ + amplitude_ * std::sin(2.0 * std::numbers::pi * frequency_ * (t - t0) + phase_);
      break;
    }
    case Shape::Points:
      v = interpolate(points_, t);
      break;
  }
  return schedule_.empty() ? v : v * level(slow);
}

void Waveform::breakpoints(double from, double to, std::vector<double>& out) const {
  auto add = [&](double t) {
    if (t > from && t <= to) out.push_back(t);
  };
  add(on_);
  add(off_);
  if (shape_ == Shape::Points)
    for (const auto& p : points_) add(p.first);
  // The schedule's corners on the transient's clock (the slow clock follows it there).
  for (const auto& p : schedule_) add(p.first);
}

double Waveform::naturalStep() const {
  if (shape_ == Shape::Sine) return 1.0 / (20.0 * frequency_);
  return std::numeric_limits<double>::infinity();
}

}  // namespace disc
