// Stirred-tank stage: outlet = contents. Newton (Eigen) on the scaled
// unknowns [F_1..F_n, T] (and ln V when sizing):
//   F_i,in - F_i + V sum_j nu_ij R_j(T, F) = 0
//   adiabatic:  sum_i F_i,in (hs_i(T) - hs_i(T_in)) + V sum_j R_j dH_j(T) = 0
//   isothermal: T = T_in, duty = V sum_j R_j dH_j(T)
// Several starts are tried (the isothermal solution at T_in, the adiabatic
// limit, a point between) and every distinct steady state is reported.
#pragma once

#include "rxtrain/solvers/newton.hpp"
#include "rxtrain/stages/pfr.hpp"

namespace rxtrain {

struct CstrOptions {
  NewtonOptions newton;
  // Steps of the volume continuation used when Newton fails from a start.
  int continuation_steps = 40;
  // Two solutions are distinct when their temperatures differ by more.
  double distinct_T = 1e-3;  // K
  PfrOptions pfr;            // for the adiabatic-limit start
};

StageResult run_cstr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, const SunContext& ctx,
                     const CstrOptions& options = {});

}  // namespace rxtrain
