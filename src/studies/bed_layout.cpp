#include "rxtrain/studies/bed_layout.hpp"

#include <fmt/format.h>

#include <algorithm>

#include "rxtrain/base/error.hpp"
#include "rxtrain/models/equilibrium.hpp"

namespace rxtrain {

namespace {

const ReactorSpec* first_reactor(const Case& c) {
  for (const auto& sp : c.train)
    if (const auto* r = std::get_if<ReactorSpec>(&sp)) return r;
  return nullptr;
}

void require_target(const Case& c, LayoutStudy study) {
  if (c.target_conversion) return;
  if (c.target_outlet)
    throw InputError(c.target_where,
                     fmt::format("the train's target is an outlet purity; {} sizes beds to a "
                                 "conversion of the key: give \"target: {{conversion: X}}\" at "
                                 "the top level, or size the last stage to the purity "
                                 "(target: {{outlet: ...}} on the stage) and rate it with run",
                                 study == LayoutStudy::Staging ? "staging" : "optimize"));
  throw InputError(c.target_where,
                   study == LayoutStudy::Staging
                       ? "the case has no train-level target; staging sizes the beds to one: add "
                         "\"target: {conversion: 0.92}\" at the top level of the case (the "
                         "overall conversion of the key the whole train should reach)"
                       : "the case has no train-level target; optimize sizes the beds to one: add "
                         "\"target: {conversion: 0.92}\" at the top level of the case");
}

// Equilibrium is what limits an adiabatic bed, so both studies need the
// key's reaction reversible; the optimizer's model (the conversion alone
// fixes the composition) also needs it to be the only one.
void require_reversible_key(const Case& c, LayoutStudy study, int j, const std::string& key) {
  const Mechanism& mech = c.mechanism;
  const bool one = study == LayoutStudy::Staging || mech.n_reactions() == 1;
  if (one && j >= 0 && mech.reactions()[j].reversible) return;
  if (study == LayoutStudy::Staging) {
    const Reaction& rx = mech.reactions()[std::max(j, 0)];
    throw InputError(
        j < 0 ? SourceLocation{c.file, 0, 0} : rx.where,
        fmt::format("staging needs a reversible reaction that consumes the key {}: equilibrium "
                    "is what limits an adiabatic bed and sets the interstage cooling; reaction "
                    "{} ({}) is irreversible; write it with <=> and give its equilibrium",
                    key, rx.id, rx.equation));
  }
  const Reaction& rx = mech.reactions()[mech.n_reactions() > 1 ? 1 : std::max(j, 0)];
  throw InputError(
      rx.where,
      !one ? fmt::format("optimize handles one reversible reaction that consumes the key {}; "
                         "the case has {} reactions (this is the second): with one reaction "
                         "the conversion alone fixes the composition along the beds",
                         key, mech.n_reactions())
           : fmt::format("optimize needs a reversible reaction that consumes the key {}: "
                         "reaction {} ({}) is irreversible, so a single bed at T_max would "
                         "do; write it with <=> and give its equilibrium",
                         key, rx.id, rx.equation));
}

}  // namespace

LayoutCase check_layout_case(const Case& c, LayoutStudy study) {
  const Mechanism& mech = c.mechanism;
  require_target(c, study);
  if (study == LayoutStudy::Optimize && (!c.limits.T_max || !c.limits.T_in_min))
    throw InputError(c.limits.where,
                     "optimize needs the catalyst's temperature window: add \"limits: {T_max: "
                     "..., T_in_min: ...}\" at the top level of the case (the bounds of every "
                     "bed inlet and of every temperature in a bed)");
  // The studies design new beds for one catalyst activity (end of run,
  // say): the one every reactor gives. Reactors that differ leave no
  // single answer, so they are refused rather than one picked silently.
  const char* name = study == LayoutStudy::Staging ? "staging" : "optimize";
  LayoutCase lc;
  const ReactorSpec* set_by = nullptr;
  for (const auto& s : c.train) {
    if (const auto* x = std::get_if<InterchangerSpec>(&s))
      throw InputError(x->where, fmt::format("stage {} is a feed-effluent interchanger; {} designs "
                                             "beds with intercoolers in a once-through train and "
                                             "does not solve loops: rate the loop with run, and "
                                             "follow its steady states with stability",
                                             x->id, name));
    if (const auto* q = std::get_if<QuenchSpec>(&s))
      throw InputError(q->where, fmt::format("stage {} is a quench; {} designs adiabatic beds with "
                                             "intercoolers and does not take side streams yet: "
                                             "rate the quench converter with run",
                                             q->id, name));
    const auto* r = std::get_if<ReactorSpec>(&s);
    if (!r) continue;
    // The new beds' rates are the intrinsic ones: a case whose beds hold
    // pellets with effectiveness factors would be designed on other rates
    // than it runs with, so it is refused, not designed wrongly.
    if (r->pellet && !r->pellet->D_eff.empty())
      throw InputError(r->pellet->where,
                       fmt::format("stage {} gives its pellets a D_eff (effectiveness factors); "
                                   "{} designs new beds on the intrinsic rates and does not model "
                                   "pellets yet: remove D_eff to study the intrinsic design, or "
                                   "rate a layout with run or compare",
                                   r->id, name));
    if (!set_by) {
      set_by = r;
      lc.activity = r->activity;
    } else if (r->activity != lc.activity) {
      throw InputError(r->where,
                       fmt::format("stage {} gives activity {:g} but stage {} gives {:g}; {} "
                                   "designs every new bed for one activity: give each reactor "
                                   "the same",
                                   r->id, r->activity, set_by->id, lc.activity, name));
    }
  }
  lc.reaction = key_reaction(mech, c.key);
  lc.key = mech.species()[c.key].id;
  require_reversible_key(c, study, lc.reaction, lc.key);
  const ReactorSpec* first = first_reactor(c);
  if (study == LayoutStudy::Staging && !first)
    throw InputError({c.file, 0, 0},
                     "the train has no reactor; staging needs at least one (its bulk density "
                     "is given to the staged beds)");
  const Reaction& rx = mech.reactions()[lc.reaction];
  lc.per_catalyst = rx.rate.basis == RateBasis::Catalyst;
  if (study == LayoutStudy::Optimize && lc.per_catalyst && (!first || !first->bulk_density))
    throw InputError(first ? first->where : SourceLocation{c.file, 0, 0},
                     fmt::format("reaction {} has a per-catalyst rate: optimize gives the beds "
                                 "the first reactor's bulk_density; give it one (e.g. "
                                 "bulk_density: 750 kg/m3)",
                                 rx.id));
  lc.target = *c.target_conversion;
  lc.exothermic = mech.dH(lc.reaction, c.feed.T) < 0;
  lc.has_reactor = first != nullptr;
  if (first) {
    lc.bulk_density = first->bulk_density;
    lc.bed_where = first->where;
    lc.geometry = first->geometry;
    lc.pellet = first->pellet;
    lc.viscosity = first->viscosity;
  }
  return lc;
}

ReactorSpec bed_stage(const std::string& id, const std::optional<double>& bulk_density,
                      double activity, const SourceLocation& where) {
  ReactorSpec r;
  r.id = id;
  r.type = ReactorType::Pfr;
  r.heat = HeatMode::Adiabatic;
  r.bulk_density = bulk_density;
  r.activity = activity;
  r.where = where;
  return r;
}

ExchangerSpec interstage_stage(const std::string& id, double T_out, const SourceLocation& where) {
  ExchangerSpec x;
  x.id = id;
  x.T_out = T_out;
  x.where = where;
  return x;
}

std::vector<StageSpec> layout_stages(const BedLayout& layout, const SourceLocation& where) {
  std::vector<StageSpec> train;
  if (const auto& f = layout.feed_conditioning)
    train.push_back(interstage_stage(f->id, f->T_out, where));
  for (std::size_t n = 0; n < layout.beds.size(); ++n) {
    if (n > 0) {
      const Interstage& x = layout.interstages.at(n - 1);
      train.push_back(interstage_stage(x.id, x.T_out, where));
    }
    const Bed& b = layout.beds[n];
    ReactorSpec r = bed_stage(b.id, layout.bulk_density, layout.activity, where);
    // As the loader holds a bed given by its catalyst: both the mass and
    // the volume it fills.
    if (layout.by_mass) r.catalyst_mass = b.catalyst_mass;
    r.volume = b.volume;
    train.push_back(r);
  }
  return train;
}

}  // namespace rxtrain
