// The caution every output carries: rxtrain is a screening tool.
#pragma once

namespace rxtrain {

inline constexpr const char* kCaution =
    "Results are for screening and study only. Adiabatic stages can run away: a small change "
    "in feed temperature or activity can move a bed to a much hotter state. Confirm every "
    "design with licensed engineers under the codes that apply where it will be built.";

}  // namespace rxtrain
