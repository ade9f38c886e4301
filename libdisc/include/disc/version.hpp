// Library version.
#pragma once

namespace disc {
inline constexpr const char* kVersion = "0.1.0";
}
