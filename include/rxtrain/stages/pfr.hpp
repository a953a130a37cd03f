// Tubular (plug-flow / packed-bed) stage: CVODE over the reactor volume on
// states [F_1..F_n, T, Q] (Q: heat added so far, W).
//   dF_i/dV = sum_j nu_ij R_j
//   adiabatic:  dT/dV = -sum_j dH_j(T) R_j / sum_i F_i cp_i(T),  dQ/dV = 0
//   isothermal: dT/dV = 0,  dQ/dV = sum_j dH_j(T) R_j
// R_j is the rate per reactor volume (per-catalyst rates times the bulk
// density). Pressure is constant.
#pragma once

#include <optional>

#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

struct PfrOptions {
  CvodeOptions cvode;
  // Sizing integrates until the target is met or this space time (s, at
  // inlet conditions) is passed; about four months is far past any
  // practical bed, so reaching it means the target is out of reach.
  double max_space_time = 1.0e7;
  // When set, integration ends where the temperature reaches this value
  // (K), rising or falling: a bed cut at its catalyst's temperature limit.
  // The stage then ends there, short of its volume or target, without
  // error; the result's outlet is the point where T crossed it and
  // stats.message says so. A stage whose inlet is already at or beyond it
  // (on the side it moves to) ends at V = 0. Unset: no such stop.
  std::optional<double> stop_temperature;
};

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, const SunContext& ctx,
                    const PfrOptions& options = {});

// Outlet of an adiabatic tubular bed of practically unlimited size fed
// with `inlet`: the adiabatic equilibrium point (or complete conversion of
// the limiting reactant). Used as a starting point and for messages.
Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, const SunContext& ctx,
                       const PfrOptions& options = {});

}  // namespace rxtrain
