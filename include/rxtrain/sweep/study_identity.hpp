// What a study's outputs (CSV, JSON, report) state about it, built once for
// every caller (the sweep command, the Python module): the header's
// identity lines and the SI unit of every column.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/outputs.hpp"
#include "rxtrain/sweep/study.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"

namespace rxtrain::sweep {

struct StudyIdentity {
  StudyHeader header;
  std::vector<std::string> input_units;   // input order; "-" for a plain number
  std::vector<std::string> output_units;  // output order
};

// The header of a study of case `c` (whose file's bytes hash to
// `case_sha256`) run with `train`: version, case hash, the study's
// definition with the integrator's tolerance (and the limit margin when
// the case has limits: both change the rows), the outputs, the design
// margin columns among them and the units of every column.
StudyIdentity study_identity(const Case& c, const std::string& case_sha256, const Study& study,
                             const CasePathTable& table, const OutputSpec& outputs,
                             const TrainOptions& train);

}  // namespace rxtrain::sweep
