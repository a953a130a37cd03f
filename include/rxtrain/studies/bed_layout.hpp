// The bed layout the staged studies share (staging.hpp, optimize.hpp): a
// train of adiabatic beds with an exchanger between each two (and, for the
// optimizer, one conditioning the feed), the check of a case for such a
// study, and the one place a layout becomes stage specs. SI units (T in K,
// volumes m3, masses kg, duties W, heat added to the stream positive).
//
// Example:
//   const LayoutCase lc = check_layout_case(c, LayoutStudy::Staging);
//   ReactorSpec b = bed_stage("B1", lc.bulk_density, where);  // sized later
//   std::vector<StageSpec> train = layout_stages(layout, where);
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"

namespace rxtrain {

// kReachTolerance (case/case.hpp) is the one tolerance on reaching a
// conversion the studies use.

// A bed whose X_ad_eq lies no further than this above its inlet conversion
// cannot progress.
inline constexpr double kBedNoProgress = 1e-9;

// Where a bed of the staged studies' policy ends on its way to equilibrium:
// `approach` (0 < approach < 1) of the way from its inlet conversion X_in
// to its adiabatic equilibrium conversion X_ad_eq (staging.hpp).
inline double approach_end(double X_in, double X_ad_eq, double approach) {
  return X_in + approach * (X_ad_eq - X_in);
}

// One adiabatic bed of a layout. T is monotone along an adiabatic bed of
// one reaction; with several, T_max and T_min are the extremes inside it.
struct Bed {
  std::string id;                                    // B1, B2, ...
  double T_in = 0, T_out = 0, T_max = 0, T_min = 0;  // K
  double X_in = 0, X_out = 0;
  double X_ad_eq = 0;                   // where the bed's adiabatic line meets equilibrium
  double volume = 0;                    // m3
  std::optional<double> catalyst_mass;  // kg (with a bulk density)
};

// An exchanger of a layout: between two beds (C1, ...; H1, ... heating) or
// conditioning the feed (E0).
struct Interstage {
  std::string id;
  double T_in = 0, T_out = 0;  // K
  double duty = 0;             // W, heat added (< 0 for a cooler)
};

// A layout to run as a train: beds given by their size.
struct BedLayout {
  std::optional<Interstage> feed_conditioning;  // before bed 1, when it changes the feed
  std::vector<Bed> beds;
  std::vector<Interstage> interstages;  // between beds: beds.size() - 1
  std::optional<double> bulk_density;   // kg/m3, every bed's
  double activity = 1;                  // every bed's catalyst activity
  // Beds given by catalyst mass (with the volume it fills, as the loader
  // holds them), else by volume.
  bool by_mass = false;
};

// What a staged study needs of the case, checked once.
struct LayoutCase {
  int reaction = 0;           // the key reaction (key_reaction())
  std::string key;            // key species id
  double target = 0;          // train-level target conversion
  bool exothermic = true;     // sign of the key reaction's dH at the feed
  bool per_catalyst = false;  // the key reaction's rate is per kg of catalyst
  bool has_reactor = false;   // the train has a reactor stage
  // The first reactor's bulk density and place, given to every bed.
  std::optional<double> bulk_density;
  // The catalyst activity the beds are designed for: the one every
  // reactor of the case gives (1 when none does).
  double activity = 1;
  SourceLocation bed_where;
  // The first reactor's bed geometry, pellet and the fluid's viscosity:
  // with all three, every new bed of staging has the same diameter,
  // voidage and pellets, and so its pressure drop.
  std::optional<BedGeometry> geometry;
  std::optional<PelletSpec> pellet;
  std::optional<ViscosityLaw> viscosity;
};

// The study a case is checked for, which also names it in the messages.
//   Staging:  a train-level target, a reversible key reaction, a reactor;
//   Optimize: a target, both limits, exactly one reaction (reversible),
//             and a bulk density for a per-catalyst rate.
enum class LayoutStudy { Staging, Optimize };

// Throws InputError, located at the offending entry of the case, for the
// first requirement of `study` the case misses.
LayoutCase check_layout_case(const Case& c, LayoutStudy study);

// An adiabatic tubular bed with the layout's bulk density and activity;
// the caller sets its size (volume, catalyst mass or target conversion).
ReactorSpec bed_stage(const std::string& id, const std::optional<double>& bulk_density,
                      double activity, const SourceLocation& where);
// An exchanger returning the stream to T_out.
ExchangerSpec interstage_stage(const std::string& id, double T_out, const SourceLocation& where);

// The stages of a layout in train order: the feed conditioning (if any),
// then bed, exchanger, bed, ...
std::vector<StageSpec> layout_stages(const BedLayout& layout, const SourceLocation& where);

}  // namespace rxtrain
