// Netlist lexing: logical lines (continuations joined, comments removed), tokens with their
// positions, includes expanded with cycle detection (private).
#pragma once

#include <string>
#include <vector>

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
  void error(const SourceLocation& where, std::string message);
  bool empty() const { return list_.empty(); }
  const std::vector<Diagnostic>& list() const { return list_; }

 private:
  std::vector<std::pair<std::string, std::vector<std::string>>> files_;
  std::vector<Diagnostic> list_;
};

/// Splits text into statements, expanding `include "file"` (paths relative to the including
/// file). Lexical errors go to `diags`.
std::vector<Statement> lex(const std::string& text, const std::string& file, Diagnostics& diags,
                           std::vector<std::string>& includeStack);

/// Reads a whole file; returns false if it cannot be opened.
bool readFile(const std::string& path, std::string& text);
/// The directory part of a path ("" for a bare name).
std::string directoryOf(const std::string& path);
/// `relative` resolved against `base`'s directory (absolute paths unchanged).
std::string resolvePath(const std::string& base, const std::string& relative);

}  // namespace disc::detail
