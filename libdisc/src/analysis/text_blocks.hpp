// Plain-text building blocks shared by the text reports (supply, fit, replacement) (private).
#pragma once

#include <string>
#include <vector>

namespace disc::detail {

/// `text` folded at word boundaries to lines of at most `width` characters, the first starting
/// with `indent`, the others with `hang` (default: `indent`); every line ends with a newline.
std::string wrapText(const std::string& text, const std::string& indent, std::size_t width = 92,
                     const std::string& hang = "");
/// A list item: "- " and the text, continuation lines hanging under the text.
std::string listItem(const std::string& text);

/// The closing block every text report carries: WARNINGS (when any), CAUTIONS, then the
/// disclaimer, items as wrapped "- " entries.
std::string closingBlock(const std::vector<std::string>& warnings,
                         const std::vector<std::string>& cautions, const std::string& disclaimer);

}  // namespace disc::detail
