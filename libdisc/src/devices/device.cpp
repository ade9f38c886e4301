// Defaults shared by every device.
#include "disc/device.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <limits>

#include "core/text_match.hpp"
#include "disc/error.hpp"

namespace disc {

Device::Device(std::string name, std::vector<NodeId> terminals)
    : name_(std::move(name)), terminals_(std::move(terminals)) {}

std::vector<std::pair<int, int>> Device::dcPaths() const {
  std::vector<std::pair<int, int>> paths;
  for (std::size_t k = 1; k < terminals_.size(); ++k) paths.emplace_back(0, static_cast<int>(k));
  return paths;
}

const std::vector<DeviceParameter>& Device::parameterTable() const {
  static const std::vector<DeviceParameter> none;
  return none;
}

std::vector<std::string> Device::parameterNames() const {
  std::vector<std::string> names;
  for (const auto& p : parameterTable()) names.push_back(p.name);
  return names;
}

const DeviceParameter* Device::findParameter(const std::string& name) const {
  for (const auto& p : parameterTable())
    if (p.name == name) return &p;
  return nullptr;
}

std::string retiredParameterHint(const std::vector<DeviceParameter>& table,
                                 const std::string& name) {
  for (const auto& p : table)
    if (std::find(p.retired.begin(), p.retired.end(), name) != p.retired.end())
      return fmt::format(": '{}' is now called '{}'{}", name, p.name,
                         p.unit.empty() ? "" : fmt::format(" (in {})", p.unit));
  return "";
}

namespace {
const DeviceParameter& lookup(const Device& d, const std::string& name) {
  if (const DeviceParameter* p = d.findParameter(name)) return *p;
  std::string hint = retiredParameterHint(d.parameterTable(), name);
  if (hint.empty()) hint = detail::didYouMean(name, d.parameterNames());
  throw InputError(fmt::format("{} '{}' has no parameter '{}'{}", d.kind(), d.name(), name, hint));
}
}  // namespace

bool DeviceParameter::inRange(double v) const {
  return (v >= lowest && v <= highest) || (zeroToo && v == 0.0);
}

void DeviceParameter::checkRange(const Device& d, double v) const {
  if (inRange(v)) return;
  const std::string u = unit.empty() ? "" : " " + unit;
  throw InputError(
      fmt::format("{}: {} {:g}{} is outside {:g} to {:g}{}{}, the range of physical "
                  "sense for a {} (docs/netlist.md, \"Ranges of physical sense\")",
                  d.name(), name, v, u, lowest, highest, u,
                  zeroToo ? " (or 0 for the default)" : "", d.kind()));
}

double Device::parameter(const std::string& name) const {
  return lookup(*this, name).get(*this);
}

void Device::setParameter(const std::string& name, double value) {
  if (!std::isfinite(value))
    throw InputError(fmt::format("{}: parameter '{}' must be finite", name_, name));
  const DeviceParameter& p = lookup(*this, name);
  if (!p.inRange(value)) {
    // Where the device's own rule refuses the value too, its message says why in the device's
    // terms (a filament past tungsten's melting point); a clone keeps this device unchanged.
    p.set(*clone(), value);
    p.checkRange(*this, value);
  }
  p.set(*this, value);
}

double Device::stepHint() const {
  return std::numeric_limits<double>::infinity();
}

std::string Device::probeUnit(int k) const {
  const auto names = probes();
  if (k < 0 || k >= static_cast<int>(names.size())) return "";
  const std::string& p = names[static_cast<std::size_t>(k)];
  if (p == "i" || p == "i1" || p == "i2") return "A";
  if (p == "p") return "W";
  if (p == "energy") return "J";
  if (p == "v" || p == "vj") return "V";
  if (p == "temp") return "K";
  if (p == "r") return "ohm";
  return "";
}

}  // namespace disc
