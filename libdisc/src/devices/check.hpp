// Parameter checks shared by device constructors and setters (private).
#pragma once

#include <fmt/format.h>
#include <cmath>
#include <string>
#include <string_view>

#include "disc/error.hpp"

namespace disc::detail {

inline void requirePositive(std::string_view device, std::string_view what, double v,
                            std::string_view unit) {
  if (!(v > 0.0) || !std::isfinite(v))
    throw InputError(
        fmt::format("{}: {} must be positive and finite, got {} {}", device, what, v, unit));
}

inline void requireNonNegative(std::string_view device, std::string_view what, double v,
                               std::string_view unit) {
  if (!(v >= 0.0) || !std::isfinite(v))
    throw InputError(fmt::format("{}: {} must be zero or positive and finite, got {} {}", device,
                                 what, v, unit));
}

/// Runs a check and prefixes any InputError with the device's name.
template <class F>
void namedChecks(const std::string& device, F&& check) {
  try {
    check();
  } catch (const InputError& e) {
    throw InputError(device + ": " + e.what());
  }
}

}  // namespace disc::detail
