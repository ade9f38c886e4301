// Limits on what libdisc reads: each is refused up front with a location (docs/limits.md).
#pragma once

#include <cstddef>
#include <string>

namespace disc {

/// The documented limits of the inputs. A larger input is refused before any work, so a
/// hostile or mistaken file cannot exhaust memory or time.
struct InputLimits {
  static constexpr std::size_t kNetlistBytes = 16u << 20;    ///< one netlist file (16 MiB)
  static constexpr std::size_t kPlateFileBytes = 16u << 20;  ///< one plate-type JSON file
  static constexpr std::size_t kTraceBytes = 512u << 20;     ///< one trace CSV file (512 MiB)
  static constexpr int kIncludeDepth = 16;                   ///< nested include statements
  static constexpr int kFilesRead = 256;          ///< include and use files of one netlist
  static constexpr int kElements = 100000;        ///< elements of one circuit
  static constexpr int kPlatesPerArm = 1000;      ///< plates in series in one stack arm
  static constexpr int kArms = 100;               ///< parallel arms of one stack
  static constexpr int kPlatesPerStack = 10000;   ///< plates x arms of one stack
  static constexpr int kPlateTypes = 1000;        ///< plate types known to one netlist
  static constexpr std::size_t kNameLength = 64;  ///< element and node names, bytes
  static constexpr std::size_t kQuote = 80;       ///< offending text quoted in a message
};

/// Limits on a run (docs/limits.md): the step budget of one transient, refused up front when
/// the run's largest step cannot reach its stop time within it, and enforced while it runs.
struct RunLimits {
  static constexpr long long kSteps = 2000000;        ///< accepted steps of one transient (default)
  static constexpr long long kMaxSteps = 1000000000;  ///< the most max-steps= may ask for
};

/// Who may be read through `include` and `use`.
enum class IncludePolicy {
  /// Any path the process may read (the netlist author is trusted like a script's author).
  Trusted,
  /// Only regular files whose real path lies inside the folder of the netlist being read
  /// (for netlists from other people: no absolute paths out, no `..`, no symlinks out).
  Confined
};

/// A file stem made from a name (an element's, a plate type's): characters outside the
/// element-name set become '_', a leading '.' too, and the result is cut to kNameLength. Every
/// file libdisc writes is named through this, so no name can reach outside its folder.
std::string safeFileStem(const std::string& name);

/// True when `name` is a valid element or node name: 1 to kNameLength bytes of ASCII letters,
/// digits and `_ - . +`, starting with a letter, digit or `_` (docs/netlist.md).
bool validName(const std::string& name);

/// `text` for quoting in a message: at most `max` characters (cut with "..."), control
/// characters (but tab) and bytes that are not UTF-8 written as \xNN.
std::string excerpt(const std::string& text, std::size_t max = InputLimits::kQuote);

/// A message fit to print: each '...'-quoted span cut to excerpt(), control characters and
/// bytes that are not UTF-8 escaped, and the whole cut near `maxLength` bytes.
std::string boundedMessage(const std::string& message, std::size_t maxLength = 600);

}  // namespace disc
