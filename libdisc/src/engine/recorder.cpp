// Signal recording.
#include "recorder.hpp"

#include <algorithm>
#include <fmt/format.h>

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
      s.a = nodeIndex(target.substr(0, comma), spec);
      s.b = comma == std::string::npos ? sys.ground() : nodeIndex(target.substr(comma + 1), spec);
      unit = "V";
    } else if (kind == "x") {
      for (int k = 0; k < sys.size() && s.a < 0; ++k)
        if (sys.unknownName(k) == target) s.a = k;
      if (s.a < 0) throw InputError(fmt::format("signal '{}': no unknown named '{}'", spec, target));
      s.b = sys.ground();
      static const char* units[] = {"V", "A", "K", ""};
      unit = units[static_cast<int>(sys.kind(s.a))];
    } else {
      const Device* d = circuit.find(target);
      if (!d) throw InputError(fmt::format("signal '{}': no device named '{}'", spec, target));
      const auto probes = d->probes();
      const auto it = std::find(probes.begin(), probes.end(), kind);
      if (it == probes.end()) {
        std::string list;
        for (const auto& p : probes) list += (list.empty() ? "" : ", ") + p;
        throw InputError(fmt::format("signal '{}': a {} has no quantity '{}'; it has: {}", spec,
                                     d->kind(), kind, list));
      }
      s.device = d;
      s.probe = static_cast<int>(it - probes.begin());
      unit = d->probeUnit(s.probe);
    }
    result_.addSignal(spec, unit);
    signals_.push_back(s);
  }
}

void Recorder::record(const EvalContext& ctx) {
  result_.timeColumn().push_back(ctx.time);
  for (std::size_t k = 0; k < signals_.size(); ++k) {
    const Signal& s = signals_[k];
    const double v = s.device ? s.device->probe(s.probe, ctx) : ctx.x[s.a] - ctx.x[s.b];
    result_.column(k).push_back(v);
  }
}

}  // namespace disc::detail
