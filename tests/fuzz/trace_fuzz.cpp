// libFuzzer target: the trace CSV reader. Any bytes give a trace or a TraceError.
#include <cstddef>
#include <cstdint>
#include <string>

#include "disc/error.hpp"
#include "disc/trace.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)disc::parseTrace(std::string(reinterpret_cast<const char*>(data), size), "fuzz.csv");
  } catch (const disc::Error&) {
    // A refused trace is the expected outcome for most mutations.
  }
  return 0;
}
