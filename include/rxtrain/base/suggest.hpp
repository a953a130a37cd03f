// "Did you mean" for names a user wrote (case-file keys, species, case
// paths, output columns): the nearest candidate by edit distance, ignoring
// case, or the list of candidates when none is close.
//
// Example:
//   suggest_nearest("volum", {"volume", "target"})  // "; did you mean \"volume\"?"
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace rxtrain {

// Levenshtein distance between a and b, letters compared without case.
std::size_t edit_distance(std::string_view a, std::string_view b);

// "; did you mean \"x\"?" when the nearest candidate differs in at most a
// third of the longer name's letters (at least one edit); else
// "; WHAT: a, b, c" with at most max_listed names ("..." after them); ""
// without candidates.
std::string suggest_nearest(std::string_view word, const std::vector<std::string>& candidates,
                            std::string_view what = "valid keys", std::size_t max_listed = 12);

}  // namespace rxtrain
