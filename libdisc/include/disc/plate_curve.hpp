// The static (DC) current-voltage curve of one plate: what a slow sweep on a bench measures.
#pragma once

#include <memory>

#include "disc/plate_type.hpp"

namespace disc {

namespace detail {
struct PlateConstants;
}

/// Static curve of one plate of a type at a given forming state. The barrier and trap charges
/// are at rest, and the plate is at the stated temperature (no self-heating): the curve a
/// sweep slow enough for the charges, yet quick enough not to warm the plate, would trace.
class PlateCurve {
 public:
  explicit PlateCurve(const PlateType& type, double forming = 1.0);
  ~PlateCurve();
  PlateCurve(const PlateCurve& other);
  PlateCurve& operator=(const PlateCurve& other);

  /// Current (A, positive forward) at terminal voltage `volts` (per plate, anode to cathode)
  /// and plate temperature `kelvin`.
  double current(double volts, double kelvin) const;
  /// Terminal voltage (V per plate) that drives `amps` through the plate at `kelvin`.
  double voltage(double amps, double kelvin) const;

 private:
  std::unique_ptr<detail::PlateConstants> k_;
  double forming_;
};

}  // namespace disc
