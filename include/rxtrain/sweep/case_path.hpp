// Numeric fields of a case addressed by their YAML path, for sweeps and
// Monte Carlo studies: "feed.T", "train.R1.volume",
// "reactions.isom.rate.Ea". The paths, their units, ranges and how each
// is set come from the case's field table (case/case_fields.hpp); this
// table holds those of them a sweep offers. A CaseEditor then writes
// chosen fields into a working copy of the case for each run, with no
// YAML parsed, and checks the edited case as the loader checks a file
// (validate_case).
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
//   train.ID.heat.UA | heat.coolant.T | heat_capacity
//                                        stirred tanks, as given
//   reactions.ID.rate.A | rate.Ea | rate.T_ref | rate.orders.SP
//   reactions.ID.rate.adsorption.exponent | rate.adsorption.terms.N.K | .dH | .T_ref
//   reactions.ID.equilibrium.K | equilibrium.dH   (van 't Hoff form)
//   species.ID.density                   liquid phase
// Species thermo data and molar masses are not offered: the loader derives
// reaction heats and equilibrium data from them, which a single edited
// number would leave inconsistent (SweepUse in case_fields.hpp).
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/case/case_fields.hpp"

namespace rxtrain::sweep {

// One addressable field: its path, the SI unit the loader reads it in and
// the values it may take (the loader's own range).
using CasePath = CaseField;

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
  // its field's range, or the edited case fails validate_case (e.g. it
  // leaves the key species without feed flow).
  void apply(const Case& base, std::span<const double> values, Case& work) const;

 private:
  std::vector<CasePath> paths_;  // the chosen paths, in value order
};

}  // namespace rxtrain::sweep
