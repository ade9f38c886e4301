// A circuit: named nodes and the devices connected between them.
#pragma once

#include <memory>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "disc/device.hpp"

namespace disc {

/// Nodes and devices. The node named "gnd" is the reference (kGround).
class Circuit {
 public:
  Circuit() = default;
  Circuit(const Circuit& other);  ///< deep copy: devices are cloned
  Circuit& operator=(const Circuit& other);
  Circuit(Circuit&&) noexcept = default;
  Circuit& operator=(Circuit&&) noexcept = default;

  /// Id of the node with this name, created on first use.
  NodeId node(std::string_view name);
  /// Id of an existing node, or throws InputError.
  NodeId findNode(std::string_view name) const;
  const std::string& nodeName(NodeId id) const;
  int nodeCount() const { return static_cast<int>(nodeNames_.size()); }

  /// Adds a device; its name must be unique.
  Device& add(std::unique_ptr<Device> device);
  template <class D, class... Args>
  D& emplace(Args&&... args) {
    return static_cast<D&>(add(std::make_unique<D>(std::forward<Args>(args)...)));
  }

  Device* find(std::string_view name);
  const Device* find(std::string_view name) const;
  Device& at(std::string_view name);
  const std::vector<std::unique_ptr<Device>>& devices() const { return devices_; }

  /// Ambient temperature for devices that use one, K.
  double ambient() const { return ambient_; }
  void setAmbient(double kelvin);

 private:
  std::vector<std::string> nodeNames_;
  std::unordered_map<std::string, NodeId> nodeIds_;
  std::vector<std::unique_ptr<Device>> devices_;
  std::unordered_map<std::string, std::size_t> deviceIndex_;
  double ambient_ = 298.15;
};

/// A part of a circuit whose state its ideal sources force (docs/netlist.md "Checks before
/// simulation"): a cut set of current sources and inductors holding a current source, or a
/// loop of ideal voltage sources and capacitors.
struct ForcedState {
  std::string element;                ///< where to report it: a current or voltage source
  std::vector<std::string> elements;  ///< every element of the cut set or loop
  std::vector<std::string> nodes;     ///< the cut set's side away from gnd (empty for a loop)
  std::string message;                ///< what is wrong and what to add
};

/// The forced states of a circuit, found on its graph alone (no simulation). Each current
/// source whose only way back is through other current sources and inductors, and each
/// capacitor loop an ideal voltage source closes, is one entry.
std::vector<ForcedState> forcedStates(const Circuit& circuit);

}  // namespace disc
