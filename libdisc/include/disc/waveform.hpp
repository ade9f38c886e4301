// Time functions of independent sources: DC, sine and piecewise-linear, each optionally gated
// on (and off) at given times, as when a switch closes on a supply, and optionally scaled by a
// level schedule on the slow clock, as when a variac is turned up over minutes.
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
  /// Scales the whole waveform (offset included, as a variac does) by a factor linear between
  /// (time, factor) points and constant outside; times strictly increasing, factors >= 0. The
  /// factor is read on the slow clock, so the periodic steady state holds it over a period.
  Waveform& schedule(std::vector<std::pair<double, double>> factors);
  bool scheduled() const { return !schedule_.empty(); }
  const std::vector<std::pair<double, double>>& levelSchedule() const { return schedule_; }
  /// The schedule's factor at slow time `slow` (1 without a schedule).
  double level(double slow) const;

  double value(double t) const { return value(t, t); }
  /// The value at time t with the schedule read at slow time `slow`.
  double value(double t, double slow) const;
  /// Corners and jumps in (from, to].
  void breakpoints(double from, double to, std::vector<double>& out) const;
  /// Largest step that resolves the waveform (a fraction of a sine period), or +inf.
  double naturalStep() const;

  /// For parameter changes (a campaign's mains tolerance): the sine's amplitude and frequency
  /// (InputError for other shapes), the DC value or the sine's offset.
  void setAmplitude(double amplitude);
  void setFrequency(double frequency);
  void setOffset(double offset);
  bool isSine() const { return shape_ == Shape::Sine; }

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
  std::vector<std::pair<double, double>> schedule_;  // (s, factor)
  double on_ = -std::numeric_limits<double>::infinity();
  double off_ = std::numeric_limits<double>::infinity();
};

}  // namespace disc
