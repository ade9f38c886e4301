// libFuzzer target: the plate-type JSON reader. Any bytes give plate types or an InputError;
// an nlohmann exception escaping would be a bug.
#include <cstddef>
#include <cstdint>
#include <string>

#include "disc/error.hpp"
#include "disc/plate_type.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)disc::PlateLibrary::fromJson(std::string(reinterpret_cast<const char*>(data), size),
                                       "fuzz.json");
  } catch (const disc::Error&) {
    // A refused file is the expected outcome for most mutations.
  }
  return 0;
}
