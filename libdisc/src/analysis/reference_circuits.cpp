// Reference circuits.
#include "disc/reference_circuits.hpp"

#include <fmt/format.h>

#include "disc/devices/capacitor.hpp"
#include "disc/devices/resistor.hpp"
#include "disc/devices/sources.hpp"
#include "disc/error.hpp"
#include "disc/plate_type.hpp"

namespace disc::reference {

namespace {

// "ladder-N" names a diode ladder of N diodes; returns 0 for other names.
int ladderCount(const std::string& name) {
  if (name.rfind("ladder-", 0) != 0) return 0;
  try {
    std::size_t used = 0;
    const int n = std::stoi(name.substr(7), &used);
    return used == name.size() - 7 && n > 0 ? n : 0;
  } catch (const std::exception&) {
    return 0;
  }
}

}  // namespace

Circuit bridgeSupply(const BridgeSupply& s) {
  Circuit c;
  const NodeId line = c.node("line"), sa = c.node("sa"), sb = c.node("sb"), out = c.node("out");
  c.add(std::make_unique<VoltageSource>(
      makeMains("MAINS", line, kGround, s.mainsRms, s.frequency, s.mainsResistance, 0.0)));
  c.emplace<Transformer>("T1", line, kGround, sa, sb, s.transformer);
  c.emplace<Diode>("D1", sa, out, s.diode);
  c.emplace<Diode>("D2", sb, out, s.diode);
  c.emplace<Diode>("D3", kGround, sa, s.diode);
  c.emplace<Diode>("D4", kGround, sb, s.diode);
  c.emplace<Capacitor>("C1", out, kGround, s.reservoir);
  c.emplace<Resistor>("RL", out, kGround, s.load);
  return c;
}

DiodeParams HalfWaveRc::stiffDiode() {
  DiodeParams d;
  d.saturationCurrent = 1e-12;
  d.ideality = 0.05;
  d.seriesResistance = 0.0;
  d.junctionCapacitance = 0.0;
  d.transitTime = 0.0;
  d.breakdownVoltage = 0.0;
  return d;
}

Circuit halfWaveRc(const HalfWaveRc& s) {
  Circuit c;
  const NodeId in = c.node("in"), out = c.node("out");
  c.emplace<VoltageSource>("V1", in, kGround, Waveform::sineRms(s.rms, s.frequency));
  c.emplace<Diode>("D1", in, out, s.diode);
  c.emplace<Capacitor>("C1", out, kGround, s.capacitance);
  c.emplace<Resistor>("RL", out, kGround, s.load);
  return c;
}

Circuit shockleyBridge(const ShockleyBridge& s) {
  Circuit c;
  const NodeId src = c.node("s"), a = c.node("a"), b = c.node("b"), out = c.node("out");
  DiodeParams d;
  d.saturationCurrent = s.saturationCurrent;
  d.ideality = s.ideality;
  d.seriesResistance = 0.0;
  d.junctionCapacitance = 0.0;
  d.transitTime = 0.0;
  d.breakdownVoltage = 0.0;
  d.temperature = 300.0;
  d.referenceTemperature =
      300.0;  // Is given at the operating temperature, as the independent model has it
  c.emplace<VoltageSource>("VS", src, b, Waveform::sine(s.amplitude, s.frequency));
  c.emplace<Resistor>("RW", src, a, s.winding);
  c.emplace<Diode>("D1", a, out, d);
  c.emplace<Diode>("D2", b, out, d);
  c.emplace<Diode>("D3", kGround, a, d);
  c.emplace<Diode>("D4", kGround, b, d);
  c.emplace<Capacitor>("CA", a, kGround, s.inputCapacitance);
  c.emplace<Capacitor>("CB", b, kGround, s.inputCapacitance);
  c.emplace<Capacitor>("C1", out, kGround, s.reservoir);
  c.emplace<Resistor>("RL", out, kGround, s.load);
  return c;
}

StackOptions SeleniumBridge::defaultStack() {
  StackOptions o;
  o.plates = 5;
  return o;
}

void addBridgeStacks(Circuit& c, const std::string& name, NodeId ac1, NodeId ac2, NodeId plus,
                     NodeId minus, const PlateType& type, const StackOptions& options) {
  // Forward current runs anode -> cathode; the cathode end is the + DC side.
  c.emplace<Stack>(name + ".1", ac1, plus, type, options);
  c.emplace<Stack>(name + ".2", ac2, plus, type, options);
  c.emplace<Stack>(name + ".3", minus, ac1, type, options);
  c.emplace<Stack>(name + ".4", minus, ac2, type, options);
}

Circuit seleniumBridge(const SeleniumBridge& s) {
  Circuit c;
  const NodeId line = c.node("line"), sa = c.node("sa"), sb = c.node("sb"), out = c.node("out");
  c.add(std::make_unique<VoltageSource>(
      makeMains("MAINS", line, kGround, s.mainsRms, s.frequency, 0.5, 0.0)));
  TransformerParams t{s.mainsRms / s.secondaryRms, 10.0, 1.0, 30e-3, 2e-3, 20.0};
  c.emplace<Transformer>("T1", line, kGround, sa, sb, t);
  const PlateType& type = PlateLibrary::builtIn().at(s.plateType);
  c.emplace<Stack>("SR1", sa, out, type, s.stack);
  c.emplace<Stack>("SR2", sb, out, type, s.stack);
  c.emplace<Stack>("SR3", kGround, sa, type, s.stack);
  c.emplace<Stack>("SR4", kGround, sb, type, s.stack);
  c.emplace<Capacitor>("C1", out, kGround, s.reservoir);
  c.emplace<Resistor>("RL", out, kGround, s.load);
  return c;
}

Circuit diodeLadder(int count) {
  if (count < 1) throw InputError("a diode ladder needs at least one diode");
  Circuit c;
  NodeId prev = c.node("n0");
  c.emplace<VoltageSource>("V1", prev, kGround, Waveform::sine(1.5 * count, 50.0));
  DiodeParams d;
  d.seriesResistance = 0.05;
  for (int k = 1; k <= count; ++k) {
    const NodeId next = c.node(fmt::format("n{}", k));
    c.emplace<Diode>(fmt::format("D{}", k), prev, next, d);
    prev = next;
  }
  c.emplace<Resistor>("RL", prev, kGround, 1.0 * count);
  return c;
}

std::vector<std::string> names() {
  return {"bridge",    "selenium-bridge", "selenium-bridge-lumped",
          "half-wave", "shockley-bridge", "ladder-100"};
}

std::string describe(const std::string& name) {
  if (name == "bridge")
    return "230 V 50 Hz mains, transformer, silicon bridge, 2200 uF, 18 ohm load";
  if (name == "half-wave") return "120 V 60 Hz, near-ideal diode, 100 uF parallel 500 ohm";
  if (name == "selenium-bridge")
    return "230 V 50 Hz mains, 60 V transformer, selenium bridge 4 x 5 plates, 100 uF, 500 ohm";
  if (name == "selenium-bridge-lumped") return "the selenium bridge with lumped stacks";
  if (name == "shockley-bridge") return "20 V 50 Hz sine, Shockley-diode bridge, 1000 uF, 50 ohm";
  if (const int n = ladderCount(name))
    return fmt::format("{} silicon diodes in series into a resistor, 50 Hz (any ladder-N)", n);
  throw InputError(fmt::format("no reference circuit named '{}'", name));
}

Circuit build(const std::string& name) {
  if (const int n = ladderCount(name)) return diodeLadder(n);
  if (name == "bridge") return bridgeSupply();
  if (name == "selenium-bridge") return seleniumBridge();
  if (name == "selenium-bridge-lumped") {
    SeleniumBridge s;
    s.stack.mode = StackMode::Lumped;
    return seleniumBridge(s);
  }
  if (name == "half-wave") return halfWaveRc();
  if (name == "shockley-bridge") return shockleyBridge();
  throw InputError(
      fmt::format("no reference circuit named '{}'; try one of: bridge, half-wave, "
                  "selenium-bridge, selenium-bridge-lumped, shockley-bridge, ladder-N (N diodes)",
                  name));
}

std::string outputNode(const std::string& name) {
  if (const int n = ladderCount(name)) return fmt::format("n{}", n);
  describe(name);
  return "out";
}

double mainsFrequency(const std::string& name) {
  describe(name);
  return name == "half-wave" ? 60.0 : 50.0;
}

}  // namespace disc::reference
