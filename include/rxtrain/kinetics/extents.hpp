// The extent of each reaction over a stage, read from its flows.
//
// Every change of a species' flow across a stage is a sum of the reactions'
// extents, dF_i = sum_j nu_ij xi_j (mol/s). When the reactions'
// stoichiometries are linearly independent the extents follow from the
// flows alone — which is how a lab reads the rate of each reaction from a
// differential reactor's measured outlet — and the mean rate of reaction j
// over the stage is xi_j per kg of catalyst (or per m3, by the rate law's
// basis). When they are dependent (A -> B, B -> C, A -> C) no flow
// measurement can tell the extents apart, and none is given.
#pragma once

#include <optional>
#include <span>
#include <vector>

#include "rxtrain/kinetics/kinetics.hpp"

namespace rxtrain {

// nu: row-major, one row of n_species coefficients per reaction.
struct Stoichiometry {
  int n_reactions = 0;
  int n_species = 0;
  std::vector<double> nu;
  std::vector<RateBasis> basis;  // each reaction's rate basis

  static Stoichiometry of(std::span<const Reaction> reactions);
  // True when no reaction's coefficients are a combination of the others'.
  bool independent() const;
};

// The extents (mol/s) that turn `in` into `out`; nullopt when the
// reactions are dependent, or there are none, or the flows do not have
// one entry per species. Least squares on the overdetermined system, so
// flows that carry rounding give the nearest extents.
std::optional<std::vector<double>> extents_from_flows(const Stoichiometry& s,
                                                      std::span<const double> in,
                                                      std::span<const double> out);

}  // namespace rxtrain
