// A reactor stage's catalyst pellets as the case describes them (SI).
// The physics that uses them is models/pellet.hpp.
#pragma once

#include <optional>
#include <vector>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

enum class PelletShape { Slab, Cylinder, Sphere };

// How the effectiveness factor of each reaction is found (models/pellet.hpp):
// Bischoff's generalized Thiele modulus (cheap, exact for first order) or
// the solved 1-D pellet (exact within its grid for any kinetics).
enum class EffectivenessModel { Thiele, Pellet };

struct PelletSpec {
  PelletShape shape = PelletShape::Sphere;
  double size = 0;                // m: sphere or cylinder diameter, slab thickness
  std::optional<double> length;   // m: a finite cylinder's length
  std::vector<double> D_eff;      // m2/s per species; empty: no effectiveness factors
  std::optional<double> density;  // kg/m3, the pellet's own density
  EffectivenessModel effectiveness = EffectivenessModel::Pellet;
  SourceLocation where;  // the `pellet` entry
};

}  // namespace rxtrain
