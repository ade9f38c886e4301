// Physical constants (CODATA 2018 exact SI values).
#pragma once

namespace disc::constants {

inline constexpr double kBoltzmann = 1.380649e-23;                      ///< J/K
inline constexpr double kElementaryCharge = 1.602176634e-19;            ///< C
inline constexpr double kBoltzmannEv = kBoltzmann / kElementaryCharge;  ///< eV/K
inline constexpr double kZeroCelsius = 273.15;                          ///< K

/// Thermal voltage kT/q at temperature t (K), in V.
inline constexpr double thermalVoltage(double t) {
  return kBoltzmannEv * t;
}

}  // namespace disc::constants
