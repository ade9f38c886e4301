// What a campaign varies: a parameter grid, Monte Carlo builds and component tolerances (the
// netlist's `campaign`, `vary` and `tolerance` statements, or built in code).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace disc {

/// One axis of a parameter grid: an element's parameter set to each value in turn.
struct CampaignAxis {
  std::string element, parameter;
  std::vector<double> values;  ///< in the parameter's SI unit
};

/// A component tolerance: each build draws the parameter as nominal x (1 + u), u from `law`
/// over [lower, upper] (relative: -0.2 and +0.5 for an electrolytic's -20/+50 %).
struct CampaignTolerance {
  std::string element, parameter;
  double lower = 0.0, upper = 0.0;
  /// Uniform: u uniform over the band (rectangular, as when only the limits are known; JCGM
  /// 100:2008, 4.3.7). Normal: u normal with mean at the band's centre and the band's half
  /// width as 3 standard deviations.
  enum class Law { Uniform, Normal } law = Law::Uniform;
};

/// What a campaign varies. Variants are the grid points times `builds`: variant v is grid point
/// v / builds (the last axis fastest), build v % builds.
struct CampaignSpec {
  std::vector<CampaignAxis> axes;
  std::vector<CampaignTolerance> tolerances;
  int builds = 1;          ///< Monte Carlo builds per grid point
  std::uint64_t seed = 1;  ///< campaign seed
  /// Each build draws new plates for every stack with a spread (a new stack seed); false keeps
  /// the netlist's own seeds (then only the tolerances vary between builds).
  bool redrawPlates = true;
  bool given = false;  ///< the netlist or the caller declared a campaign
  std::size_t variants() const;
  void validate() const;
};

}  // namespace disc
