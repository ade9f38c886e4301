// Signal recording.
#include "recorder.hpp"

#include <fmt/format.h>
#include <algorithm>

#include "disc/error.hpp"

namespace disc::detail {

std::vector<std::string> defaultSignals(const System& sys) {
  std::vector<std::string> out;
  for (NodeId id = 0; id < sys.circuit().nodeCount(); ++id)
    out.push_back("v:" + sys.circuit().nodeName(id));
  for (const Device* d : sys.devices()) {
    const auto p = d->probes();
    if (std::find(p.begin(), p.end(), "i") != p.end()) out.push_back("i:" + d->name());
  }
  return out;
}

DeviceSignal deviceSignal(const Circuit& circuit, const std::string& spec) {
  const auto colon = spec.find(':');
  const std::string kind = spec.substr(0, colon), target = spec.substr(colon + 1);
  // "kind:device#n" names instance n of a numbered quantity (plate n of a stack).
  std::string deviceName = target;
  DeviceSignal s;
  if (const auto hash = target.find('#'); hash != std::string::npos) {
    deviceName = target.substr(0, hash);
    try {
      std::size_t used = 0;
      s.instance = std::stoi(target.substr(hash + 1), &used);
      if (used != target.size() - hash - 1 || s.instance < 1) throw std::invalid_argument("");
    } catch (const std::exception&) {
      throw InputError(fmt::format("signal '{}': '#' must be followed by a number from 1", spec));
    }
  }
  s.device = circuit.find(deviceName);
  if (!s.device)
    throw InputError(fmt::format("signal '{}': no element named '{}'", spec, deviceName));
  const auto probes = s.device->probes();
  const auto it = std::find(probes.begin(), probes.end(), kind);
  if (it == probes.end())
    throw InputError(fmt::format("signal '{}': a {} has no quantity '{}' (it has: {})", spec,
                                 s.device->kind(), kind, fmt::join(probes, ", ")));
  s.probe = static_cast<int>(it - probes.begin());
  if (s.instance > 0) {
    const int count = s.device->probeInstances(s.probe);
    if (count == 0)
      throw InputError(fmt::format("signal '{}': '{}' of a {} is not numbered; write {}:{}", spec,
                                   kind, s.device->kind(), kind, deviceName));
    if (s.instance > count)
      throw InputError(fmt::format("signal '{}': {} has {} of them, numbered from 1 to {}", spec,
                                   deviceName, count, count));
  }
  return s;
}

void checkVoltagePair(const std::string& spec, const std::string& a, const std::string& b) {
  if (a == b)
    throw InputError(fmt::format(
        "signal '{}' is taken across one node, '{}', and always reads 0 V: name two different "
        "nodes (v:{},gnd or v:{})",
        spec, a, a, a));
}

Recorder::Recorder(const System& sys, std::vector<std::string> specs, Result& result)
    : result_(result) {
  if (specs.empty()) specs = defaultSignals(sys);
  const Circuit& circuit = sys.circuit();
  auto nodeIndex = [&](const std::string& name, const std::string& spec) {
    try {
      return sys.unknownOfNode(circuit.findNode(name));
    } catch (const InputError&) {
      throw InputError(fmt::format("signal '{}': no node named '{}'", spec, name));
    }
  };
  for (const auto& spec : specs) {
    // A signal asked for twice is one column: Result keeps one, so must the recorder.
    if (result_.has(spec)) continue;
    const auto colon = spec.find(':');
    if (colon == std::string::npos || colon == 0 || colon + 1 == spec.size())
      throw InputError(fmt::format(
          "signal '{}' is not of the form kind:target (v:node, v:node1,node2, i:device, ...)",
          spec));
    const std::string kind = spec.substr(0, colon), target = spec.substr(colon + 1);
    Signal s;
    std::string unit;
    if (kind == "v") {
      const auto comma = target.find(',');
      if (comma != std::string::npos)
        checkVoltagePair(spec, target.substr(0, comma), target.substr(comma + 1));
      s.a = nodeIndex(target.substr(0, comma), spec);
      s.b = comma == std::string::npos ? sys.ground() : nodeIndex(target.substr(comma + 1), spec);
      unit = "V";
    } else if (kind == "x") {
      for (int k = 0; k < sys.size() && s.a < 0; ++k)
        if (sys.unknownName(k) == target) s.a = k;
      if (s.a < 0)
        throw InputError(fmt::format("signal '{}': no unknown named '{}'", spec, target));
      s.b = sys.ground();
      static const char* units[] = {"V", "A", "K", ""};
      unit = units[static_cast<int>(sys.kind(s.a))];
    } else {
      const DeviceSignal ds = deviceSignal(circuit, spec);
      s.device = ds.device;
      s.probe = ds.probe;
      s.instance = ds.instance;
      unit = s.device->probeUnit(s.probe);
    }
    result_.addSignal(spec, unit);
    signals_.push_back(s);
  }
}

void Recorder::clear() {
  result_.timeColumn().clear();
  for (std::size_t k = 0; k < result_.signals().size(); ++k) result_.column(k).clear();
}

void Recorder::record(const EvalContext& ctx) {
  result_.timeColumn().push_back(ctx.time);
  for (std::size_t k = 0; k < signals_.size(); ++k) {
    const Signal& s = signals_[k];
    const double v = !s.device        ? ctx.x[s.a] - ctx.x[s.b]
                     : s.instance > 0 ? s.device->probeAt(s.probe, s.instance, ctx)
                                      : s.device->probe(s.probe, ctx);
    result_.column(k).push_back(v);
  }
}

}  // namespace disc::detail
