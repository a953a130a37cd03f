// The numeric results of a train by name, each with its SI unit and how it
// is read: the train's own (X, T_out) and every stage's (the fields of the
// stage's JSON result, report/json.cpp, under the same dotted names). The
// sweep's output columns are built on it (sweep/outputs.hpp); a new stage
// result a study may read is one row here.
//
// Stage fields: volume, catalyst_mass, bulk_density, space_time,
// space_velocity, ghsv, whsv, lhsv, duty, area and lmtd (an exchanger
// given U and its utility), T_peak (the stage's hottest
// point; T_max names only the catalyst's limit), T_min, conversion,
// inlet.T, inlet.P, outlet.T, outlet.P, over_limit (K by which the stage
// passes the case's limits, 0 within; none for an exchanger or a case
// without limits), inlet.flows.SP, outlet.flows.SP, x_out.SP (outlet mole
// fraction), yield.P and selectivity.P (P a wanted product, cumulative from
// the feed; flowsheet/yields.hpp), equilibrium.X_ad_eq | T_ad_eq | X_eq_out | approach_X |
// approach_T, rate.RX (the mean rate of reaction RX over the stage: its
// extent, read from the stage's flows (kinetics/extents.hpp), per kg of
// catalyst or per m3 by the rate law's basis — a differential reactor's
// measured rate; empty for a set of dependent reactions).
#pragma once

#include <optional>
#include <span>
#include <string_view>

#include "rxtrain/flowsheet/train.hpp"

namespace rxtrain {

enum class ResultScope {
  Train,        // the train's outlet
  Stage,        // one number of a stage
  Flow,         // a species' flow at a stage's inlet or outlet (name + ".SP")
  Equilibrium,  // the stage's equilibrium record (needs the equilibrium views)
  Product,      // a wanted product's yield or selectivity (name + ".P", P in `products:`)
  Reaction,     // a reaction's mean rate over the stage (name + ".RX"; index: the reaction)
};

struct ResultFieldSpec {
  std::string_view name;  // "T_peak", "inlet.T", "inlet.flows", "equilibrium.X_ad_eq"
  std::string_view unit;  // SI ("K", "m3", "1/h"; GHSV, WHSV, LHSV as in the JSON); "-": a fraction
  ResultScope scope;
  // The value; nullopt where it does not apply (e.g. a liquid stage's
  // GHSV, a stage without an equilibrium record). `stage` is null for the
  // train's own fields; `species` indexes flows.
  std::optional<double> (*get)(const TrainResult& r, const StageResult* stage, int species);
};

// A reactor's mean rate of each reaction over it, in the order of
// r.reactions (mol/(kg*s) or mol/(m3*s) by each rate law's basis); nullopt
// for an exchanger or quench, or when the reactions are dependent.
std::optional<std::vector<double>> mean_rates(const TrainResult& r, const StageResult& s);

// The SI unit of a field at an index: the spec's own, but for a
// reaction's rate, mol/(kg*s) or mol/(m3*s) by its basis.
std::string_view result_field_unit(const ResultFieldSpec& f, const Stoichiometry& s, int index);

// X, T_out.
std::span<const ResultFieldSpec> train_result_fields();
// The stage fields above, in that order.
std::span<const ResultFieldSpec> stage_result_fields();

}  // namespace rxtrain
