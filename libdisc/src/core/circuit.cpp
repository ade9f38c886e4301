// Circuit bookkeeping: node names, device registry, deep copies.
#include "disc/circuit.hpp"

#include <fmt/format.h>
#include <cmath>

#include "disc/error.hpp"

namespace disc {

Circuit::Circuit(const Circuit& other)
    : nodeNames_(other.nodeNames_),
      nodeIds_(other.nodeIds_),
      deviceIndex_(other.deviceIndex_),
      ambient_(other.ambient_) {
  devices_.reserve(other.devices_.size());
  for (const auto& d : other.devices_) devices_.push_back(d->clone());
}

Circuit& Circuit::operator=(const Circuit& other) {
  if (this != &other) {
    Circuit copy(other);
    *this = std::move(copy);
  }
  return *this;
}

NodeId Circuit::node(std::string_view name) {
  if (name == "gnd") return kGround;
  if (name.empty()) throw InputError("a node name must not be empty");
  auto it = nodeIds_.find(std::string(name));
  if (it != nodeIds_.end()) return it->second;
  const NodeId id = static_cast<NodeId>(nodeNames_.size());
  nodeNames_.emplace_back(name);
  nodeIds_.emplace(std::string(name), id);
  return id;
}

NodeId Circuit::findNode(std::string_view name) const {
  if (name == "gnd") return kGround;
  auto it = nodeIds_.find(std::string(name));
  if (it == nodeIds_.end()) throw InputError(fmt::format("no node named '{}'", name));
  return it->second;
}

const std::string& Circuit::nodeName(NodeId id) const {
  static const std::string ground = "gnd";
  if (id == kGround) return ground;
  return nodeNames_.at(static_cast<std::size_t>(id));
}

Device& Circuit::add(std::unique_ptr<Device> device) {
  if (!device) throw InputError("cannot add an empty device");
  const std::string& name = device->name();
  if (name.empty()) throw InputError(fmt::format("a {} needs a name", device->kind()));
  if (deviceIndex_.count(name))
    throw InputError(fmt::format("a device named '{}' already exists", name));
  for (NodeId t : device->terminals())
    if (t != kGround && (t < 0 || t >= nodeCount()))
      throw InputError(
          fmt::format("device '{}' refers to node id {} which this circuit lacks", name, t));
  deviceIndex_.emplace(name, devices_.size());
  devices_.push_back(std::move(device));
  return *devices_.back();
}

Device* Circuit::find(std::string_view name) {
  auto it = deviceIndex_.find(std::string(name));
  return it == deviceIndex_.end() ? nullptr : devices_[it->second].get();
}

const Device* Circuit::find(std::string_view name) const {
  auto it = deviceIndex_.find(std::string(name));
  return it == deviceIndex_.end() ? nullptr : devices_[it->second].get();
}

Device& Circuit::at(std::string_view name) {
  Device* d = find(name);
  if (!d) throw InputError(fmt::format("no device named '{}'", name));
  return *d;
}

void Circuit::setAmbient(double kelvin) {
  if (!(kelvin > 0.0) || !std::isfinite(kelvin))
    throw InputError(fmt::format("ambient temperature must be above 0 K, got {} K", kelvin));
  ambient_ = kelvin;
}

}  // namespace disc
