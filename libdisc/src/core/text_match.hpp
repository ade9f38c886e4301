// Did-you-mean suggestions for misspelt names (private).
#pragma once

#include <string>
#include <vector>

namespace disc::detail {

/// Levenshtein distance.
std::size_t editDistance(const std::string& a, const std::string& b);
/// "; did you mean 'x'?" for the closest candidate within reach, else "".
std::string didYouMean(const std::string& word, const std::vector<std::string>& candidates);

}  // namespace disc::detail
