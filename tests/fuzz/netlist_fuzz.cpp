// libFuzzer target: netlist text through parse, the whole-circuit checks and, for small
// circuits, the set-up and first Newton iterations of an operating point. Any byte sequence
// either gives a netlist or a typed disc::Error; a crash, a leak, a hang or another exception
// is a bug.
#include <cstddef>
#include <cstdint>
#include <string>

#include "disc/analysis.hpp"
#include "disc/devices/stack.hpp"
#include "disc/netlist.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    // Confined to the working folder: a mutated include must not read the host's files.
    disc::Netlist nl = disc::parseNetlist(text, "fuzz.disc", disc::IncludePolicy::Confined);
    disc::checkNetlist(nl);
    // Large circuits are legal but slow; the fuzzer looks for faults, not for long runs.
    int plates = 0;
    for (const auto& d : nl.circuit.devices())
      if (const auto* s = dynamic_cast<const disc::Stack*>(d.get()))
        plates += s->options().plates * s->options().arms;
    if (nl.circuit.devices().size() > 40 || plates > 64) return 0;
    disc::OperatingPointOptions o;
    o.maxIterations = 3;
    (void)disc::operatingPoint(nl.circuit, o);
  } catch (const disc::Error&) {
    // Rejected input (or a circuit that does not converge in three iterations) is expected.
  }
  return 0;
}
