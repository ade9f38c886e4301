// Forced states on the circuit's graph: cut sets of current sources and inductors, loops of
// ideal voltage sources and capacitors (the topological conditions for a unique, consistent
// MNA solution: Chua and Lin, Computer-Aided Analysis of Electronic Circuits, 1975;
// docs/sources.md, circuit topology).
#include <fmt/format.h>
#include <algorithm>
#include <map>
#include <numeric>
#include <queue>

#include "disc/circuit.hpp"
#include "disc/devices/capacitor.hpp"
#include "disc/devices/inductor.hpp"
#include "disc/devices/sources.hpp"

namespace disc {
namespace {

struct Sets {
  std::vector<int> parent;
  explicit Sets(int n) : parent(static_cast<std::size_t>(n)) {
    std::iota(parent.begin(), parent.end(), 0);
  }
  int find(int a) {
    while (parent[static_cast<std::size_t>(a)] != a)
      a = parent[static_cast<std::size_t>(a)] =
          parent[static_cast<std::size_t>(parent[static_cast<std::size_t>(a)])];
    return a;
  }
  bool unite(int a, int b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    parent[static_cast<std::size_t>(a)] = b;
    return true;
  }
};

/// A branch whose current the node voltages do not set: a current source, or a state (an
/// inductor, a voltage source behind a series inductance).
bool currentDefined(const Device& d) {
  if (dynamic_cast<const CurrentSource*>(&d) || dynamic_cast<const Inductor*>(&d)) return true;
  auto* v = dynamic_cast<const VoltageSource*>(&d);
  return v && v->inductance() > 0.0;
}

/// "a, b, c" with at most `most` names, then "and N more".
std::string nameList(const std::vector<std::string>& names, std::size_t most = 6) {
  std::string s;
  for (std::size_t k = 0; k < names.size() && k < most; ++k)
    s += fmt::format("{}{}", k ? ", " : "", names[k]);
  if (names.size() > most) s += fmt::format(" and {} more", names.size() - most);
  return s;
}

}  // namespace

std::vector<ForcedState> forcedStates(const Circuit& c) {
  std::vector<ForcedState> out;
  const int n = c.nodeCount();
  auto id = [n](NodeId node) { return node == kGround ? n : node; };
  // Every connection, and the connections of every branch but the current-defined ones; a
  // transformer's windings are joined as in the floating check (its secondary may float).
  Sets all(n + 1), others(n + 1);
  for (const auto& d : c.devices()) {
    const auto& t = d->terminals();
    const bool skip = currentDefined(*d);
    for (std::size_t k = 1; k < t.size(); ++k) {
      all.unite(id(t[0]), id(t[k]));
      if (!skip) others.unite(id(t[0]), id(t[k]));
    }
  }
  // A group of nodes the other branches join, away from gnd but connected to it: the branches
  // that leave it form a cut set of current-defined branches. Kirchhoff's current law fixes
  // their sum whatever the node voltages; with only current sources in it nothing fixes the
  // group's voltage, and with inductors the sources force the inductors' currents, which a
  // cold start (no current) or a jump of a source meets with an impulse of voltage.
  const int groundSet = others.find(n), groundPart = all.find(n);
  std::map<int, std::vector<std::string>> groups;
  for (NodeId k = 0; k < n; ++k)
    if (others.find(k) != groundSet && all.find(k) == groundPart)
      groups[others.find(k)].push_back(c.nodeName(k));
  for (const auto& [root, nodes] : groups) {
    std::vector<std::string> cut;
    std::string source;
    bool inductive = false;
    for (const auto& d : c.devices()) {
      const auto& t = d->terminals();
      if (t.size() != 2 || !currentDefined(*d)) continue;
      const bool a = others.find(id(t[0])) == root, b = others.find(id(t[1])) == root;
      if (a == b) continue;
      cut.push_back(d->name());
      if (dynamic_cast<const CurrentSource*>(d.get())) {
        if (source.empty()) source = d->name();
      } else {
        inductive = true;
      }
    }
    if (source.empty()) continue;  // inductors in series: their currents agree from zero
    const std::string where = nodes.size() == 1 ? fmt::format("node '{}'", nodes.front())
                                                : fmt::format("nodes {}", nameList(nodes));
    ForcedState f{source, cut, nodes, ""};
    if (!inductive)
      f.message = fmt::format(
          "{} connect{} to the rest of the circuit only through current sources ({}): nothing "
          "fixes {} voltage; add a resistor from '{}' to gnd (the internal resistance of a "
          "real source)",
          where, nodes.size() == 1 ? "s" : "", nameList(cut), nodes.size() == 1 ? "its" : "their",
          nodes.front());
    else
      f.message = fmt::format(
          "{} connect{} to the rest of the circuit only through current sources and inductors "
          "({}): '{}' forces the current of the inductors, so a cold start (no current) or a jump "
          "of "
          "the source gives an impulse of voltage (millions of volts); add a resistor from "
          "'{}' to gnd or across '{}' (the internal resistance of a real source)",
          where, nodes.size() == 1 ? "s" : "", nameList(cut), source, nodes.front(), source);
    out.push_back(std::move(f));
  }

  // The dual: an ideal voltage source (no series resistance or inductance) that closes a loop
  // of capacitors and ideal sources forces the capacitors' voltages. Loops of sources alone or
  // with inductors are the voltage-loop check's (definesVoltage); loops of capacitors alone
  // are harmless.
  Sets sources(n + 1), loop(n + 1);
  std::vector<std::vector<std::pair<int, const Device*>>> adjacent(static_cast<std::size_t>(n) + 1);
  auto join = [&](int a, int b, const Device* d) {
    loop.unite(a, b);
    adjacent[static_cast<std::size_t>(a)].emplace_back(b, d);
    adjacent[static_cast<std::size_t>(b)].emplace_back(a, d);
  };
  for (const auto& d : c.devices())
    if (dynamic_cast<const Capacitor*>(d.get()))
      join(id(d->terminals()[0]), id(d->terminals()[1]), d.get());
  for (const auto& d : c.devices()) {
    auto* v = dynamic_cast<const VoltageSource*>(d.get());
    if (!v || !v->definesVoltage()) continue;
    const int a = id(d->terminals()[0]), b = id(d->terminals()[1]);
    if (!sources.unite(a, b)) continue;  // a loop of sources: reported as a voltage loop
    if (loop.find(a) != loop.find(b)) {
      join(a, b, d.get());
      continue;
    }
    // The loop's other elements: a path from a to b over what was joined before.
    std::vector<const Device*> via(adjacent.size(), nullptr);
    std::vector<int> from(adjacent.size(), -1);
    std::queue<int> q;
    q.push(a);
    from[static_cast<std::size_t>(a)] = a;
    while (!q.empty() && from[static_cast<std::size_t>(b)] < 0) {
      const int x = q.front();
      q.pop();
      for (auto [y, e] : adjacent[static_cast<std::size_t>(x)])
        if (from[static_cast<std::size_t>(y)] < 0) {
          from[static_cast<std::size_t>(y)] = x;
          via[static_cast<std::size_t>(y)] = e;
          q.push(y);
        }
    }
    std::vector<std::string> members{d->name()}, caps;
    for (int x = b; x != a && from[static_cast<std::size_t>(x)] >= 0;
         x = from[static_cast<std::size_t>(x)]) {
      const Device* e = via[static_cast<std::size_t>(x)];
      members.push_back(e->name());
      if (dynamic_cast<const Capacitor*>(e)) caps.push_back(e->name());
    }
    out.push_back(
        {d->name(),
         members,
         {},
         fmt::format("'{}' closes a loop of ideal voltage sources and capacitors ({}): it forces "
                     "the voltage of {}, so a cold start (uncharged) or a jump of the source "
                     "gives an impulse of current; give '{}' its series resistance= (the "
                     "internal resistance of a real source)",
                     d->name(), nameList(members), nameList(caps), d->name())});
    join(a, b, d.get());
  }
  return out;
}

}  // namespace disc
