// Measurement noise for synthetic fit traces, shared by the fit tests.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>

#include "disc/trace.hpp"

namespace disc::test {

/// Noise as the fit's default weights assume: 1 % of the reading plus a floor of 1e-3 of the
/// largest current, from a seeded generator.
inline void addNoise(Trace& t, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> gauss(0.0, 1.0);
  double iMax = 0;
  for (double i : t.current) iMax = std::max(iMax, std::abs(i));
  for (double& i : t.current) i += (0.01 * std::abs(i) + 1e-3 * iMax) * gauss(rng);
}

}  // namespace disc::test
