// Lab runs for `rxtrain fit`: a CSV whose columns are named by the
// sweep's case paths (the run's inputs: feed.T, feed.composition.H2,
// train.L1.catalyst, ...), by the sweep's output names (the measurements:
// X, L1.x_out.C2H4, L1.T_out, ...) and by `sigma.OUTPUT` (a measurement's
// standard deviation). Lines starting with `#` are comments (where the
// data came from). A cell is a plain SI number or carries its unit
// ("420 degC"); an optional second header line gives each column's unit
// ("degC", "bar", "-" for a plain number) for the cells that carry none.
// Everything is SI once read.
#pragma once

#include <map>
#include <string>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"

namespace rxtrain::fit {

struct LabData {
  std::string file;
  std::vector<std::size_t> input_paths;  // CasePathTable indices, column order
  std::vector<std::string> input_names;
  sweep::OutputSpec outputs;                  // the measured outputs, column order
  std::vector<std::vector<double>> inputs;    // per run, input_paths order (SI)
  std::vector<std::vector<double>> measured;  // per run, outputs order (SI)
  // Per run and output: the measurement's SD (SI), from a sigma column or
  // --sigma; empty when no output has one (then one variance per output
  // is estimated). Every output needs one once any has.
  std::vector<std::vector<double>> sigma;
  std::vector<int> lines;  // the CSV line of each run, from 1

  std::size_t runs() const { return measured.size(); }
  bool weighted() const { return !sigma.empty(); }
};

// Reads the CSV `text` (named `file` in messages). `sigma` holds --sigma
// NAME=VALUE as given (VALUE may carry a unit). Throws InputError located
// at FILE:LINE:COL for an unknown column (with the nearest valid name), a
// unit of the wrong dimension, a value that is not a finite number, a
// missing cell, a column given twice, no measured column, an output with
// a sigma for some runs only, a sigma not above 0; and at the option for
// a bad --sigma.
LabData read_lab_data(const std::string& text, const std::string& file, const Case& lab,
                      const sweep::CasePathTable& table, const UnitParser& units,
                      const std::map<std::string, std::string>& sigma = {});

}  // namespace rxtrain::fit
