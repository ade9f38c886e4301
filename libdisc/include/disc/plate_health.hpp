// A plate's health: a measured (fitted) plate judged against a healthy plate of its material
// and size, in plain words a restorer can act on.
#pragma once

#include <string>
#include <vector>

#include "disc/plate_type.hpp"

namespace disc {

struct PlateHealth {
  std::string reference;        ///< the healthy type compared against (scaled to the area)
  double temperature = 298.15;  ///< K of the comparison
  double ratedCurrent = 0;      ///< A: the reference's rated density times the plate's area
  double forwardDrop = 0, forwardDropHealthy = 0;        ///< V per plate at the rated current
  double reverseVoltage = 0;                             ///< V per plate: peak reverse rating
  double reverseCurrent = 0, reverseCurrentHealthy = 0;  ///< A at that voltage (magnitudes)
  double forwardRatio = 1, reverseRatio = 1;             ///< measured / healthy
  /// Forming state F (1 formed, 0 fully deformed) that explains the leakage through the
  /// reference's deformation law; 0 also when the leakage is beyond what deformation explains.
  double formingEstimate = 1;
  std::string level;                  ///< "healthy", "aged", "deformed" or "failed"
  std::vector<std::string> findings;  ///< plain-words sentences, worst first
};

/// Compares `plate` with `healthy` scaled to the plate's area, at `kelvin`.
PlateHealth judgePlateHealth(const PlateType& plate, const PlateType& healthy,
                             double kelvin = 298.15);

}  // namespace disc
