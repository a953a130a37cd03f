#include "rxtrain/base/suggest.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>

namespace rxtrain {

std::size_t edit_distance(std::string_view a, std::string_view b) {
  const auto eq = [](char x, char y) {
    return std::tolower(static_cast<unsigned char>(x)) ==
           std::tolower(static_cast<unsigned char>(y));
  };
  std::vector<std::size_t> prev(b.size() + 1), cur(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) prev[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    cur[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j)
      cur[j] =
          std::min({prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (eq(a[i - 1], b[j - 1]) ? 0 : 1)});
    std::swap(prev, cur);
  }
  return prev[b.size()];
}

std::string suggest_nearest(std::string_view word, const std::vector<std::string>& candidates,
                            std::string_view what, std::size_t max_listed) {
  const std::string* best = nullptr;
  std::size_t best_d = 0;
  for (const auto& c : candidates) {
    const std::size_t d = edit_distance(word, c);
    if (!best || d < best_d) best = &c, best_d = d;
  }
  if (best && best_d <= std::max<std::size_t>(1, std::max(word.size(), best->size()) / 3))
    return fmt::format("; did you mean \"{}\"?", *best);
  if (candidates.empty()) return "";
  std::string list;
  for (std::size_t i = 0; i < candidates.size() && i < max_listed; ++i)
    list += (i ? ", " : "") + candidates[i];
  if (candidates.size() > max_listed) list += ", ...";
  return fmt::format("; {}: {}", what, list);
}

}  // namespace rxtrain
