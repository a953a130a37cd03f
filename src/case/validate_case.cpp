// validate_case: the loader's checks on a case built in code. The ranges
// come from the field table (case_fields.cpp), as the loader's do; the
// rules across fields say what the loader says, at the entry the case
// keeps a location for (stages, reactions, target, limits), else at the
// case file.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <variant>

#include "rxtrain/case/case_fields.hpp"

namespace rxtrain {

namespace {

// A cross-check of catalyst / bulk_density against the volume: far looser
// than rounding, far tighter than any real inconsistency.
constexpr double kVolumeTolerance = 1e-9;

// A species the case gives no thermo: the loader leaves the default, a
// zero constant heat capacity (a given constant one must be positive).
bool has_thermo(const Species& s) {
  const auto* cp = std::get_if<CpConstant>(&s.thermo.model());
  return !(cp && cp->cp == 0 && !s.thermo.has_h_f());
}

struct Checker {
  const Case& c;

  [[noreturn]] void fail(const SourceLocation& at, const std::string& message) const {
    throw InputError(at, message);
  }
  SourceLocation file() const { return {c.file, 0, 0}; }
  SourceLocation where(const CaseField& f) const {
    switch (f.spec->owner) {
      case FieldOwner::Stage:
        return std::visit([](const auto& s) { return s.where; }, c.train[f.index]);
      case FieldOwner::Reaction:
      case FieldOwner::ReactionSpecies:
      case FieldOwner::AdsorptionTerm:
        return c.mechanism.reactions()[field_reaction(c, *f.spec, f.index)].where;
      case FieldOwner::Species:
        return file();
      case FieldOwner::Case:
        break;
    }
    if (f.spec->kind == CaseFieldKind::TrainTarget) return c.target_where;
    if (f.spec->kind == CaseFieldKind::LimitTmax || f.spec->kind == CaseFieldKind::LimitTinMin)
      return c.limits.where;
    return file();
  }

  void shapes() const;
  void ids() const;
  void mechanism() const;
  void ranges() const;
  void feed_and_key() const;
  void stages() const;
  void limits_and_basis() const;
  void adsorption(const Reaction& rx) const;
  void energy_and_catalyst() const;
  void bed(const ReactorSpec& r) const;
  void tank_heat(const ReactorSpec& r) const;
};

// The loader's checks of a stirred tank's cooling and heat capacity.
void Checker::tank_heat(const ReactorSpec& r) const {
  if ((r.tank_cooling || r.heat_capacity) && r.type != ReactorType::Cstr)
    fail(r.where, fmt::format("stage {}: cooling by UA and a vessel heat capacity belong to a "
                              "stirred tank (type: cstr)",
                              r.id));
  if (r.tank_cooling && !(r.tank_cooling->UA > 0 && std::isfinite(r.tank_cooling->UA)))
    fail(r.where,
         fmt::format("UA of stage {} must be positive, got {:g} W/K", r.id, r.tank_cooling->UA));
  if (r.tank_cooling &&
      !(r.tank_cooling->T_coolant > 0 && std::isfinite(r.tank_cooling->T_coolant)))
    fail(r.where, fmt::format("T of the coolant of stage {} must be above absolute zero, got "
                              "{:g} K",
                              r.id, r.tank_cooling->T_coolant));
  if (r.heat_capacity && !(*r.heat_capacity >= 0 && std::isfinite(*r.heat_capacity)))
    fail(r.where, fmt::format("heat_capacity of stage {} must not be negative, got {:g} J/K", r.id,
                              *r.heat_capacity));
}

// The loader's checks of a bed, its pellet and the fluid's viscosity.
void Checker::bed(const ReactorSpec& r) const {
  if (r.viscosity) {
    const ViscosityLaw& mu = *r.viscosity;
    if (!(mu.value > 0) || !(mu.exponent >= 0 && mu.exponent <= 3) ||
        (mu.exponent != 0 && !(mu.T_ref > 0)))
      fail(r.where, fmt::format("stage {}: the fluid viscosity needs a positive value, an exponent "
                                "from 0 to 3 and, with an exponent, a positive T",
                                r.id));
  }
  if (r.cooling) {
    // The loader's checks of a cooled stage: tubes, and a flowing
    // coolant's flow and cp (U and T are fields of the table).
    const CoolingSpec& cs = *r.cooling;
    if (r.type != ReactorType::Pfr || !r.geometry || r.geometry->tubes == 0)
      fail(cs.where, fmt::format("stage {} is cooled but gives no tubes; the heat goes through the "
                                 "tube walls",
                                 r.id));
    if (cs.direction != CoolantFlow::Constant &&
        !(cs.flow && *cs.flow > 0 && std::isfinite(*cs.flow) && cs.cp && *cs.cp > 0 &&
          std::isfinite(*cs.cp)))
      fail(cs.where, fmt::format("stage {}: a flowing coolant needs a positive flow and cp", r.id));
    if (cs.direction == CoolantFlow::Countercurrent && r.sized())
      fail(cs.where, fmt::format("stage {} has a countercurrent coolant: give its size, not a "
                                 "target",
                                 r.id));
  }
  if (!r.geometry) return;
  const BedGeometry& g = *r.geometry;
  if (r.type != ReactorType::Pfr)
    fail(g.where, fmt::format("stage {}: a bed or tubes describe a tubular stage only", r.id));
  if (!(g.void_fraction > 0 && g.void_fraction < 1))
    fail(g.where,
         fmt::format("stage {}: the bed's void_fraction must lie strictly between 0 and 1, "
                     "got {:g}",
                     r.id, g.void_fraction));
  if (g.tubes < 0) fail(g.where, fmt::format("stage {}: a negative tube count", r.id));
  if (g.dP_max ? !(*g.dP_max > 0) : !(g.diameter > 0))
    fail(g.where, fmt::format("stage {}: the bed needs a positive diameter (or diameter: auto with "
                              "a positive dP_max)",
                              r.id));
  if (g.dP_max && !(r.pellet && r.viscosity))
    fail(g.where, fmt::format("stage {}: diameter: auto sizes the bed to its pressure drop, which "
                              "needs a pellet and the fluid's viscosity",
                              r.id));
  if (r.pellet && !r.viscosity)
    fail(g.where, fmt::format("stage {} has a bed and a pellet, so its pressure drop is computed "
                              "(Ergun), which needs the fluid's viscosity",
                              r.id));
}

void Checker::shapes() const {
  const std::size_t n = c.mechanism.species().size();
  if (n == 0 || c.mechanism.reactions().empty())
    fail(file(), "the case needs at least one species and one reaction");
  if (c.feed.F.size() != n)
    fail(file(), fmt::format("the feed gives {} flows for {} species", c.feed.F.size(), n));
  if (c.key < 0 || static_cast<std::size_t>(c.key) >= n)
    fail(file(), fmt::format("the key species index {} is not a species of the case", c.key));
  for (const auto& rx : c.mechanism.reactions()) {
    bool sized = rx.nu.size() == n && rx.rate.orders.size() == n;
    if (const auto& a = rx.rate.adsorption)
      for (const auto& t : a->terms) sized = sized && t.powers.size() == n;
    if (!sized)
      fail(rx.where, fmt::format("reaction {} gives coefficients, orders or adsorption powers for "
                                 "other than the {} species of the case",
                                 rx.id, n));
  }
  if (c.train.empty())
    fail(file(),
         "train needs a list of at least one stage (- {type: pfr, id: R1, volume: 2.5 m3})");
}

void Checker::ids() const {
  std::map<std::string, std::string> seen;  // id -> kind
  const auto add = [&](const std::string& id, const char* kind, const SourceLocation& at) {
    const auto [it, fresh] = seen.try_emplace(id, kind);
    if (!fresh)
      fail(at, fmt::format("duplicate id \"{}\": already used by a {} (ids are unique across "
                           "species, reactions and stages)",
                           id, it->second));
  };
  for (const auto& s : c.mechanism.species()) add(s.id, "species", file());
  for (const auto& rx : c.mechanism.reactions()) add(rx.id, "reaction", rx.where);
  for (const auto& s : c.train)
    add(stage_id(s), "stage", std::visit([](const auto& x) { return x.where; }, s));
}

void Checker::mechanism() const {
  const auto& species = c.mechanism.species();
  if (c.mechanism.phase() == Phase::Liquid)
    for (const auto& s : species)
      if (!s.density || !s.mw)
        fail(file(), fmt::format("species {} needs {}: phase: liquid computes volumes from the "
                                 "molar mass and density of every species",
                                 s.id, s.density ? "mw or formula" : "density"));
  for (const auto& rx : c.mechanism.reactions()) {
    const bool has_eq = rx.equilibrium.kind != EquilibriumSource::Kind::None;
    if (rx.reversible && !has_eq)
      fail(rx.where, fmt::format("reversible reaction {} (<=>) is missing \"equilibrium\"", rx.id));
    if (!rx.reversible && has_eq)
      fail(rx.where,
           fmt::format("reaction {} is irreversible (=>), so it takes no equilibrium", rx.id));
    for (std::size_t i = 0; i < species.size(); ++i)
      if (!(rx.rate.orders[i] >= 0))
        fail(rx.where,
             fmt::format("order of {} in rate of reaction {} must not be negative (the rate "
                         "would be infinite where {} is absent), got {:g}",
                         species[i].id, rx.id, species[i].id, rx.rate.orders[i]));
    if (rx.rate.adsorption) adsorption(rx);
    if (rx.equilibrium.kind == EquilibriumSource::Kind::Thermo)
      for (std::size_t i = 0; i < species.size(); ++i)
        if (rx.nu[i] != 0 && (!species[i].thermo.has_h_f() || !species[i].thermo.has_s()))
          fail(rx.where,
               fmt::format("equilibrium of reaction {}: thermo needs h_f and s of every "
                           "species in the reaction; species {} has no {}",
                           rx.id, species[i].id, species[i].thermo.has_h_f() ? "s" : "h_f"));
  }
}

// The loader's rules for an adsorption block (docs/case-format.md).
void Checker::adsorption(const Reaction& rx) const {
  // K, dH, T_ref and the exponent are fields of the table (ranges()).
  const Adsorption& a = *rx.rate.adsorption;
  const auto& species = c.mechanism.species();
  const std::string ctx = "adsorption of rate of reaction " + rx.id;
  if (a.terms.empty() || a.terms.size() > Adsorption::kMaxTerms)
    fail(rx.where,
         fmt::format("{} needs 1 to {} terms, got {}", ctx, Adsorption::kMaxTerms, a.terms.size()));
  for (std::size_t t = 0; t < a.terms.size(); ++t) {
    const AdsorptionTerm& term = a.terms[t];
    const std::string where = fmt::format("term {} of {}", t + 1, ctx);
    double total = 0;
    for (std::size_t i = 0; i < species.size(); ++i) {
      if (!(term.powers[i] >= 0) || !std::isfinite(term.powers[i]))
        fail(rx.where, fmt::format("power of {} in {} must not be negative, got {:g}",
                                   species[i].id, where, term.powers[i]));
      total += term.powers[i];
    }
    if (!(total > 0))
      fail(rx.where, fmt::format("{} needs at least one species with a positive power", where));
  }
}

// Names are built only for a field out of range: a sweep checks every run.
// The flows come before the total and fractions made of them.
void Checker::ranges() const {
  for (const bool derived : {false, true})
    for_each_case_field(c, [&](const CaseFieldSpec& s, int k) {
      if (s.derived() != derived) return;
      const double v = case_field_value(c, s, k);
      if (s.range.contains(v)) return;
      const CaseField f = case_field(c, s, k);
      fail(where(f), out_of_range_text(f.label, f.range, s.si, v));
    });
}

void Checker::feed_and_key() const {
  if (!(c.feed.total_flow() > 0))
    fail(file(), "feed flows are all zero; the feed needs a positive total flow");
  const std::string& k = c.mechanism.species()[c.key].id;
  if (!(c.feed.F[c.key] > 0))
    fail(file(), fmt::format("key species {} has no flow in the feed; conversion is measured "
                             "against its feed flow",
                             k));
  const auto& rxs = c.mechanism.reactions();
  if (std::none_of(rxs.begin(), rxs.end(), [&](const Reaction& rx) { return rx.nu[c.key] < 0; }))
    fail(file(), fmt::format("key species {} is consumed by no reaction; the key is the reactant "
                             "whose conversion the train reports",
                             k));
}

void Checker::stages() const {
  if (!(c.quench_shares() < 1))
    fail(file(), fmt::format("the quench shares sum to {:g}; they must sum to less than 1",
                             c.quench_shares()));
  for (const auto& s : c.train) {
    if (const auto* x = std::get_if<ExchangerSpec>(&s)) {
      if (x->T_out.has_value() == x->duty.has_value())
        fail(x->where, fmt::format("stage {} needs exactly one of T_out and duty", x->id));
      continue;
    }
    if (const auto* x = std::get_if<InterchangerSpec>(&s)) {
      // The loader's checks of a loop (case.cpp, check_loop) on a case
      // built in code: a later stage to take the hot side from, one loop.
      std::size_t at = 0, hot = 0, count = 0;
      for (std::size_t k = 0; k < c.train.size(); ++k) {
        if (stage_id(c.train[k]) == x->id) at = k;
        if (stage_id(c.train[k]) == x->hot_from) hot = k;
        if (std::holds_alternative<InterchangerSpec>(c.train[k])) ++count;
      }
      if (count > 1)
        fail(x->where,
             fmt::format("the train holds {} interchangers; one loop is supported", count));
      if (!(hot > at))
        fail(x->where,
             fmt::format("stage {}: hot_from {} must name a stage after it", x->id, x->hot_from));
      continue;
    }
    if (const auto* q = std::get_if<QuenchSpec>(&s)) {
      if (q->share.has_value() == q->stream.has_value())
        fail(q->where, fmt::format("stage {} needs exactly one of share and stream", q->id));
      if (q->share && !(*q->share > 0 && *q->share < 1))
        fail(q->where, fmt::format("stage {}: share must lie strictly between 0 and 1", q->id));
      continue;
    }
    const auto& r = std::get<ReactorSpec>(s);
    const char* size = r.catalyst_mass ? "catalyst" : r.volume ? "volume" : nullptr;
    if (size && r.sized())
      fail(r.where, fmt::format("stage {} gives both {} and target; give exactly one of volume, "
                                "catalyst or target",
                                r.id, size));
    if (!size && !r.sized())
      fail(r.where,
           fmt::format("stage {} needs one of volume, catalyst (a mass, with bulk_density) or "
                       "target",
                       r.id));
    bed(r);
    tank_heat(r);
    if (!r.catalyst_mass) continue;
    if (!r.bulk_density)
      fail(r.where, fmt::format("stage {} gives catalyst but is missing \"bulk_density\", which "
                                "turns the catalyst mass into a bed volume",
                                r.id));
    const double V = *r.catalyst_mass / *r.bulk_density;
    if (!r.volume || !(std::abs(*r.volume - V) <= kVolumeTolerance * V))
      fail(r.where, fmt::format("stage {}: its volume ({:g} m3) is not its catalyst over its "
                                "bulk_density ({:g} m3)",
                                r.id, r.volume.value_or(0), V));
  }
}

void Checker::limits_and_basis() const {
  const auto& lim = c.limits;
  if (lim.T_max && lim.T_in_min && !(*lim.T_in_min < *lim.T_max))
    fail(lim.where,
         fmt::format("T_in_min of limits ({:.2f} K) must be below T_max ({:.2f} K): T_in_min is "
                     "the lowest useful bed inlet temperature, T_max the highest allowed in a bed",
                     *lim.T_in_min, *lim.T_max));
  const auto& species = c.mechanism.species();
  std::vector<int> seen;
  for (int i : c.space_velocity_basis) {
    if (i < 0 || i >= c.mechanism.n_species())
      fail(file(), fmt::format("space_velocity_basis names species index {}, not a species of "
                               "the case",
                               i));
    if (std::find(seen.begin(), seen.end(), i) != seen.end())
      fail(file(), fmt::format("species {} is named twice in space_velocity_basis", species[i].id));
    if (!species[i].mw)
      fail(file(), fmt::format("species {} in space_velocity_basis has no molar mass; WHSV and "
                               "LHSV on it need one (give mw or formula)",
                               species[i].id));
    seen.push_back(i);
  }
}

void Checker::energy_and_catalyst() const {
  const auto& species = c.mechanism.species();
  for (const auto& s : c.train) {
    const auto* r = std::get_if<ReactorSpec>(&s);
    if (r && r->heat == HeatMode::Isothermal) continue;
    // An adiabatic reactor or an exchanger closes an energy balance.
    for (const auto& sp : species)
      if (!has_thermo(sp))
        fail(file(), fmt::format("species {} is missing \"thermo\": stage {} is {} and needs the "
                                 "heat capacity of every species",
                                 sp.id, stage_id(s),
                                 !r                            ? "an exchanger"
                                 : r->type == ReactorType::Pfr ? "an adiabatic pfr"
                                                               : "an adiabatic cstr"));
    break;
  }
  for (const auto& s : c.train) {
    const auto* r = std::get_if<ReactorSpec>(&s);
    if (!r || r->bulk_density) continue;
    for (const auto& rx : c.mechanism.reactions())
      if (rx.rate.basis == RateBasis::Catalyst)
        fail(r->where, fmt::format("stage {} has no bulk_density, but reaction {} has a "
                                   "per-catalyst rate (per: catalyst)",
                                   r->id, rx.id));
  }
  for (const auto& sp : species) {
    if (!has_thermo(sp)) continue;
    const double cp = sp.thermo.cp(c.feed.T);
    if (!(cp > 0))
      fail(file(), fmt::format("thermo of species {} gives cp = {:g} J/(mol K) at the feed "
                               "temperature {:g} K; a heat capacity must be positive",
                               sp.id, cp, c.feed.T));
  }
}

}  // namespace

void validate_case(const Case& c) {
  const Checker check{c};
  check.shapes();
  check.ids();
  check.mechanism();
  check.ranges();  // the feed's total before its mole fractions (table order)
  check.feed_and_key();
  check.stages();
  check.limits_and_basis();
  check.energy_and_catalyst();
}

}  // namespace rxtrain
