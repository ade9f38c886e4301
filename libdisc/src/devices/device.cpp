// Defaults shared by every device.
#include "disc/device.hpp"

#include <limits>

namespace disc {

Device::Device(std::string name, std::vector<NodeId> terminals)
    : name_(std::move(name)), terminals_(std::move(terminals)) {}

std::vector<std::pair<int, int>> Device::dcPaths() const {
  std::vector<std::pair<int, int>> paths;
  for (std::size_t k = 1; k < terminals_.size(); ++k) paths.emplace_back(0, static_cast<int>(k));
  return paths;
}

double Device::stepHint() const { return std::numeric_limits<double>::infinity(); }

std::string Device::probeUnit(int k) const {
  const auto names = probes();
  if (k < 0 || k >= static_cast<int>(names.size())) return "";
  const std::string& p = names[static_cast<std::size_t>(k)];
  if (p == "i" || p == "i1" || p == "i2") return "A";
  if (p == "p") return "W";
  if (p == "energy") return "J";
  if (p == "v" || p == "vj") return "V";
  if (p == "temp") return "K";
  return "";
}

}  // namespace disc
