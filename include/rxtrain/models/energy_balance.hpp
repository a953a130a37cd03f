// The energy balance of a reacting stream, written once: the temperature
// that gives a stream its enthalpy, and the adiabatic (or isothermal) state
// after an extent of one reaction. SI: K, W, mol/s.
//
// Enthalpy is kept as sum_i F_i hs_i(T) - xi dH_298, with hs the sensible
// enthalpy from 298.15 K and dH_j(T) = dH_298 + sum_i nu_ij hs_i(T)
// (kinetics.hpp), so it agrees with the tubular and stirred-tank balances'
// dT/dV = -sum dH_j R_j / sum F cp.
#pragma once

#include <limits>
#include <vector>

#include "rxtrain/chem/heat_mode.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"

namespace rxtrain {

// Temperature at which sum_i F_i hs_i(T) equals `enthalpy_flow` (W),
// starting near T_guess. Throws SolverError when no such T exists.
double temperature_for_enthalpy(const Mechanism& mech, const std::vector<double>& F,
                                double enthalpy_flow, double T_guess);

// The stream after extent xi (mol/s) of reaction j alone from `inlet`:
// flows by the stoichiometry (round-off below zero cleared), temperature
// the inlet's (isothermal) or the one that keeps the total enthalpy
// (adiabatic; Newton from T_guess, or the inlet's T when NaN). Throws
// SolverError when no temperature closes the balance.
Stream stream_after_extent(const Mechanism& mech, const Stream& inlet, HeatMode heat, int j,
                           double xi, double T_guess = std::numeric_limits<double>::quiet_NaN());
// The same into `out`, whose buffers are reused (for callers that evaluate
// many extents, e.g. a quadrature along a bed).
void stream_after_extent(const Mechanism& mech, const Stream& inlet, HeatMode heat, int j,
                         double xi, double T_guess, Stream& out);

// Two streams mixed adiabatically, without reaction: the flows add and
// the temperature is the one at which the mixture's sensible enthalpy
// (each species' own h(T), from 298.15 K) equals the sum of the two
// streams' (formation enthalpies cancel: no species changes); Newton from
// the flow-weighted mean of the two temperatures. The pressure is
// `main`'s: the side stream is taken to join at the pressure of the stream
// it joins. Throws SolverError when no temperature closes the balance.
Stream mix_adiabatic(const Mechanism& mech, const Stream& main, const Stream& side);

}  // namespace rxtrain
