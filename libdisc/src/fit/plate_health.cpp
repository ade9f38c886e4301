// Health verdict. The bands are libdisc's reading of the trade's rules (docs/fitting.md): a
// healthy plate's reverse current varies by about 2x between specimens; a worn or deformed one
// passes several times that (common practice); deformation beyond the type's deformed-leakage
// factor is more than storage explains. A forward drop rising with age (common practice) heats
// the plate; beyond about 1.5x a new plate's drop the stack is worn.
#include "disc/plate_health.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "disc/plate_curve.hpp"

namespace disc {
namespace {

constexpr double kReverseNormal = 2.0;  // times a healthy plate: within specimen spread
constexpr double kForwardAged = 1.2;    // times a new plate's drop: aged
constexpr double kForwardWorn = 1.5;    // worn: replace

int rank(const std::string& level) {
  if (level == "failed") return 3;
  if (level == "deformed") return 2;
  if (level == "aged") return 1;
  return 0;
}

}  // namespace

PlateHealth judgePlateHealth(const PlateType& plate, const PlateType& healthy, double kelvin) {
  PlateType reference = healthy;
  reference.physics.areaCm2 = plate.physics.areaCm2;  // same size: per-area values carry over
  PlateHealth h;
  h.reference = healthy.name;
  h.temperature = kelvin;
  h.ratedCurrent = reference.ratedCurrent();
  h.reverseVoltage = reference.ratings.peakReverse;
  const PlateCurve measured(plate), good(reference);
  h.forwardDrop = measured.voltage(h.ratedCurrent, kelvin);
  h.forwardDropHealthy = good.voltage(h.ratedCurrent, kelvin);
  h.reverseCurrent = std::abs(measured.current(-h.reverseVoltage, kelvin));
  h.reverseCurrentHealthy = std::abs(good.current(-h.reverseVoltage, kelvin));
  h.forwardRatio = h.forwardDrop / h.forwardDropHealthy;
  h.reverseRatio = h.reverseCurrent / h.reverseCurrentHealthy;
  const double leak = reference.history.deformedLeakFactor;
  h.formingEstimate =
      leak > 1.0 ? std::clamp(1.0 - (h.reverseRatio - 1.0) / (leak - 1.0), 0.0, 1.0) : 1.0;

  std::string reverseLevel = "healthy", forwardLevel = "healthy";
  std::string reverseText, forwardText;
  const std::string size = fmt::format("a healthy plate of this size ({:.3g} cm2, reference {})",
                                       plate.physics.areaCm2, healthy.name);
  if (h.reverseRatio <= kReverseNormal) {
    reverseText = fmt::format(
        "reverse current {:.3g} mA at {:.3g} V is about {:.2g} times {}: normal leakage",
        1e3 * h.reverseCurrent, h.reverseVoltage, h.reverseRatio, size);
  } else if (h.reverseRatio <= leak) {
    reverseLevel = "deformed";
    reverseText = fmt::format(
        "reverse current is about {:.2g} times {} ({:.3g} mA at {:.3g} V): likely deformed from "
        "storage (forming state about {:.2f}); reform slowly under reduced voltage before use, "
        "or replace",
        h.reverseRatio, size, 1e3 * h.reverseCurrent, h.reverseVoltage, h.formingEstimate);
  } else {
    reverseLevel = "failed";
    reverseText = fmt::format(
        "reverse current is about {:.2g} times {} ({:.3g} mA at {:.3g} V): more than storage "
        "explains (damaged or partly shorted plates); replace the stack",
        h.reverseRatio, size, 1e3 * h.reverseCurrent, h.reverseVoltage);
  }
  if (h.forwardRatio <= kForwardAged) {
    forwardText = fmt::format(
        "forward drop {:.3g} V at the rated {:.3g} mA, as a new plate "
        "({:.3g} V)",
        h.forwardDrop, 1e3 * h.ratedCurrent, h.forwardDropHealthy);
  } else if (h.forwardRatio <= kForwardWorn) {
    forwardLevel = "aged";
    forwardText = fmt::format(
        "forward drop {:.3g} V at the rated {:.3g} mA is {:.0f} % above a new plate: aged; it "
        "runs hotter, so derate the current or replace",
        h.forwardDrop, 1e3 * h.ratedCurrent, 100.0 * (h.forwardRatio - 1.0));
  } else {
    forwardLevel = "failed";
    forwardText = fmt::format(
        "forward drop {:.3g} V at the rated {:.3g} mA is {:.1f} times a new plate's: worn out; "
        "it will overheat at rated current: replace",
        h.forwardDrop, 1e3 * h.ratedCurrent, h.forwardRatio);
  }
  h.level = rank(reverseLevel) >= rank(forwardLevel) ? reverseLevel : forwardLevel;
  if (rank(forwardLevel) > rank(reverseLevel))
    h.findings = {forwardText, reverseText};
  else
    h.findings = {reverseText, forwardText};
  return h;
}

}  // namespace disc
