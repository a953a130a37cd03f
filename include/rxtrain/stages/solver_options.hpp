// How every stage of a train is solved, set once: the tubular integrations
// (CVODE tolerances, the space-time bound of sizing and reach, the Jacobian
// form), the stirred tanks' Newton and continuation, and the equilibrium
// computations. TrainOptions, StagingOptions and DesignOptions each own
// one and pass it down, so a setting (say rtol) holds for every stage and
// for the tubular runs inside a stirred tank alike.
//
// Example:
//   TrainOptions o;
//   o.solvers.tube.cvode.rtol = 1e-10;        // every tube, and inside every tank
//   o.solvers.newton.max_iterations = 100;    // every tank
//   TrainResult r = run_train(c, o);
#pragma once

#include <string>

#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/solvers/newton.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"

namespace rxtrain {

struct SolverOptions {
  // Tubular stages: CVODE, the space-time bound (max_space_time), the
  // Jacobian form and whether every step is kept as a profile point. Also
  // the tubular runs a stirred tank makes (its adiabatic-limit start and its
  // reach).
  PfrOptions tube;
  // Stirred tanks: Newton, the steps of the volume continuation used when
  // Newton fails from a start, and the temperature (K) by which two steady
  // states must differ to count as two (see CstrOptions).
  NewtonOptions newton;
  int tank_continuation_steps = CstrOptions{}.continuation_steps;
  double tank_distinct_T = CstrOptions{}.distinct_T;
  // Equilibrium at T, on the adiabatic line and along the maximum-rate locus.
  EquilibriumOptions equilibrium;

  // The stirred-tank options these give (no warm starts).
  CstrOptions tank() const;
  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

}  // namespace rxtrain
