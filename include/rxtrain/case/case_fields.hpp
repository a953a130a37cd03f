// The numeric fields of a case in one table: each field's path, the name
// messages give it, its SI unit and the values it may take. The loader
// takes its range checks and their wording from it, the sweep its paths
// (sweep/case_path.hpp), the case writers their keys and units, and
// validate_case() its checks of a case built in code. A new numeric case
// field is one row of the table here (and its parse in case/case.cpp).
//
// Paths, with ID the owner's id (docs/sweeps.md lists those offered to
// sweeps):
//   feed.T  feed.P  feed.flow  feed.flows.ID  feed.composition.ID
//   train.ID.volume | catalyst | target.conversion | bulk_density | activity | T_out | duty
//   train.ID.heat.UA | heat.coolant.T | heat_capacity      (stirred tanks, as given)
//   train.ID.heat.U | heat.coolant.T | heat.coolant.T_in  (cooled tubular stages)
//   train.ID.share  (a quench's share of the feed)
//   reactions.ID.rate.A | rate.Ea | rate.T_ref | rate.adsorption.exponent
//   reactions.ID.rate.orders.SP                 (every reactant, and any species with an order)
//   reactions.ID.rate.adsorption.terms.N.K | .dH | .T_ref   (N from 0, in the case's order)
//   reactions.ID.equilibrium.K | equilibrium.T | equilibrium.dH  (van 't Hoff form)
//   species.ID.mw | species.ID.density
//   target.conversion  limits.T_max  limits.T_in_min
#pragma once

#include <functional>
#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"

namespace rxtrain {

// The values a field may take: an interval, each end open or closed.
struct FieldRange {
  double lo = -std::numeric_limits<double>::infinity();
  double hi = std::numeric_limits<double>::infinity();
  bool lo_open = false;  // lo itself is excluded
  bool hi_open = false;

  bool contains(double v) const;  // finite and inside
  std::string text() const;       // "above 0", "at least 0 and at most 1", "finite"
  bool operator==(const FieldRange&) const = default;
};

inline constexpr double kFieldInf = std::numeric_limits<double>::infinity();
inline constexpr FieldRange kAnyValue{};
inline constexpr FieldRange kPositive{0, kFieldInf, true, false};
inline constexpr FieldRange kNonNegative{0, kFieldInf, false, false};
inline constexpr FieldRange kUnitInterval{0, 1, false, false};    // mole fractions
inline constexpr FieldRange kOpenUnitInterval{0, 1, true, true};  // conversion targets

enum class CaseFieldKind {
  FeedT,
  FeedP,
  FeedFlow,      // total; setting it scales every species' flow
  FeedFlowOf,    // one species' flow
  FeedFraction,  // one species' mole fraction; the others keep their ratios and the total
  Catalyst,      // setting it sets the volume to catalyst / bulk_density
  Volume,        // a reactor given by volume (not by catalyst)
  StageTarget,
  BulkDensity,       // with catalyst given, the mass stays and the volume follows
  Activity,          // a reactor's catalyst activity; every reactor has one (default 1)
  TankUA,            // a cooled stirred tank's wall UA
  TankHeatCapacity,  // a stirred tank's vessel and catalyst heat capacity
  ExchangerTout,
  ExchangerDuty,
  InterchangerUA,  // a feed-effluent interchanger's UA
  BedDiameter,     // a vessel's diameter (not with `diameter: auto`)
  TubeDiameter,    // each tube's inside diameter (not with `diameter: auto`)
  BedVoid,         // a vessel's bed voidage
  TubeVoid,        // the voidage of the tubes' beds
  BedDPmax,        // the allowed pressure drop of a vessel with `diameter: auto`
  TubeDPmax,       // the same of tubes with `diameter: auto`
  PelletSize,      // the pellet's diameter or thickness (Ergun's d_p and the modulus)
  Viscosity,       // the fluid's constant viscosity; every reactor holds a copy
  ViscosityValue,  // a power-law viscosity's value at its T (the exponent stays)
  HeatU,           // a cooled stage's overall coefficient
  CoolantT,        // a cooled tank's or tubular stage's constant coolant temperature
  CoolantTin,      // a cooled stage's flowing coolant's inlet temperature
  QuenchShare,     // a quench's share of the feed
  RateA,
  RateEa,
  RateTref,
  AdsorptionExponent,  // n of DEN^n
  RateOrder,           // one species' order in one rate law
  AdsorptionK,         // one adsorption term's K (at its T_ref, when given)
  AdsorptionDH,        // one adsorption term's enthalpy
  AdsorptionTref,      // one adsorption term's reference temperature (where given)
  EquilibriumK,
  EquilibriumT,
  EquilibriumDH,
  MolarMass,
  Density,
  TrainTarget,
  LimitTmax,
  LimitTinMin,
};

// Whose field it is: one per case, or one per species, stage or reaction,
// or one per species of a reaction's rate law (index j * n_species + i),
// or one per adsorption term of a reaction (index j * kMaxTerms + t).
enum class FieldOwner { Case, Species, Stage, Reaction, ReactionSpecies, AdsorptionTerm };

// Whether sweeps offer the field. Species thermo, molar masses and the
// limits are not offered: the loader derives reaction data from the first
// two, which one edited number would leave inconsistent, and the limits
// move no result, only the check of it.
enum class SweepUse { Offered, LiquidPhase, NotOffered };

struct CaseFieldSpec {
  CaseFieldKind kind;
  FieldOwner owner;
  // "{}" stands for the owner's id; a field of a rate law's species or of
  // an adsorption term has "{0}" for the reaction's id, "{1}" for the
  // species' id or the term's index from 0 (paths) and "{2}" for the
  // term's number from 1 (labels).
  std::string_view path;
  std::string_view label;     // in messages, as the loader names the field
  std::string_view si;        // SI unit; "1": a plain number; "": per reaction (rate constants)
  std::string_view quantity;  // in messages: "a temperature"
  bool chemistry_units;       // plain cal is the thermochemical calorie
  FieldRange range;
  SweepUse sweep;

  bool plain() const { return si == "1"; }
  // A view of other fields: the feed's total flow and mole fractions, of
  // its flows (a Case holds flows only).
  bool derived() const {
    return kind == CaseFieldKind::FeedFlow || kind == CaseFieldKind::FeedFraction;
  }
  // The YAML key the field is written under: the path's last part.
  std::string_view key() const { return path.substr(path.rfind('.') + 1); }
};

// The table, in the order case_fields() lists the fields.
std::span<const CaseFieldSpec> case_field_specs();
const CaseFieldSpec& case_field_spec(CaseFieldKind kind);

// The SI unit a rate constant of `law` is read in (mol/(m3 s) or
// mol/(kg s), per concentration or partial pressure to its total order).
SiUnit rate_constant_unit(const RateLaw& law, std::string description = "a rate constant");
// The SI unit of an adsorption term's K: one over the driving unit to the
// sum of the term's powers.
SiUnit adsorption_constant_unit(Driving driving, const AdsorptionTerm& term,
                                std::string description = "an adsorption constant");
// The reaction of a field whose owner is a reaction, one of its rate
// law's species or one of its adsorption terms; -1 for other owners.
int field_reaction(const Case& c, const CaseFieldSpec& spec, int index);

// The loader's words for a value outside its field's range, e.g.
// `volume of stage R1 must be positive, got "-2 m3"`. `given` is the text
// as written in a case file; empty for a case built in code, where the SI
// value and unit are shown instead.
std::string out_of_range_text(std::string_view label, const FieldRange& range, std::string_view si,
                              double v, std::string_view given = {});

// A value of the field as a case file gives it: `digits` significant
// digits and the field's SI unit ("1.5 kg"); a plain number or a rate
// constant bare (a bare number is SI).
std::string case_field_text(const CaseFieldSpec& spec, double v, int digits);

// One field of one case.
struct CaseField {
  std::string name;   // its path: "train.R1.volume"
  std::string label;  // in messages: "volume of stage R1"
  const CaseFieldSpec* spec = nullptr;
  int index = -1;  // owner index (FieldOwner); -1 for the case's own
  SiUnit unit;     // the law's own for a rate or adsorption constant
  bool chemistry_units = false;
  FieldRange range;

  bool contains(double v) const { return range.contains(v); }
  std::string domain_text() const { return range.text(); }
  double get(const Case& c) const;  // SI
  // Whether editing it rebuilds the mechanism.
  bool in_mechanism() const;
};

// Every numeric field the case holds, in table order (an optional field
// only where the case gives it; a reactor's volume only where it is not
// derived from its catalyst).
std::vector<CaseField> case_fields(const Case& c);
// The same walk without building names: visit(spec, owner index, -1 for
// the case's own fields).
void for_each_case_field(const Case& c,
                         const std::function<void(const CaseFieldSpec&, int)>& visit);
// Field `spec` of owner `index` of `c`, and its value (SI).
CaseField case_field(const Case& c, const CaseFieldSpec& spec, int index);
double case_field_value(const Case& c, const CaseFieldSpec& spec, int index);
// Whether sweeps offer the field in this case (SweepUse).
bool offered_to_sweeps(const CaseField& f, const Case& c);

// Sets each of `fields` to values[i] (SI), in order, rebuilding the
// mechanism once when any field belongs to it. Throws InputError (at the
// case file) for a value outside its field's range, or a mole fraction
// below 1 where the feed holds no other species; `c` may then be half
// edited.
void set_case_fields(Case& c, std::span<const CaseField> fields, std::span<const double> values);

// Checks a case built in code (a layout, an optimum, a sweep point) as the
// loader checks a case file: every field of the table within its range,
// exactly one size (or target) per reactor and one of T_out and duty per
// exchanger, unique ids, the key fed and consumed, bulk densities for
// per-catalyst rates, heat capacities where an energy balance needs them,
// the limits' order, the liquid phase's densities and molar masses.
// Throws InputError located at the entry concerned where the case keeps
// one, else at the case file.
void validate_case(const Case& c);

}  // namespace rxtrain
