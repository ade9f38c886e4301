// Figures of sampled waveforms (non-uniform time points: trapezoidal integrals, interpolated
// crests).
#pragma once

#include <vector>

namespace disc::measure {

/// Integral of y over [t0, t1] by the trapezoidal rule, interpolating at the ends.
double integral(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1);
/// Time average over [t0, t1].
double mean(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1);
/// Root mean square over [t0, t1] (of the linear interpolant, sampled at the points).
double rms(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1);
/// Largest and smallest value in [t0, t1]: samples, ends and crests of the piecewise quadratic
/// through the samples (waveform_measures.cpp).
double maximum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1);
double minimum(const std::vector<double>& t, const std::vector<double>& y, double t0, double t1);
/// Times in [t0, t1] where the same interpolant crosses `level`, rising (direction > 0), falling (<
/// 0) or either (0).
std::vector<double> crossings(const std::vector<double>& t, const std::vector<double>& y,
                              double level, int direction, double t0, double t1);

}  // namespace disc::measure

namespace disc::measure {

/// DC output figures over the last `cycles` mains periods of a run.
struct OutputFigures {
  double mean = 0.0;                    ///< V
  double ripplePeakToPeak = 0.0;        ///< V
  double rippleRms = 0.0;               ///< V, rms of v - mean
  double window0 = 0.0, window1 = 0.0;  ///< s, the window used
  int cycles = 0;
};
OutputFigures outputFigures(const std::vector<double>& t, const std::vector<double>& v,
                            double frequency, int cycles = 1);

}  // namespace disc::measure
