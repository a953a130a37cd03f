// Invented mechanisms of any size, for the speed benchmark (tools/bench)
// and the sparse-solver tests (invented data, no real chemistry).
//
// n gas-phase isomers S0..S(n-1) of one formula, so every reaction is
// balanced by construction (atoms and moles). Mass-action, irreversible,
// positive Arrhenius rates with concentration driving; each reaction turns
// species into ones of higher index (S0 + S3 => S5 + S8, S2 => S4), an
// acyclic network whose products are a little more stable (heats of
// formation fall with the index over 10 kJ/mol in all), so an adiabatic bed
// warms by tens of kelvin. Reactions take their first reactant in turn and
// the rest from indices up to n/5 above, so every species takes part and
// the Jacobian is sparse. That window widens with n, so the coupling is
// closer to a random graph than to a real network's local one, and LU
// fill-in (the sparse solver's cost) grows faster than n at the top of the
// series; a fixed window (`reach`, e.g. 10) keeps each species' partners
// bounded, as in a real network, and the cost grows linearly
// (docs/performance.md).
//
// Example:
//   const Case c = synthetic_case(200, 400);  // one adiabatic tubular stage
//   TrainResult r = run_train(c, options);
#pragma once

#include <cstdint>

#include "rxtrain/case/case.hpp"

namespace rxtrain {

// A case with one adiabatic tubular stage (about 3 s of space time at the
// inlet) fed at 600 K and 10 bar, 100 mol/s, mostly of the first tenth of
// the species; the key species is S0. Deterministic for a given seed.
// `reach`: how many indices above a reactant its partners and products may
// lie; 0 (the default) for max(2, n/5). Throws std::invalid_argument
// unless n_species >= 2, n_reactions >= 1 and reach >= 0.
Case synthetic_case(int n_species, int n_reactions, std::uint32_t seed = 1, int reach = 0);

}  // namespace rxtrain
