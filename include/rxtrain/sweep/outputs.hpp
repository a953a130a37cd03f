// The result columns of a study, named as the user writes them:
//   X, T_out                the train outlet's key conversion and temperature
//   STAGE.FIELD             a numeric field of the stage's result, as the
//                           table of result fields names it
//                           (analysis/result_fields.hpp): volume, T_max,
//                           outlet.T, inlet.flows.SP, over_limit,
//                           equilibrium.approach_T, rate.RX (a reactor's
//                           mean rate of reaction RX), ...
// Values and units are SI (GHSV, WHSV, LHSV in 1/h, as in the JSON), the
// units those of the table.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/analysis/result_fields.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain::sweep {

struct OutputColumn {
  std::string name;
  int stage = -1;                         // -1: the train (X, T_out)
  std::string field;                      // JSON field name within the stage, dotted
  int species = -1;                       // *.flows.SP: the species; rate.RX: the reaction
  const ResultFieldSpec* spec = nullptr;  // its row of the result table
  std::string unit;                       // SI (result_field_unit)
};

class OutputSpec {
 public:
  // The default columns: X, T_out, every reactor's T_max (and over_limit
  // when the case gives limits), every stage's outlet.T, every sized
  // reactor's volume (and catalyst_mass where it has a bulk density; and
  // the outlet mole fraction it was sized to, for a purity target), and
  // the yield of each wanted product at the last reactor.
  static OutputSpec defaults(const Case& c);
  // A comma-separated list. Throws InputError located at "--output" for an
  // unknown stage or field, with the nearest valid name.
  static OutputSpec parse(const std::string& list, const Case& c);

  const std::vector<OutputColumn>& columns() const { return columns_; }
  std::vector<std::string> names() const;
  // The SI unit each column is given in ("K", "m3", "1/h"; "-" for a
  // fraction), for headers and axis labels.
  std::vector<std::string> units() const;
  // True when a column reads a stage's equilibrium record (which needs
  // TrainOptions::equilibrium_views).
  bool needs_equilibrium_views() const;
  // Column i of a finished run; nullopt where the field does not apply
  // (e.g. a liquid stage's GHSV) or is not finite.
  std::optional<double> extract(std::size_t i, const TrainResult& r) const;

 private:
  std::vector<OutputColumn> columns_;
};

// Names of the sized catalyst (or volume, without a bulk density) of every
// stage sized to a target: the columns the design margin is taken over.
std::vector<std::string> design_margin_columns(const Case& c);

}  // namespace rxtrain::sweep
