#include "rxtrain/case/case_fields.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <functional>
#include <variant>

namespace rxtrain {

namespace {

using K = CaseFieldKind;
using O = FieldOwner;
using S = SweepUse;

// The table. Rows of one owner stand together; case_fields() lists each
// run of rows owner by owner (every species' feed fields, then every
// stage's fields, ...), which is also the order sweeps list their paths.
constexpr std::array kSpecs{
    CaseFieldSpec{K::FeedT, O::Case, "feed.T", "feed T", "K", "a temperature", false, kPositive,
                  S::Offered},
    CaseFieldSpec{K::FeedP, O::Case, "feed.P", "feed P", "Pa", "a pressure", false, kPositive,
                  S::Offered},
    CaseFieldSpec{K::FeedFlow, O::Case, "feed.flow", "feed flow", "mol/s", "a molar flow", false,
                  kPositive, S::Offered},
    CaseFieldSpec{K::FeedFlowOf, O::Species, "feed.flows.{}", "feed flow of {}", "mol/s",
                  "a molar flow", false, kNonNegative, S::Offered},
    CaseFieldSpec{K::FeedFraction, O::Species, "feed.composition.{}", "mole fraction of {}", "1",
                  "a plain number", false, kUnitInterval, S::Offered},
    CaseFieldSpec{K::Catalyst, O::Stage, "train.{}.catalyst", "catalyst of stage {}", "kg",
                  "a mass", false, kPositive, S::Offered},
    CaseFieldSpec{K::Volume, O::Stage, "train.{}.volume", "volume of stage {}", "m3", "a volume",
                  false, kPositive, S::Offered},
    CaseFieldSpec{K::StageTarget, O::Stage, "train.{}.target.conversion",
                  "target conversion of stage {}", "1", "a plain number", false, kOpenUnitInterval,
                  S::Offered},
    CaseFieldSpec{K::BulkDensity, O::Stage, "train.{}.bulk_density", "bulk_density of stage {}",
                  "kg/m3", "a density", false, kPositive, S::Offered},
    CaseFieldSpec{K::Activity, O::Stage, "train.{}.activity", "activity of stage {}", "1",
                  "a plain number", false, kPositive, S::Offered},
    CaseFieldSpec{K::TankUA, O::Stage, "train.{}.heat.UA", "UA of stage {}", "W/K",
                  "a heat-transfer capacity (U times area)", false, kPositive, S::Offered},
    CaseFieldSpec{K::CoolantT, O::Stage, "train.{}.heat.coolant.T", "T of the coolant of stage {}",
                  "K", "a temperature", false, kPositive, S::Offered},
    CaseFieldSpec{K::TankHeatCapacity, O::Stage, "train.{}.heat_capacity",
                  "heat_capacity of stage {}", "J/K", "a heat capacity", false, kNonNegative,
                  S::Offered},
    CaseFieldSpec{K::ExchangerTout, O::Stage, "train.{}.T_out", "T_out of stage {}", "K",
                  "a temperature", false, kPositive, S::Offered},
    CaseFieldSpec{K::ExchangerDuty, O::Stage, "train.{}.duty", "duty of stage {}", "W", "a power",
                  false, kAnyValue, S::Offered},
    CaseFieldSpec{K::InterchangerUA, O::Stage, "train.{}.UA", "UA of interchanger {}", "W/K",
                  "a heat-transfer capacity (U times area)", false, kPositive, S::Offered},
    CaseFieldSpec{K::BedDiameter, O::Stage, "train.{}.bed.diameter", "bed diameter of stage {}",
                  "m", "a length", false, kPositive, S::Offered},
    CaseFieldSpec{K::TubeDiameter, O::Stage, "train.{}.tubes.diameter", "tube diameter of stage {}",
                  "m", "a length", false, kPositive, S::Offered},
    CaseFieldSpec{K::BedVoid, O::Stage, "train.{}.bed.void_fraction",
                  "bed void_fraction of stage {}", "1", "a plain number", false, kOpenUnitInterval,
                  S::Offered},
    CaseFieldSpec{K::TubeVoid, O::Stage, "train.{}.tubes.void_fraction",
                  "tubes void_fraction of stage {}", "1", "a plain number", false,
                  kOpenUnitInterval, S::Offered},
    CaseFieldSpec{K::BedDPmax, O::Stage, "train.{}.bed.dP_max", "bed dP_max of stage {}", "Pa",
                  "a pressure", false, kPositive, S::Offered},
    CaseFieldSpec{K::TubeDPmax, O::Stage, "train.{}.tubes.dP_max", "tubes dP_max of stage {}", "Pa",
                  "a pressure", false, kPositive, S::Offered},
    CaseFieldSpec{K::PelletSize, O::Stage, "train.{}.pellet.size", "pellet size of stage {}", "m",
                  "a length", false, kPositive, S::Offered},
    CaseFieldSpec{K::HeatU, O::Stage, "train.{}.heat.U", "U of stage {}", "W/(m2*K)",
                  "a heat transfer coefficient", false, kPositive, S::Offered},
    CaseFieldSpec{K::CoolantTin, O::Stage, "train.{}.heat.coolant.T_in", "coolant T_in of stage {}",
                  "K", "a temperature", false, kPositive, S::Offered},
    CaseFieldSpec{K::QuenchShare, O::Stage, "train.{}.share", "share of stage {}", "1",
                  "a plain number", false, kOpenUnitInterval, S::Offered},
    CaseFieldSpec{K::RateA, O::Reaction, "reactions.{}.rate.A", "A of reaction {}", "",
                  "a rate constant", false, kPositive, S::Offered},
    CaseFieldSpec{K::RateEa, O::Reaction, "reactions.{}.rate.Ea", "Ea of reaction {}", "J/mol",
                  "an energy per mole", true, kAnyValue, S::Offered},
    CaseFieldSpec{K::RateTref, O::Reaction, "reactions.{}.rate.T_ref", "T_ref of reaction {}", "K",
                  "a temperature", false, kPositive, S::Offered},
    CaseFieldSpec{K::AdsorptionExponent, O::Reaction, "reactions.{}.rate.adsorption.exponent",
                  "exponent of adsorption of rate of reaction {}", "1", "a plain number", false,
                  kPositive, S::Offered},
    CaseFieldSpec{K::EquilibriumK, O::Reaction, "reactions.{}.equilibrium.K",
                  "K of equilibrium of reaction {}", "1", "a plain number", false, kPositive,
                  S::Offered},
    CaseFieldSpec{K::EquilibriumT, O::Reaction, "reactions.{}.equilibrium.T",
                  "T of equilibrium of reaction {}", "K", "a temperature", false, kPositive,
                  S::NotOffered},
    CaseFieldSpec{K::EquilibriumDH, O::Reaction, "reactions.{}.equilibrium.dH",
                  "dH of equilibrium of reaction {}", "J/mol", "an energy per mole", true,
                  kAnyValue, S::Offered},
    CaseFieldSpec{K::RateOrder, O::ReactionSpecies, "reactions.{0}.rate.orders.{1}",
                  "order of {1} in rate of reaction {0}", "1", "a plain number", false,
                  kNonNegative, S::Offered},
    CaseFieldSpec{K::AdsorptionK, O::AdsorptionTerm, "reactions.{0}.rate.adsorption.terms.{1}.K",
                  "K of adsorption term {2} of rate of reaction {0}", "", "an adsorption constant",
                  false, kPositive, S::Offered},
    CaseFieldSpec{K::AdsorptionDH, O::AdsorptionTerm, "reactions.{0}.rate.adsorption.terms.{1}.dH",
                  "dH of adsorption term {2} of rate of reaction {0}", "J/mol",
                  "an energy per mole", true, kAnyValue, S::Offered},
    CaseFieldSpec{K::AdsorptionTref, O::AdsorptionTerm,
                  "reactions.{0}.rate.adsorption.terms.{1}.T_ref",
                  "T_ref of adsorption term {2} of rate of reaction {0}", "K", "a temperature",
                  false, kPositive, S::Offered},
    CaseFieldSpec{K::MolarMass, O::Species, "species.{}.mw", "mw of species {}", "kg/mol",
                  "a molar mass", false, kPositive, S::NotOffered},
    CaseFieldSpec{K::Density, O::Species, "species.{}.density", "density of species {}", "kg/m3",
                  "a density", false, kPositive, S::LiquidPhase},
    CaseFieldSpec{K::TrainTarget, O::Case, "target.conversion", "target conversion", "1",
                  "a plain number", false, kOpenUnitInterval, S::NotOffered},
    CaseFieldSpec{K::Viscosity, O::Case, "fluid.viscosity", "fluid viscosity", "Pa*s",
                  "a dynamic viscosity", false, kPositive, S::Offered},
    CaseFieldSpec{K::ViscosityValue, O::Case, "fluid.viscosity.value",
                  "value of the fluid viscosity", "Pa*s", "a dynamic viscosity", false, kPositive,
                  S::Offered},
    CaseFieldSpec{K::LimitTmax, O::Case, "limits.T_max", "T_max of limits", "K", "a temperature",
                  false, kPositive, S::NotOffered},
    CaseFieldSpec{K::LimitTinMin, O::Case, "limits.T_in_min", "T_in_min of limits", "K",
                  "a temperature", false, kPositive, S::NotOffered},
};

const ReactorSpec* reactor(const Case& c, int k) { return std::get_if<ReactorSpec>(&c.train[k]); }
const QuenchSpec* quench(const Case& c, int k) { return std::get_if<QuenchSpec>(&c.train[k]); }
const InterchangerSpec* interchanger(const Case& c, int k) {
  return std::get_if<InterchangerSpec>(&c.train[k]);
}
const ExchangerSpec* exchanger(const Case& c, int k) {
  return std::get_if<ExchangerSpec>(&c.train[k]);
}
// A reactor's bed when it is `bed` (vessel) or `tubes`, with a diameter
// given or found.
const BedGeometry* bed(const Case& c, int k, bool tubes) {
  const ReactorSpec* r = reactor(c, k);
  if (!r || !r->geometry || (r->geometry->tubes > 0) != tubes) return nullptr;
  return &*r->geometry;
}
// The first reactor's viscosity: the loader copies the case's one law to
// every reactor.
const ViscosityLaw* viscosity(const Case& c) {
  for (int k = 0; k < static_cast<int>(c.train.size()); ++k)
    if (const ReactorSpec* r = reactor(c, k); r && r->viscosity) return &*r->viscosity;
  return nullptr;
}

constexpr int kTerms = static_cast<int>(Adsorption::kMaxTerms);

// Reaction j and species i of an owner index j * n_species + i.
std::pair<int, int> reaction_species(const Case& c, int k) {
  const int n = c.mechanism.n_species();
  return {k / n, k % n};
}
// Reaction j and term t of an owner index j * kMaxTerms + t; the term,
// or null where reaction j has fewer terms.
const AdsorptionTerm* term(const Case& c, int k) {
  const auto& a = c.mechanism.reactions()[k / kTerms].rate.adsorption;
  const auto t = static_cast<std::size_t>(k % kTerms);
  return a && t < a->terms.size() ? &a->terms[t] : nullptr;
}

// Whether the case holds field `kind` of owner `k`.
bool present(K kind, const Case& c, int k) {
  const Mechanism& m = c.mechanism;
  switch (kind) {
    case K::FeedT:
    case K::FeedP:
    case K::FeedFlow:
    case K::FeedFlowOf:
    case K::FeedFraction:
    case K::RateA:
    case K::RateEa:
      return true;
    case K::Catalyst:
      return reactor(c, k) && reactor(c, k)->catalyst_mass;
    case K::Volume:
      return reactor(c, k) && reactor(c, k)->volume && !reactor(c, k)->catalyst_mass;
    case K::StageTarget:
      return reactor(c, k) && reactor(c, k)->target_conversion;
    case K::BulkDensity:
      return reactor(c, k) && reactor(c, k)->bulk_density;
    case K::Activity:
      return reactor(c, k) != nullptr;
    case K::TankUA:
      return reactor(c, k) && reactor(c, k)->tank_cooling;
    case K::TankHeatCapacity:
      return reactor(c, k) && reactor(c, k)->heat_capacity;
    case K::ExchangerTout:
      return exchanger(c, k) && exchanger(c, k)->T_out;
    case K::ExchangerDuty:
      return exchanger(c, k) && exchanger(c, k)->duty;
    case K::InterchangerUA:
      return interchanger(c, k) != nullptr;
    case K::BedDiameter:
      return bed(c, k, false) && !bed(c, k, false)->dP_max;
    case K::TubeDiameter:
      return bed(c, k, true) && !bed(c, k, true)->dP_max;
    case K::BedVoid:
      return bed(c, k, false) != nullptr;
    case K::TubeVoid:
      return bed(c, k, true) != nullptr;
    case K::BedDPmax:
      return bed(c, k, false) && bed(c, k, false)->dP_max;
    case K::TubeDPmax:
      return bed(c, k, true) && bed(c, k, true)->dP_max;
    case K::PelletSize:
      return reactor(c, k) && reactor(c, k)->pellet;
    case K::Viscosity:
      return viscosity(c) && viscosity(c)->exponent == 0;
    case K::ViscosityValue:
      return viscosity(c) && viscosity(c)->exponent != 0;
    case K::QuenchShare:
      return quench(c, k) && quench(c, k)->share;
    case K::HeatU:
      return reactor(c, k) && reactor(c, k)->cooling;
    case K::CoolantT:
      return reactor(c, k) && (reactor(c, k)->tank_cooling ||
                               (reactor(c, k)->cooling &&
                                reactor(c, k)->cooling->direction == CoolantFlow::Constant));
    case K::CoolantTin:
      return reactor(c, k) && reactor(c, k)->cooling &&
             reactor(c, k)->cooling->direction != CoolantFlow::Constant;
    case K::RateTref:
      return m.reactions()[k].rate.T_ref.has_value();
    case K::AdsorptionExponent:
      return m.reactions()[k].rate.adsorption.has_value();
    case K::RateOrder: {
      // A reactant's order always (the default law is elementary in the
      // reactants), any other species' where the law gives it one.
      const auto [j, i] = reaction_species(c, k);
      const Reaction& rx = m.reactions()[j];
      return rx.nu[i] < 0 || rx.rate.orders[i] != 0;
    }
    case K::AdsorptionK:
    case K::AdsorptionDH:
      return term(c, k) != nullptr;
    case K::AdsorptionTref:
      return term(c, k) && term(c, k)->T_ref.has_value();
    case K::EquilibriumK:
    case K::EquilibriumT:
    case K::EquilibriumDH:
      return m.reactions()[k].equilibrium.kind == EquilibriumSource::Kind::VantHoff;
    case K::MolarMass:
      return m.species()[k].mw.has_value();
    case K::Density:
      return m.species()[k].density.has_value();
    case K::TrainTarget:
      return c.target_conversion.has_value();
    case K::LimitTmax:
      return c.limits.T_max.has_value();
    case K::LimitTinMin:
      return c.limits.T_in_min.has_value();
  }
  return false;
}

int owner_count(O owner, const Case& c) {
  switch (owner) {
    case O::Case:
      return 1;
    case O::Species:
      return c.mechanism.n_species();
    case O::Stage:
      return static_cast<int>(c.train.size());
    case O::Reaction:
      return c.mechanism.n_reactions();
    case O::ReactionSpecies:
      return c.mechanism.n_reactions() * c.mechanism.n_species();
    case O::AdsorptionTerm:
      return c.mechanism.n_reactions() * kTerms;
  }
  return 0;
}

// The arguments of a row's path and label: the owner's id; for a rate
// law's species or an adsorption term the reaction's id, then the
// species' id or the term's index from 0, then the term's number from 1.
struct OwnerIds {
  std::string id, sub, number;
};

OwnerIds owner_ids(O owner, const Case& c, int k) {
  const auto& reactions = c.mechanism.reactions();
  switch (owner) {
    case O::Case:
      return {};  // k is -1
    case O::Species:
      return {c.mechanism.species()[k].id, "", ""};
    case O::Stage:
      return {stage_id(c.train[k]), "", ""};
    case O::Reaction:
      return {reactions[k].id, "", ""};
    case O::ReactionSpecies: {
      const auto [j, i] = reaction_species(c, k);
      return {reactions[j].id, c.mechanism.species()[i].id, ""};
    }
    case O::AdsorptionTerm:
      return {reactions[k / kTerms].id, std::to_string(k % kTerms), std::to_string(k % kTerms + 1)};
  }
  return {};
}

}  // namespace

bool FieldRange::contains(double v) const {
  if (!std::isfinite(v)) return false;
  if (lo_open ? !(v > lo) : !(v >= lo)) return false;
  if (hi_open ? !(v < hi) : !(v <= hi)) return false;
  return true;
}

std::string FieldRange::text() const {
  const bool has_lo = std::isfinite(lo), has_hi = std::isfinite(hi);
  if (has_lo && has_hi)
    return fmt::format("{} {:g} and {} {:g}", lo_open ? "above" : "at least", lo,
                       hi_open ? "below" : "at most", hi);
  if (has_lo) return fmt::format("{} {:g}", lo_open ? "above" : "at least", lo);
  if (has_hi) return fmt::format("{} {:g}", hi_open ? "below" : "at most", hi);
  return "finite";
}

std::span<const CaseFieldSpec> case_field_specs() { return kSpecs; }

const CaseFieldSpec& case_field_spec(CaseFieldKind kind) {
  for (const auto& s : kSpecs)
    if (s.kind == kind) return s;
  return kSpecs.front();  // unreachable: every kind has its row (case_fields_test)
}

SiUnit rate_constant_unit(const RateLaw& law, std::string description) {
  double total_order = 0;
  for (double o : law.orders) total_order += o;
  return SiUnit::per_power(law.basis == RateBasis::Catalyst ? "mol/(kg*s)" : "mol/(m3*s)",
                           law.driving == Driving::Pressure ? "Pa" : "mol/m3", total_order,
                           std::move(description));
}

SiUnit adsorption_constant_unit(Driving driving, const AdsorptionTerm& term,
                                std::string description) {
  double total = 0;
  for (double m : term.powers) total += m;
  return SiUnit::per_power("1", driving == Driving::Pressure ? "Pa" : "mol/m3", total,
                           std::move(description));
}

int field_reaction(const Case& c, const CaseFieldSpec& spec, int index) {
  switch (spec.owner) {
    case O::Reaction:
      return index;
    case O::ReactionSpecies:
      return reaction_species(c, index).first;
    case O::AdsorptionTerm:
      return index / kTerms;
    default:
      return -1;
  }
}

std::string out_of_range_text(std::string_view label, const FieldRange& range, std::string_view si,
                              double v, std::string_view given) {
  // Plain numbers show their value; a quantity the text as written, or
  // for a case built in code the SI value with its unit.
  std::string shown;
  if (!std::isfinite(v) && given.empty())
    shown = "a value that is not a finite number";
  else if (si == "1")
    shown = fmt::format("{:g}", v);
  else if (!given.empty())
    shown = fmt::format("\"{}\"", given);
  else if (si.empty())
    shown = fmt::format("{:g} (SI)", v);  // a rate constant: its unit depends on its law
  else
    shown = fmt::format("{:g} {}", v, si);
  if (range == kPositive && si == "K")
    return given.empty()
               ? fmt::format("{} must be above absolute zero, got {}", label, shown)
               : fmt::format("{} must be above absolute zero, got {} ({:g} K)", label, shown, v);
  if (range == kPositive) return fmt::format("{} must be positive, got {}", label, shown);
  if (range == kNonNegative) return fmt::format("{} must not be negative, got {}", label, shown);
  if (range == kUnitInterval) return fmt::format("{} must lie in [0, 1], got {}", label, shown);
  if (range == kOpenUnitInterval)
    return fmt::format("{} must lie strictly between 0 and 1, got {}", label, shown);
  return fmt::format("{} must be {}, got {}", label, range.text(), shown);
}

void for_each_case_field(const Case& c,
                         const std::function<void(const CaseFieldSpec&, int)>& visit) {
  for (std::size_t s = 0; s < kSpecs.size();) {
    std::size_t e = s;
    while (e < kSpecs.size() && kSpecs[e].owner == kSpecs[s].owner) ++e;
    const int n = owner_count(kSpecs[s].owner, c);
    for (int k = 0; k < n; ++k)
      for (std::size_t i = s; i < e; ++i)
        if (present(kSpecs[i].kind, c, k)) visit(kSpecs[i], kSpecs[i].owner == O::Case ? -1 : k);
    s = e;
  }
}

std::string case_field_text(const CaseFieldSpec& spec, double v, int digits) {
  if (spec.si.empty() || spec.plain()) return fmt::format("{:.{}g}", v, digits);
  return fmt::format("{:.{}g} {}", v, digits, spec.si);
}

std::vector<CaseField> case_fields(const Case& c) {
  std::vector<CaseField> out;
  for_each_case_field(c,
                      [&](const CaseFieldSpec& s, int k) { out.push_back(case_field(c, s, k)); });
  return out;
}

CaseField case_field(const Case& c, const CaseFieldSpec& s, int k) {
  CaseField f;
  const OwnerIds ids = owner_ids(s.owner, c, k);
  f.name = fmt::format(fmt::runtime(s.path), ids.id, ids.sub, ids.number);
  f.label = fmt::format(fmt::runtime(s.label), ids.id, ids.sub, ids.number);
  f.spec = &s;
  f.index = k;
  if (s.kind == K::RateA)
    f.unit = rate_constant_unit(c.mechanism.reactions()[k].rate);
  else if (s.kind == K::AdsorptionK)
    f.unit =
        adsorption_constant_unit(c.mechanism.reactions()[k / kTerms].rate.driving, *term(c, k));
  else
    f.unit = SiUnit::of(std::string(s.si), std::string(s.quantity));
  f.chemistry_units = s.chemistry_units;
  f.range = s.range;
  return f;
}

bool offered_to_sweeps(const CaseField& f, const Case& c) {
  switch (f.spec->sweep) {
    case SweepUse::Offered:
      return true;
    case SweepUse::LiquidPhase:
      return c.mechanism.phase() == Phase::Liquid;
    case SweepUse::NotOffered:
      return false;
  }
  return false;
}

bool CaseField::in_mechanism() const {
  return spec->owner == O::Reaction || spec->owner == O::ReactionSpecies ||
         spec->owner == O::AdsorptionTerm || spec->kind == K::MolarMass || spec->kind == K::Density;
}

double CaseField::get(const Case& c) const { return case_field_value(c, *spec, index); }

double case_field_value(const Case& c, const CaseFieldSpec& spec, int index) {
  const Mechanism& m = c.mechanism;
  const auto& F = c.feed.F;
  switch (spec.kind) {
    case K::FeedT:
      return c.feed.T;
    case K::FeedP:
      return c.feed.P;
    case K::FeedFlow:
      return c.feed.total_flow();
    case K::FeedFlowOf:
      return F[index];
    case K::FeedFraction:
      return F[index] / c.feed.total_flow();
    case K::Catalyst:
      return reactor(c, index)->catalyst_mass.value_or(0);
    case K::Volume:
      return reactor(c, index)->volume.value_or(0);
    case K::StageTarget:
      return reactor(c, index)->target_conversion.value_or(0);
    case K::BulkDensity:
      return reactor(c, index)->bulk_density.value_or(0);
    case K::Activity:
      return reactor(c, index)->activity;
    case K::TankUA:
      return reactor(c, index)->tank_cooling ? reactor(c, index)->tank_cooling->UA : 0.0;
    case K::TankHeatCapacity:
      return reactor(c, index)->heat_capacity.value_or(0);
    case K::ExchangerTout:
      return exchanger(c, index)->T_out.value_or(0);
    case K::ExchangerDuty:
      return exchanger(c, index)->duty.value_or(0);
    case K::InterchangerUA:
      return interchanger(c, index)->UA;
    case K::BedDiameter:
    case K::TubeDiameter:
      return reactor(c, index)->geometry->diameter;
    case K::BedVoid:
    case K::TubeVoid:
      return reactor(c, index)->geometry->void_fraction;
    case K::BedDPmax:
    case K::TubeDPmax:
      return reactor(c, index)->geometry->dP_max.value_or(0);
    case K::PelletSize:
      return reactor(c, index)->pellet->size;
    case K::Viscosity:
    case K::ViscosityValue:
      return viscosity(c)->value;
    case K::QuenchShare:
      return quench(c, index)->share.value_or(0);
    case K::HeatU:
      return reactor(c, index)->cooling->U;
    case K::CoolantT:
      if (const auto& t = reactor(c, index)->tank_cooling) return t->T_coolant;
      return reactor(c, index)->cooling->T;
    case K::CoolantTin:
      return reactor(c, index)->cooling->T;
    case K::RateA:
      return m.reactions()[index].rate.A;
    case K::RateEa:
      return m.reactions()[index].rate.Ea;
    case K::RateTref:
      return m.reactions()[index].rate.T_ref.value_or(0);
    case K::AdsorptionExponent:
      return m.reactions()[index].rate.adsorption->exponent;
    case K::RateOrder: {
      const auto [j, i] = reaction_species(c, index);
      return m.reactions()[j].rate.orders[i];
    }
    case K::AdsorptionK:
      return term(c, index)->K;
    case K::AdsorptionDH:
      return term(c, index)->dH;
    case K::AdsorptionTref:
      return term(c, index)->T_ref.value_or(0);
    case K::EquilibriumK:
      return m.reactions()[index].equilibrium.K_ref;
    case K::EquilibriumT:
      return m.reactions()[index].equilibrium.T_ref;
    case K::EquilibriumDH:
      return m.reactions()[index].equilibrium.dH;
    case K::MolarMass:
      return m.species()[index].mw.value_or(0);
    case K::Density:
      return m.species()[index].density.value_or(0);
    case K::TrainTarget:
      return c.target_conversion.value_or(0);
    case K::LimitTmax:
      return c.limits.T_max.value_or(0);
    case K::LimitTinMin:
      return c.limits.T_in_min.value_or(0);
  }
  return 0;
}

namespace {

// The mechanism's inputs, held apart while fields of it are edited so that
// it is rebuilt once (it precompiles per-reaction data from them).
struct MechanismInputs {
  std::vector<Species> species;
  std::vector<Reaction> reactions;
};

void set_feed_fraction(Case& c, const CaseField& f, double v) {
  auto& F = c.feed.F;
  const double total = c.feed.total_flow();
  const double rest = total - F[f.index];
  if (rest <= 0 && v < 1)
    throw InputError({c.file, 0, 0}, fmt::format("{} = {:.6g}: the feed holds no other species to "
                                                 "make up the remaining {:.6g}",
                                                 f.name, v, 1 - v));
  for (std::size_t i = 0; i < F.size(); ++i)
    if (static_cast<int>(i) != f.index) F[i] *= rest > 0 ? (1 - v) * total / rest : 0;
  F[f.index] = v * total;
}

void set_stage_field(Case& c, const CaseField& f, double v) {
  if (auto* q = std::get_if<QuenchSpec>(&c.train[f.index])) {
    q->share = v;  // QuenchShare, the quench's one field
    return;
  }
  if (auto* x = std::get_if<ExchangerSpec>(&c.train[f.index])) {
    (f.spec->kind == K::ExchangerTout ? x->T_out : x->duty) = v;
    return;
  }
  if (auto* x = std::get_if<InterchangerSpec>(&c.train[f.index])) {
    x->UA = v;  // InterchangerUA, the interchanger's one field
    return;
  }
  auto& r = std::get<ReactorSpec>(c.train[f.index]);
  switch (f.spec->kind) {
    case K::Catalyst:
      r.catalyst_mass = v;
      if (r.bulk_density) r.volume = v / *r.bulk_density;
      break;
    case K::Volume:
      r.volume = v;
      break;
    case K::StageTarget:
      r.target_conversion = v;
      break;
    case K::BulkDensity:
      // With catalyst given, the mass stays and the bed volume follows (as
      // the loader reads it); with volume given, the volume stays.
      r.bulk_density = v;
      if (r.catalyst_mass) r.volume = *r.catalyst_mass / v;
      break;
    case K::Activity:
      r.activity = v;
      break;
    case K::BedDiameter:
    case K::TubeDiameter:
      r.geometry->diameter = v;
      break;
    case K::BedVoid:
    case K::TubeVoid:
      r.geometry->void_fraction = v;
      break;
    case K::BedDPmax:
    case K::TubeDPmax:
      r.geometry->dP_max = v;
      break;
    case K::PelletSize:
      r.pellet->size = v;
      break;
    case K::TankUA:
      if (r.tank_cooling) r.tank_cooling->UA = v;
      break;
    case K::TankHeatCapacity:
      r.heat_capacity = v;
      break;
    case K::HeatU:
      r.cooling->U = v;
      break;
    case K::CoolantT:
      if (r.tank_cooling)
        r.tank_cooling->T_coolant = v;
      else
        r.cooling->T = v;
      break;
    case K::CoolantTin:
      r.cooling->T = v;
      break;
    default:
      break;
  }
}

void set_mechanism_field(MechanismInputs& m, const CaseField& f, double v) {
  if (f.spec->kind == K::MolarMass) {
    m.species[f.index].mw = v;
    return;
  }
  if (f.spec->kind == K::Density) {
    m.species[f.index].density = v;
    return;
  }
  if (f.spec->owner == O::ReactionSpecies) {  // RateOrder
    const auto n = static_cast<int>(m.species.size());
    m.reactions[f.index / n].rate.orders[f.index % n] = v;
    return;
  }
  if (f.spec->owner == O::AdsorptionTerm) {
    AdsorptionTerm& t = m.reactions[f.index / kTerms].rate.adsorption->terms[f.index % kTerms];
    if (f.spec->kind == K::AdsorptionK)
      t.K = v;
    else if (f.spec->kind == K::AdsorptionDH)
      t.dH = v;
    else
      t.T_ref = v;
    return;
  }
  Reaction& rx = m.reactions[f.index];
  switch (f.spec->kind) {
    case K::RateA:
      rx.rate.A = v;
      break;
    case K::RateEa:
      rx.rate.Ea = v;
      break;
    case K::RateTref:
      rx.rate.T_ref = v;
      break;
    case K::AdsorptionExponent:
      rx.rate.adsorption->exponent = v;
      break;
    case K::EquilibriumK:
      rx.equilibrium.K_ref = v;
      break;
    case K::EquilibriumT:
      rx.equilibrium.T_ref = v;
      break;
    case K::EquilibriumDH:
      rx.equilibrium.dH = v;
      break;
    default:
      break;
  }
}

}  // namespace

void set_case_fields(Case& c, std::span<const CaseField> fields, std::span<const double> values) {
  MechanismInputs mech;
  const bool edits_mechanism = std::any_of(fields.begin(), fields.end(),
                                           [](const CaseField& f) { return f.in_mechanism(); });
  if (edits_mechanism) {
    mech.species = c.mechanism.species();
    mech.reactions = c.mechanism.reactions();
  }
  for (std::size_t n = 0; n < fields.size(); ++n) {
    const CaseField& f = fields[n];
    const double v = values[n];
    if (!f.contains(v))
      throw InputError({c.file, 0, 0},
                       fmt::format("{} = {:.6g} (SI) is out of range: it must be {}", f.name, v,
                                   f.domain_text()));
    auto& F = c.feed.F;
    switch (f.spec->kind) {
      case K::FeedT:
        c.feed.T = v;
        break;
      case K::FeedP:
        c.feed.P = v;
        break;
      case K::FeedFlow: {
        const double total = c.feed.total_flow();
        for (double& x : F) x *= v / total;
        break;
      }
      case K::FeedFlowOf:
        F[f.index] = v;
        break;
      case K::FeedFraction:
        set_feed_fraction(c, f, v);
        break;
      case K::TrainTarget:
        c.target_conversion = v;
        break;
      case K::Viscosity:
      case K::ViscosityValue:
        for (auto& st : c.train)
          if (auto* r = std::get_if<ReactorSpec>(&st); r && r->viscosity) r->viscosity->value = v;
        break;
      case K::LimitTmax:
        c.limits.T_max = v;
        break;
      case K::LimitTinMin:
        c.limits.T_in_min = v;
        break;
      default:
        if (f.spec->owner == O::Stage)
          set_stage_field(c, f, v);
        else
          set_mechanism_field(mech, f, v);
        break;
    }
  }
  if (edits_mechanism)
    c.mechanism =
        Mechanism(c.mechanism.phase(), std::move(mech.species), std::move(mech.reactions));
}

}  // namespace rxtrain
