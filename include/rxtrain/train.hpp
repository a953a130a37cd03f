// A train of stages run in order, each fed with the outlet of the one
// before. run_train() is the only entry point the command line needs.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case.hpp"
#include "rxtrain/stages/cstr.hpp"
#include "rxtrain/stages/pfr.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain {

struct TrainOptions {
  PfrOptions pfr;    // tubular stages (CVODE tolerances, sizing limit)
  CstrOptions cstr;  // stirred tanks (Newton, starts)
};

struct TrainResult {
  std::string title;
  std::vector<std::string> species;  // ids, column order of every output
  std::string key;                   // key species id
  Stream feed;
  std::vector<StageResult> stages;   // in train order
  Stream outlet;                     // outlet of the last stage
  double conversion = 0;             // overall key conversion at the outlet
  std::vector<std::string> warnings; // loader and stage warnings, in order
};

// Runs every stage of the case in order. Throws SolverError (naming the
// stage and position) or InputError (a target out of reach, located at the
// stage's entry in the case file).
TrainResult run_train(const Case& c, const TrainOptions& options = {});

}  // namespace rxtrain
