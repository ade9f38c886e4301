#include "analysis/text_blocks.hpp"

namespace disc::detail {

std::string wrapText(const std::string& text, const std::string& indent, std::size_t width,
                     const std::string& hang) {
  std::string out, line;
  const std::string& next = hang.empty() ? indent : hang;
  const std::string* lead = &indent;
  std::size_t start = 0;
  while (start < text.size()) {
    auto end = text.find(' ', start);
    if (end == std::string::npos) end = text.size();
    const std::string word = text.substr(start, end - start);
    if (!line.empty() && lead->size() + line.size() + 1 + word.size() > width) {
      out += *lead + line + "\n";
      line.clear();
      lead = &next;
    }
    line += (line.empty() ? "" : " ") + word;
    start = end + 1;
  }
  if (!line.empty()) out += *lead + line + "\n";
  return out;
}

std::string listItem(const std::string& text) {
  return wrapText("- " + text, "  ", 92, "    ");
}

std::string closingBlock(const std::vector<std::string>& warnings,
                         const std::vector<std::string>& cautions, const std::string& disclaimer) {
  std::string s;
  if (!warnings.empty()) {
    s += "\nWARNINGS\n";
    for (const auto& w : warnings) s += listItem(w);
  }
  s += "\nCAUTIONS\n";
  for (const auto& c : cautions) s += listItem(c);
  s += wrapText(disclaimer, "");
  return s;
}

}  // namespace disc::detail
