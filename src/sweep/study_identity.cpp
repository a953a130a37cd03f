#include "rxtrain/sweep/study_identity.hpp"

#include <fmt/format.h>

#include <algorithm>

namespace rxtrain::sweep {

StudyIdentity study_identity(const Case& c, const std::string& case_sha256, const Study& study,
                             const CasePathTable& table, const OutputSpec& outputs,
                             const TrainOptions& train) {
  StudyIdentity id;
  StudyHeader& header = id.header;
  header.version = RXTRAIN_VERSION;
  header.case_sha256 = case_sha256;
  header.definition = study.definition();
  header.outputs = outputs.names();
  for (std::size_t p : study.paths()) {
    const std::string u = table.at(p).unit.to_string();
    id.input_units.push_back(u.empty() || u == "1" ? "-" : u);
  }
  id.output_units = outputs.units();
  const auto input_names = study.input_names();
  for (std::size_t i = 0; i < input_names.size(); ++i)
    header.units.emplace_back(input_names[i], id.input_units[i]);
  for (std::size_t i = 0; i < header.outputs.size(); ++i)
    header.units.emplace_back(header.outputs[i], id.output_units[i]);
  // The integrator's tolerance changes the numbers, so it is part of the study.
  header.definition.push_back(fmt::format("rtol: {}", train.solvers.tube.cvode.rtol));
  // So does the margin the rows' notes near a limit are taken at.
  if (c.limits.T_max || c.limits.T_in_min)
    header.definition.push_back(fmt::format("limit-margin: {} K", train.limit_check.margin));
  for (const auto& m : design_margin_columns(c))
    if (std::find(header.outputs.begin(), header.outputs.end(), m) != header.outputs.end())
      header.margin.push_back(m);
  return id;
}

}  // namespace rxtrain::sweep
