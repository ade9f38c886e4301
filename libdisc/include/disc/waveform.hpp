// Time functions of independent sources: DC, sine and piecewise-linear, each optionally gated
// on (and off) at given times, as when a switch closes on a supply.
#pragma once

#include <limits>
#include <utility>
#include <vector>

namespace disc {

/// A source waveform. Values are in the source's unit (V or A); times in s.
class Waveform {
 public:
  /// A constant value.
  static Waveform dc(double value);
  /// offset + amplitude * sin(2 pi f (t - delay) + phase); phase in radians; zero-phase at delay.
  static Waveform sine(double amplitude, double frequency, double phase = 0.0, double offset = 0.0);
  /// Same, amplitude given as an rms value (amplitude = sqrt(2) rms).
  static Waveform sineRms(double rms, double frequency, double phase = 0.0, double offset = 0.0);
  /// Linear between (time, value) points, constant outside; times strictly increasing.
  static Waveform points(std::vector<std::pair<double, double>> points);

  /// Zero before `on` and from `off` on: a supply switched on at `on`.
  Waveform& gate(double on, double off = std::numeric_limits<double>::infinity());

  double value(double t) const;
  /// Corners and jumps in (from, to].
  void breakpoints(double from, double to, std::vector<double>& out) const;
  /// Largest step that resolves the waveform (a fraction of a sine period), or +inf.
  double naturalStep() const;

  double amplitude() const { return amplitude_; }
  double frequency() const { return frequency_; }
  double offset() const { return offset_; }

 private:
  enum class Shape { Dc, Sine, Points };
  Shape shape_ = Shape::Dc;
  double offset_ = 0.0;
  double amplitude_ = 0.0;
  double frequency_ = 0.0;
  double phase_ = 0.0;
  std::vector<std::pair<double, double>> points_;
  double on_ = -std::numeric_limits<double>::infinity();
  double off_ = std::numeric_limits<double>::infinity();
};

}  // namespace disc
