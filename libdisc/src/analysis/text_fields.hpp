// Fields of CSV and HTML text, shared by the reports and the campaign tables (private).
#pragma once

#include <string>

namespace disc {

/// The field, quoted when it holds a comma, a double quote or a line break, each double quote
/// doubled (RFC 4180, section 2).
std::string csvField(const std::string& text);

/// Text for a double-quoted JavaScript (or JSON) string: quotes, backslashes and control
/// characters escaped, and "<" written as \u003c so no "</script>" can end a script early.
std::string escapeJs(const std::string& text);

/// HTML text with <, >, & and " escaped.
std::string escapeHtml(const std::string& text);

}  // namespace disc
