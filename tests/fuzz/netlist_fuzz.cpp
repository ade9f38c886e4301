// libFuzzer target: the netlist parser must never crash, hang or leak on any byte sequence;
// it either builds a netlist or throws a typed exception.
#include <cstddef>
#include <cstdint>
#include <string>

#include "disc/netlist.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    disc::parseNetlist(text, "fuzz.disc");
  } catch (const disc::Error&) {
    // Rejected input is the expected outcome for almost every mutation.
  }
  return 0;
}
