// The approach-temperature cell of the stage tables (terminal and HTML):
// T_eq(X_out) - T_out within the record's window, a footnote mark beyond
// it, and the footnote that says why the cell is empty. The number itself
// stays in the JSON (SI), flagged.
#pragma once

#include <string>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

// The mark in a cell whose approach temperature lies beyond the window.
inline constexpr const char* kApproachMark = "(a)";

// The figure (K, two decimals), kApproachMark beyond the window, "-" where
// it does not apply.
std::string approach_T_cell(const StageResult& r);

// One line naming the marked stages and why (no trailing newline); empty
// when no cell is marked.
std::string approach_T_footnote(const TrainResult& r);

}  // namespace rxtrain
