// Netlist lexing: logical lines (continuations joined, comments removed), tokens with their
// positions, includes expanded with cycle detection (private).
#pragma once

#include <string>
#include <vector>

#include "disc/limits.hpp"
#include "disc/netlist.hpp"

namespace disc::detail {

struct Token {
  std::string text;  ///< the whole token, quotes removed from quoted parts
  SourceLocation where;
  bool keyValue = false;  ///< "key=value"
  std::string key, value;
  SourceLocation valueWhere;
  bool quoted = false;  ///< the token (or its value) was quoted
};

struct Statement {
  std::vector<Token> tokens;
  SourceLocation where;  ///< of the first token
};

/// Collects diagnostics; knows every file's lines for the caret display.
class Diagnostics {
 public:
  void addFile(const std::string& file, const std::string& text);
  /// Records an error; `showLine` false leaves the source line out (a file that is no netlist).
  void error(const SourceLocation& where, std::string message, bool showLine = true);
  bool empty() const { return list_.empty(); }
  /// Errors recorded so far, the cut ones included (to tell whether a statement failed).
  std::size_t count() const { return list_.size() + dropped_; }
  /// The diagnostics, the last one counting those cut after kMaxShown.
  std::vector<Diagnostic> list() const;
  static constexpr std::size_t kMaxShown = 50;

 private:
  std::vector<std::pair<std::string, std::vector<std::string>>> files_;
  std::vector<Diagnostic> list_;
  std::size_t dropped_ = 0;
};

/// What one netlist reading has opened so far: the real paths of the files being read (for
/// cycles), how many files were read, and who may be read.
struct ReadContext {
  std::vector<std::string> stack;  ///< real paths of the files being read, outermost first
  int filesRead = 0;
  IncludePolicy policy = IncludePolicy::Trusted;
  std::string root;  ///< real folder a Confined reading stays inside
  /// The ReadContext of a reading that starts at `name` (a file, or a name given for text).
  static ReadContext start(const std::string& name, IncludePolicy policy);
  /// Checks that `path` (written at `where`) may be read and reads it; on failure reports at
  /// `where` and returns false. `what` names the file's role ("include file", "plate file").
  bool open(const std::string& path, const SourceLocation& where, const char* what,
            std::size_t maxBytes, Diagnostics& diags, std::string& text, std::string& real);
};

/// Splits text into statements, expanding `include "file"` (paths relative to the including
/// file). Lexical errors go to `diags`.
std::vector<Statement> lex(std::string text, const std::string& file, Diagnostics& diags,
                           ReadContext& context);

/// The directory part of a path ("" for a bare name).
std::string directoryOf(const std::string& path);
/// `relative` resolved against `base`'s directory (absolute paths unchanged).
std::string resolvePath(const std::string& base, const std::string& relative);

}  // namespace disc::detail
