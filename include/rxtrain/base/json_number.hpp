// The one rule for numbers in JSON output: a non-finite number (or a
// missing one) is written as null, never as NaN or infinity, which JSON
// cannot hold.
#pragma once

#include <cmath>
#include <nlohmann/json.hpp>
#include <optional>

namespace rxtrain {

inline nlohmann::json json_number(double v) {
  return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}
inline nlohmann::json json_number(const std::optional<double>& v) {
  return v ? json_number(*v) : nlohmann::json(nullptr);
}

}  // namespace rxtrain
