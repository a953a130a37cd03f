// Numeric fields of a case addressed by their YAML path, for sweeps and
// Monte Carlo studies: "feed.T", "train.R1.volume",
// "reactions.isom.rate.Ea". The table is built once from the loaded Case;
// a CaseEditor then writes chosen fields into a working copy of the case
// for each run, with no YAML parsed and no validation repeated beyond each
// field's own range.
//
// Paths (each offered only where the case has the field):
//   feed.T  feed.P  feed.flow            K, Pa, mol/s (flow scales every
//                                        species' flow, keeping composition)
//   feed.flows.SP                        mol/s, one species' flow
//   feed.composition.SP                  mole fraction; the other species
//                                        keep their ratios and the total flow
//   train.ID.volume | catalyst | bulk_density | target.conversion
//                                        reactors, as given in the case; with
//                                        catalyst, volume = catalyst / bulk_density
//   train.ID.T_out | duty                exchangers, as given
//   reactions.ID.rate.A | rate.Ea | rate.T_ref
//   reactions.ID.equilibrium.K | equilibrium.dH   (van 't Hoff form)
//   species.ID.density                   liquid phase
// Species thermo data are not offered: the loader derives reaction heats
// and equilibrium data from them, which a single edited number would leave
// inconsistent.
#pragma once

#include <cstddef>
#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"

namespace rxtrain::sweep {

enum class PathField {
  FeedT,
  FeedP,
  FeedFlow,
  FeedFlowOf,
  FeedFraction,
  Volume,
  Catalyst,
  BulkDensity,
  StageTarget,
  ExchangerTout,
  ExchangerDuty,
  RateA,
  RateEa,
  RateTref,
  EquilibriumK,
  EquilibriumDH,
  Density,
};

// One addressable field: its path, the SI unit the loader reads it in and
// the values it may take (the loader's own checks).
struct CasePath {
  std::string name;
  SiUnit unit;                   // dimension checked when a value is given with a unit
  bool chemistry_units = false;  // plain cal = thermochemical calorie (as the loader)
  PathField field = PathField::FeedT;
  int index = -1;  // species, stage or reaction index the field belongs to
  double lo = -std::numeric_limits<double>::infinity();
  double hi = std::numeric_limits<double>::infinity();
  bool lo_open = false;  // lo itself is excluded
  bool hi_open = false;

  bool contains(double v) const;
  std::string domain_text() const;  // e.g. "above 0", "between 0 and 1"
};

class CasePathTable {
 public:
  explicit CasePathTable(const Case& base);

  const std::vector<CasePath>& paths() const { return paths_; }
  const CasePath& at(std::size_t i) const { return paths_[i]; }
  std::vector<std::string> names() const;
  // Index of `name`. Throws InputError located at `option` (e.g. "--vary")
  // naming the path and the nearest valid one, or listing them.
  std::size_t find(std::string_view name, const std::string& option) const;
  // The base case's value of path i (SI).
  double base_value(std::size_t i, const Case& base) const;
  // Whether the case's train holds a stirred tank (the only stage that
  // takes warm starts; see Study::chain).
  bool has_stirred_tank() const { return has_stirred_tank_; }

 private:
  std::vector<CasePath> paths_;
  bool has_stirred_tank_ = false;
};

// Writes values of chosen paths into a working copy of the base case.
class CaseEditor {
 public:
  // `which` are table indices, in the order apply() receives values.
  CaseEditor(const CasePathTable& table, std::vector<std::size_t> which);

  // Makes `work` the base case with each chosen path set to values[i] (SI).
  // `work` must start as a copy of `base` and be passed back each run;
  // only what the chosen paths touch is reset and rewritten (the feed, the
  // edited stages, the mechanism when a reaction or species is edited).
  // Throws InputError (located at the case file) when a value lies outside
  // its field's range or leaves the key species without feed flow.
  void apply(const Case& base, std::span<const double> values, Case& work) const;

 private:
  std::vector<CasePath> paths_;  // the chosen paths, in value order
  bool edits_mechanism_ = false;
};

}  // namespace rxtrain::sweep
