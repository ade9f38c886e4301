// IEC 60063 E12 and E24 series.
#include "disc/preferred_values.hpp"

#include <fmt/format.h>
#include <cmath>

#include "disc/error.hpp"

namespace disc {

const std::vector<double>& seriesDecade(ESeries series) {
  static const std::vector<double> e12 = {1.0, 1.2, 1.5, 1.8, 2.2, 2.7,
                                          3.3, 3.9, 4.7, 5.6, 6.8, 8.2};
  static const std::vector<double> e24 = {1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0,
                                          2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3,
                                          4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1};
  return series == ESeries::E12 ? e12 : e24;
}

double nearestPreferred(double value, ESeries series) {
  if (!(value > 0.0) || !std::isfinite(value))
    throw InputError(
        fmt::format("a preferred value needs a positive, finite value, got {}", value));
  const double decade = std::pow(10.0, std::floor(std::log10(value)));
  double best = 0.0, bestDistance = INFINITY;
  // Candidates from this decade and the first of the next (9.6 rounds up to 10).
  std::vector<double> candidates;
  for (double m : seriesDecade(series)) candidates.push_back(m * decade);
  candidates.push_back(10.0 * decade);
  for (double c : candidates) {
    const double d = std::abs(std::log(value / c));
    if (d < bestDistance) {
      bestDistance = d;
      best = c;
    }
  }
  // Round away binary noise from the decade scaling (1.2 * 1e3 is not exactly 1200).
  const double digits = std::pow(10.0, 2 - std::floor(std::log10(best)));
  return std::round(best * digits) / digits;
}

}  // namespace disc
