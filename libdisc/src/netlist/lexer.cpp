// Netlist lexing.
#include "lexer.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <fstream>
#include <sstream>

namespace disc {

std::string Diagnostic::format() const {
  std::string out =
      fmt::format("{}:{}:{}: error: {}", where.file, where.line, where.column, message);
  if (!lineText.empty()) {
    out += "\n  " + lineText + "\n  ";
    // Columns count bytes; keep tabs so the caret lines up under them.
    for (int k = 1; k < where.column && k <= static_cast<int>(lineText.size()); ++k)
      out += lineText[static_cast<std::size_t>(k - 1)] == '\t' ? '\t' : ' ';
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

void Diagnostics::error(const SourceLocation& where, std::string message) {
  Diagnostic d{where, std::move(message), ""};
  for (const auto& [file, lines] : files_)
    if (file == where.file && where.line >= 1 && where.line <= static_cast<int>(lines.size()))
      d.lineText = lines[static_cast<std::size_t>(where.line - 1)];
  list_.push_back(std::move(d));
}

bool readFile(const std::string& path, std::string& text) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return false;
  std::stringstream ss;
  ss << in.rdbuf();
  text = ss.str();
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

std::vector<Statement> lex(const std::string& text, const std::string& file, Diagnostics& diags,
                           std::vector<std::string>& includeStack) {
  diags.addFile(file, text);
  std::vector<Statement> statements;
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
      if (std::find(includeStack.begin(), includeStack.end(), target) != includeStack.end()) {
        diags.error(st.tokens[1].where,
                    fmt::format("include cycle: '{}' is already being read", st.tokens[1].text));
        continue;
      }
      std::string inner;
      if (!readFile(target, inner)) {
        diags.error(st.tokens[1].where, fmt::format("include file '{}' not found", target));
        continue;
      }
      includeStack.push_back(target);
      auto nested = lex(inner, target, diags, includeStack);
      includeStack.pop_back();
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
