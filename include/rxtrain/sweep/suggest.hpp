// "Did you mean" for names given on the command line (case paths, output
// columns): the nearest candidate by edit distance, ignoring case, or the
// list of candidates when none is close.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace rxtrain::sweep {

// "; did you mean \"x\"?" or "; valid names: a, b, c" (at most 40 listed).
std::string suggestion(std::string_view word, const std::vector<std::string>& candidates);

}  // namespace rxtrain::sweep
