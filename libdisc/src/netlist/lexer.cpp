// Netlist lexing.
#include "lexer.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <fstream>
#include <sstream>

#include "core/safe_io.hpp"

namespace disc {

std::string Diagnostic::format() const {
  std::string out =
      fmt::format("{}:{}:{}: error: {}", excerpt(where.file), where.line, where.column, message);
  if (!lineText.empty()) {
    out += "\n  " + lineText + "\n  ";
    // The caret sits under the display cell `caret` of lineText; tabs are kept so it lines up.
    for (int k = 0; k < caret && k < static_cast<int>(lineText.size()); ++k)
      out += lineText[static_cast<std::size_t>(k)] == '\t' ? '\t' : ' ';
    out += '^';
  }
  return out;
}

NetlistError::NetlistError(std::vector<Diagnostic> diagnostics)
    : InputError([&] {
        std::string all;
        for (const auto& d : diagnostics) {
          if (!all.empty()) all += '\n';
          all += d.format();
        }
        return all;
      }()),
      diagnostics_(std::move(diagnostics)) {}

namespace detail {
namespace {

/// The physical lines of a text, without their line ends (LF or CRLF).
std::vector<std::string> splitLines(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    lines.push_back(line);
  }
  return lines;
}

}  // namespace

void Diagnostics::addFile(const std::string& file, const std::string& text) {
  files_.emplace_back(file, splitLines(text));
}

namespace {

/// The part of a source line shown under a message: at most InputLimits::kQuote bytes around
/// byte column `column`, control bytes escaped; `caret` is the column's cell in the result.
std::string shownLine(const std::string& line, int column, int& caret) {
  const std::size_t col = column > 0 ? static_cast<std::size_t>(column - 1) : 0;
  const std::size_t half = InputLimits::kQuote / 2;
  std::size_t start = col > half ? col - half : 0;
  while (start > 0 && start < line.size() && (line[start] & 0xc0) == 0x80) --start;
  std::size_t end = std::min(line.size(), start + InputLimits::kQuote);
  while (end < line.size() && (line[end] & 0xc0) == 0x80) ++end;
  std::string out = start > 0 ? "..." : "";
  caret = static_cast<int>(out.size());
  // A line that is not UTF-8 (the fault being reported) shows every non-ASCII byte escaped.
  const bool utf8 = invalidUtf8At(line) == std::string::npos;
  for (std::size_t k = start; k < end; ++k) {
    const auto c = static_cast<unsigned char>(line[k]);
    const std::string piece = (c < 0x20 && c != '\t') || c == 0x7f || (c >= 0x80 && !utf8)
                                  ? fmt::format("\\x{:02x}", c)
                                  : std::string(1, line[k]);
    if (k < col && (c & 0xc0) != 0x80) caret += static_cast<int>(piece.size());
    out += piece;
  }
  if (end < line.size()) out += "...";
  return out;
}

}  // namespace

void Diagnostics::error(const SourceLocation& where, std::string message, bool showLine) {
  // A flood of errors (a file that is no netlist) is cut; the count of the rest is kept.
  if (list_.size() >= kMaxShown) {
    ++dropped_;
    return;
  }
  Diagnostic d{where, boundedMessage(message), "", 0};
  for (const auto& [file, lines] : files_)
    if (showLine && file == where.file && where.line >= 1 &&
        where.line <= static_cast<int>(lines.size()))
      d.lineText =
          shownLine(lines[static_cast<std::size_t>(where.line - 1)], where.column, d.caret);
  list_.push_back(std::move(d));
}

std::vector<Diagnostic> Diagnostics::list() const {
  std::vector<Diagnostic> out = list_;
  if (dropped_ > 0 && !out.empty())
    out.push_back({out.back().where,
                   fmt::format("{} more error(s) not shown; mend the ones above first", dropped_),
                   "", 0});
  return out;
}

ReadContext ReadContext::start(const std::string& name, IncludePolicy policy) {
  ReadContext c;
  c.policy = policy;
  const std::string real = realPath(name);
  c.stack.push_back(real.empty() ? name : real);
  const std::string dir = directoryOf(real.empty() ? name : real);
  c.root = realPath(dir.empty() ? "." : dir);
  return c;
}

bool ReadContext::open(const std::string& path, const SourceLocation& where, const char* what,
                       std::size_t maxBytes, Diagnostics& diags, std::string& text,
                       std::string& real) {
  real = realPath(path);
  if (real.empty()) {
    diags.error(where, fmt::format("{} '{}' not found", what, excerpt(path)));
    return false;
  }
  if (policy == IncludePolicy::Confined && !insideFolder(real, root)) {
    diags.error(where, fmt::format("{} '{}' lies outside the netlist's folder, and reading is "
                                   "confined to it (the sandbox): copy the file beside the "
                                   "netlist",
                                   what, excerpt(path)));
    return false;
  }
  if (std::find(stack.begin(), stack.end(), real) != stack.end()) {
    diags.error(where, fmt::format("include cycle: '{}' is already being read", excerpt(path)));
    return false;
  }
  if (static_cast<int>(stack.size()) > InputLimits::kIncludeDepth) {
    diags.error(where,
                fmt::format("includes nest deeper than {} files", InputLimits::kIncludeDepth));
    return false;
  }
  if (++filesRead > InputLimits::kFilesRead) {
    diags.error(where, fmt::format("more than {} include and use files in one netlist",
                                   InputLimits::kFilesRead));
    return false;
  }
  try {
    text = readInputFile(real, maxBytes, what);
  } catch (const InputError& e) {
    diags.error(where, e.what());
    return false;
  }
  return true;
}

std::string directoryOf(const std::string& path) {
  const auto slash = path.find_last_of('/');
  return slash == std::string::npos ? std::string() : path.substr(0, slash + 1);
}

std::string resolvePath(const std::string& base, const std::string& relative) {
  if (!relative.empty() && relative[0] == '/') return relative;
  return directoryOf(base) + relative;
}

namespace {

struct Char {
  char c;
  int line, col;
};

/// Tokenizes one logical line. A '#' starts a comment only at the start of a token, so signal
/// names such as temp:SR1#3 keep theirs.
void tokenize(const std::vector<Char>& chars, const std::string& file, Diagnostics& diags,
              std::vector<Token>& out) {
  std::size_t k = 0;
  const std::size_t n = chars.size();
  auto isSpace = [](char c) { return c == ' ' || c == '\t' || c == '\r'; };
  while (k < n) {
    while (k < n && isSpace(chars[k].c)) ++k;
    if (k >= n || chars[k].c == '#') break;
    Token t;
    t.where = {file, chars[k].line, chars[k].col};
    std::string text;
    bool inQuote = false, sawEquals = false;
    SourceLocation quoteStart;
    while (k < n && (inQuote || !isSpace(chars[k].c))) {
      const Char& ch = chars[k];
      if (ch.c == '"') {
        if (!inQuote) quoteStart = {file, ch.line, ch.col};
        inQuote = !inQuote;
        t.quoted = true;
        ++k;
        continue;
      }
      if (ch.c == '=' && !inQuote && !sawEquals) {
        sawEquals = true;
        t.keyValue = true;
        t.key = text;
        t.valueWhere = k + 1 < n ? SourceLocation{file, chars[k + 1].line, chars[k + 1].col}
                                 : SourceLocation{file, ch.line, ch.col + 1};
        text += ch.c;
        ++k;
        continue;
      }
      text += ch.c;
      ++k;
    }
    if (inQuote) diags.error(quoteStart, "unterminated quoted string: add the closing \"");
    t.text = text;
    if (t.keyValue) {
      t.value = text.substr(t.key.size() + 1);
      if (t.key.empty()) diags.error(t.where, "'=' needs a parameter name before it");
    }
    out.push_back(std::move(t));
  }
}

}  // namespace

std::vector<Statement> lex(std::string text, const std::string& file, Diagnostics& diags,
                           ReadContext& context) {
  stripBom(text);
  diags.addFile(file, text);
  std::vector<Statement> statements;
  if (const std::size_t bad = invalidUtf8At(text); bad != std::string::npos) {
    int line = 0, col = 0;
    lineColumnOf(text, bad, line, col);
    diags.error({file, line, col},
                fmt::format("byte 0x{:02x} is not UTF-8 text: save the file as UTF-8 (or plain "
                            "ASCII)",
                            static_cast<unsigned char>(text[bad])));
    return statements;
  }
  if (const std::size_t nul = text.find('\0'); nul != std::string::npos) {
    int line = 0, col = 0;
    lineColumnOf(text, nul, line, col);
    diags.error({file, line, col}, "a NUL byte: this is binary data, not a netlist");
    return statements;
  }
  const std::vector<std::string> lines = splitLines(text);
  std::vector<Char> logical;
  for (std::size_t li = 0; li < lines.size(); ++li) {
    const std::string& line = lines[li];
    // Strip a comment: '#' at the start of a token, outside quotes.
    std::size_t end = line.size();
    bool inQuote = false;
    for (std::size_t k = 0; k < line.size(); ++k) {
      if (line[k] == '"') inQuote = !inQuote;
      if (!inQuote && line[k] == '#' && (k == 0 || line[k - 1] == ' ' || line[k - 1] == '\t')) {
        end = k;
        break;
      }
    }
    std::size_t last = end;
    while (last > 0 && (line[last - 1] == ' ' || line[last - 1] == '\t')) --last;
    const bool continues = last > 0 && line[last - 1] == '\\';
    const std::size_t keep = continues ? last - 1 : end;
    for (std::size_t k = 0; k < keep; ++k)
      logical.push_back({line[k], static_cast<int>(li) + 1, static_cast<int>(k) + 1});
    if (continues && li + 1 < lines.size()) {
      logical.push_back({' ', static_cast<int>(li) + 1, static_cast<int>(keep) + 1});
      continue;
    }
    Statement st;
    tokenize(logical, file, diags, st.tokens);
    logical.clear();
    if (st.tokens.empty()) continue;
    st.where = st.tokens.front().where;
    if (st.tokens.front().text == "include" && !st.tokens.front().keyValue) {
      if (st.tokens.size() != 2 || st.tokens[1].keyValue) {
        diags.error(st.where, "include takes one file name: include \"other.disc\"");
        continue;
      }
      const std::string target = resolvePath(file, st.tokens[1].text);
      std::string inner, real;
      if (!context.open(target, st.tokens[1].where, "include file", InputLimits::kNetlistBytes,
                        diags, inner, real))
        continue;
      context.stack.push_back(real);
      auto nested = lex(std::move(inner), target, diags, context);
      context.stack.pop_back();
      statements.insert(statements.end(), std::make_move_iterator(nested.begin()),
                        std::make_move_iterator(nested.end()));
      continue;
    }
    statements.push_back(std::move(st));
  }
  return statements;
}

}  // namespace detail
}  // namespace disc
