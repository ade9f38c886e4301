// Reference circuits built in code: the engine's validation cases, the benchmark supply and the
// demonstration. Values are invented for demonstration unless a test names a source.
#pragma once

#include <string>
#include <vector>

#include "disc/circuit.hpp"
#include "disc/devices/diode.hpp"
#include "disc/devices/stack.hpp"
#include "disc/devices/transformer.hpp"

namespace disc::reference {

/// Mains transformer, silicon bridge, reservoir capacitor and resistive load: a 15 V, 1 A class
/// bench supply. Nodes: line, sa, sb (secondary), out; devices: MAINS, T1, D1..D4, C1, RL.
struct BridgeSupply {
  double mainsRms = 230.0;       ///< V
  double frequency = 50.0;       ///< Hz
  double mainsResistance = 0.5;  ///< ohm
  TransformerParams transformer{230.0 / 15.0, 4.0, 0.1, 20e-3, 1e-4, 20.0};
  DiodeParams diode{};
  double reservoir = 2200e-6;  ///< F
  double load = 18.0;          ///< ohm
};
Circuit bridgeSupply(const BridgeSupply& spec = {});

/// Sine source, one diode, R parallel C. Nodes: in, out; devices: V1, D1, C1, RL.
struct HalfWaveRc {
  double rms = 120.0;           ///< V
  double frequency = 60.0;      ///< Hz
  double load = 500.0;          ///< ohm
  double capacitance = 100e-6;  ///< F
  DiodeParams diode = stiffDiode();
  /// A nearly ideal rectifier: an ideality of 0.05 gives about 36 mV at 1 A.
  static DiodeParams stiffDiode();
};
Circuit halfWaveRc(const HalfWaveRc& spec = {});

/// A bridge of plain Shockley diodes (no series resistance, no charge) fed from a sine source
/// behind a winding resistance, with small capacitances from the bridge inputs to gnd so the
/// problem is an ODE that an independent solver can integrate. Nodes: s, a, b, out.
struct ShockleyBridge {
  double amplitude = 20.0;          ///< V
  double frequency = 50.0;          ///< Hz
  double winding = 1.0;             ///< ohm
  double saturationCurrent = 1e-9;  ///< A
  double ideality = 1.5;
  double inputCapacitance = 10e-9;  ///< F, a and b to gnd
  double reservoir = 1000e-6;       ///< F
  double load = 50.0;               ///< ohm
};
Circuit shockleyBridge(const ShockleyBridge& spec = {});

/// A selenium bridge supply: mains transformer, four stacks of 5 plates (se-25mm-square),
/// reservoir capacitor and load, a valve-radio class 75 V, 0.15 A supply. Nodes: line, sa, sb,
/// out; devices: MAINS, T1, SR1..SR4, C1, RL.
struct SeleniumBridge {
  double mainsRms = 230.0;     ///< V
  double frequency = 50.0;     ///< Hz
  double secondaryRms = 60.0;  ///< V
  std::string plateType = "se-25mm-square";
  StackOptions stack = defaultStack();
  double reservoir = 100e-6;  ///< F
  double load = 500.0;        ///< ohm
  static StackOptions defaultStack();
};
Circuit seleniumBridge(const SeleniumBridge& spec = {});

/// Adds the four arms of a bridge as stacks named <name>.1 .. <name>.4 between the AC inputs
/// ac1, ac2 and the DC outputs plus (+) and minus (-).
void addBridgeStacks(Circuit& c, const std::string& name, NodeId ac1, NodeId ac2, NodeId plus,
                     NodeId minus, const PlateType& type, const StackOptions& options);

/// `count` silicon diodes in series (each with its internal series-resistance node) from a
/// sine source into a load; source amplitude and load scale with count.
Circuit diodeLadder(int count);

/// Names accepted by build().
std::vector<std::string> names();
/// One-line description of a reference circuit.
std::string describe(const std::string& name);
/// Builds a reference circuit by name with its default values ("ladder-N": N diodes).
Circuit build(const std::string& name);
/// The DC output node and mains frequency of a reference circuit.
std::string outputNode(const std::string& name);
double mainsFrequency(const std::string& name);

}  // namespace disc::reference
