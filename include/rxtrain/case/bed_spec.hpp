// A tubular stage's bed as it is built (`bed` or `tubes` in the case) and
// the fluid's viscosity law (`fluid: {viscosity: ...}`), in SI. The
// pressure drop they give is models/hydraulics.hpp's.
#pragma once

#include <cmath>
#include <numbers>
#include <optional>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

// mu(T) = value * (T / T_ref)^exponent, Pa s; exponent 0 is a constant.
// One value for the whole mixture: a screening simplification.
struct ViscosityLaw {
  double value = 0;     // Pa s at T_ref
  double T_ref = 0;     // K; unused when exponent is 0
  double exponent = 0;  // >= 0
  double at(double T) const {
    return exponent == 0 ? value : value * std::pow(T / T_ref, exponent);
  }
  // d mu / dT at T.
  double slope(double T) const { return exponent == 0 ? 0.0 : exponent * at(T) / T; }
};

// One vessel (`bed`: tubes == 0) or a multitubular reactor (`tubes`,
// catalyst in the tubes): the flow area is the vessel's cross-section or
// the tubes' together, and the bed volume is that area times the length.
struct BedGeometry {
  int tubes = 0;        // 0: one vessel
  double diameter = 0;  // m: the vessel's, or each tube's inside diameter
  // `diameter: auto`: the stage finds the smallest diameter whose pressure
  // drop does not exceed dP_max (Pa); `diameter` is then unused.
  std::optional<double> dP_max;
  double void_fraction = 0;  // bed voidage, 0 < eps < 1
  SourceLocation where;      // the `bed` or `tubes` entry

  double flow_area() const {
    return (tubes > 0 ? tubes : 1) * std::numbers::pi / 4 * diameter * diameter;
  }
};

}  // namespace rxtrain
