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

void Recorder::plan(const TransientOptions& o) {
  planned_ = true;
  spacing_ = o.recordSpacing;
  sink_ = o.sink;
  keepLast_ = o.keepLast;
  // The rows before the tail: at most keepSpread over the recorded span.
  spreadSpacing_ =
      keepLast_ > 0.0 ? (o.stop - o.recordFrom) / static_cast<double>(o.keepSpread - 1) : 0.0;
  values_.assign(signals_.size(), 0.0);
  extents_.assign(signals_.size(), Extent{});
  if (sink_) sink_->begin(result_);
}

void Recorder::clear() {
  result_.timeColumn().clear();
  for (std::size_t k = 0; k < result_.signals().size(); ++k) result_.column(k).clear();
}

void Recorder::append(double t, const std::vector<double>& values) {
  result_.timeColumn().push_back(t);
  for (std::size_t k = 0; k < values.size(); ++k) result_.column(k).push_back(values[k]);
}

void Recorder::emit(double t, const std::vector<double>& values) {
  lastEmitted_ = t;
  if (sink_) sink_->row(t, values);
  if (keepLast_ <= 0.0) append(t, values);
}

void Recorder::record(const EvalContext& ctx) {
  if (!planned_) values_.resize(signals_.size());
  for (std::size_t k = 0; k < signals_.size(); ++k) {
    const Signal& s = signals_[k];
    values_[k] = !s.device        ? ctx.x[s.a] - ctx.x[s.b]
                 : s.instance > 0 ? s.device->probeAt(s.probe, s.instance, ctx)
                                  : s.device->probe(s.probe, ctx);
  }
  if (!planned_) {
    append(ctx.time, values_);
    return;
  }
  const double t = ctx.time;
  for (std::size_t k = 0; k < values_.size(); ++k) {
    Extent& e = extents_[k];
    const double v = values_[k];
    if (rows_ == 0) e = {v, v, v, v};
    e.last = v;
    e.min = std::min(e.min, v);
    e.max = std::max(e.max, v);
  }
  // Decimation: the first row, then each row at least the spacing after the last one kept;
  // a row held back is emitted at the end if it is the run's last.
  if (rows_ == 0 || t >= lastEmitted_ + spacing_ * (1.0 - 1e-9)) {
    emit(t, values_);
    pending_ = false;
  } else {
    pending_ = true;
    pendingTime_ = t;
    pendingValues_ = values_;
  }
  ++rows_;
  if (keepLast_ <= 0.0) return;
  // The bounded Result: every row of the last keepLast seconds, and one before them (the
  // report's window may start between two rows); older rows leave the tail and are kept only
  // when at least spreadSpacing_ after the last kept.
  const std::size_t width = values_.size() + 1;
  tail_.push_back(t);
  tail_.insert(tail_.end(), values_.begin(), values_.end());
  while (tail_.size() >= 2 * width && tail_[width] <= t - keepLast_) {
    const double old = tail_.front();
    if (!spreadAny_ || old >= lastSpread_ + spreadSpacing_ * (1.0 - 1e-9)) {
      result_.timeColumn().push_back(old);
      for (std::size_t k = 0; k + 1 < width; ++k) result_.column(k).push_back(tail_[k + 1]);
      lastSpread_ = old;
      spreadAny_ = true;
    }
    tail_.erase(tail_.begin(), tail_.begin() + static_cast<std::ptrdiff_t>(width));
  }
}

void Recorder::finish() {
  if (!planned_) return;
  if (pending_) emit(pendingTime_, pendingValues_);
  pending_ = false;
  const std::size_t width = values_.size() + 1;
  for (std::size_t p = 0; p + width <= tail_.size(); p += width) {
    result_.timeColumn().push_back(tail_[p]);
    for (std::size_t k = 0; k + 1 < width; ++k) result_.column(k).push_back(tail_[p + k + 1]);
  }
  tail_.clear();
  result_.setRecorded(extents_, rows_);
  if (sink_) sink_->end();
}

std::size_t Recorder::keptValues() const {
  return result_.time().size() * (result_.signals().size() + 1) + tail_.size();
}

}  // namespace disc::detail
