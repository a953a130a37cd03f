#include "rxtrain/stages/stage.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"

namespace rxtrain {

namespace {
// Normal conditions for GHSV: 0 degC and 1 atm (common practice; the basis
// is stated in every report).
constexpr double kNormalT = kZeroCelsius;  // K
constexpr double kNormalP = 101325.0;      // Pa (1 atm, NIST SP 811)
constexpr double kSecondsPerHour = 3600.0;
}  // namespace

const char* stage_kind_name(StageKind kind) {
  switch (kind) {
    case StageKind::Pfr:
      return "pfr";
    case StageKind::Cstr:
      return "cstr";
    case StageKind::Exchanger:
      return "exchanger";
    case StageKind::Quench:
      return "quench";
    case StageKind::Interchanger:
      return "interchanger";
  }
  return "?";
}

const char* stage_heat_name(const StageResult& r) {
  if (r.coolant || r.cooling) return "cooled";  // a tube's coolant, a tank's wall
  return r.heat ? heat_mode_name(*r.heat) : nullptr;
}

const char* flow_arrangement_name(FlowArrangement a) {
  return a == FlowArrangement::Parallel ? "parallel" : "counter";
}

const char* coolant_flow_name(CoolantFlow f) {
  switch (f) {
    case CoolantFlow::Constant:
      return "constant";
    case CoolantFlow::Cocurrent:
      return "cocurrent";
    case CoolantFlow::Countercurrent:
      return "countercurrent";
  }
  return "constant";
}

const char* heat_mode_name(HeatMode heat) {
  return heat == HeatMode::Adiabatic ? "adiabatic" : "isothermal";
}

void add_space_velocities(const Mechanism& mech, StageResult& r, std::span<const int> basis) {
  if (!r.volume || *r.volume <= 0) return;
  const double V = *r.volume;
  const double* F = r.inlet.F.data();
  const double v0 = mech.volumetric_flow(r.inlet.T, r.inlet.P, F);
  r.space_time = V / v0;
  r.space_velocity = v0 / V;
  if (mech.phase() == Phase::Gas) {
    const double Ft = r.inlet.total_flow();
    r.ghsv = Ft * kGasConstant * kNormalT / kNormalP * kSecondsPerHour / V;
  }
  // WHSV and LHSV on the basis species' flows at the stage inlet; each
  // needs every basis species' molar mass (and density, for LHSV).
  std::vector<int> all;
  if (basis.empty()) {
    all.resize(static_cast<std::size_t>(mech.n_species()));
    for (int i = 0; i < mech.n_species(); ++i) all[static_cast<std::size_t>(i)] = i;
    basis = all;
  }
  r.space_velocity_basis.clear();
  double mass = 0, liquid = 0;
  bool all_mw = true, all_density = true;
  for (int i : basis) {
    const Species& s = mech.species()[static_cast<std::size_t>(i)];
    r.space_velocity_basis.push_back(s.id);
    all_mw = all_mw && s.mw.has_value();
    all_density = all_density && s.density.has_value();
    if (s.mw) mass += F[i] * *s.mw;
    if (const auto v = s.liquid_molar_volume()) liquid += F[i] * *v;
  }
  r.whsv.reset();
  r.lhsv.reset();
  if (all_mw && r.catalyst_mass && *r.catalyst_mass > 0)
    r.whsv = mass * kSecondsPerHour / *r.catalyst_mass;
  if (all_mw && all_density) r.lhsv = liquid * kSecondsPerHour / V;
}

const char* reach_end_name(ReachEnd end) {
  switch (end) {
    case ReachEnd::Equilibrium:
      return "equilibrium";
    case ReachEnd::ReactantUsedUp:
      return "reactant_used_up";
    case ReachEnd::TemperatureStop:
      return "temperature_limit";
    case ReachEnd::RateVanishes:
      return "rates_die_away";
    case ReachEnd::SpaceTimeBound:
      return "space_time_bound";
  }
  return "?";
}

std::string reach_end_text(const StageReach& reach, HeatMode heat,
                           const std::vector<std::string>& species) {
  switch (reach.end) {
    case ReachEnd::Equilibrium:
      return heat == HeatMode::Adiabatic ? "the adiabatic equilibrium limit"
                                         : "the equilibrium limit";
    case ReachEnd::ReactantUsedUp:
      return reach.species >= 0 && reach.species < static_cast<int>(species.size())
                 ? species[reach.species] + " used up"
                 : "a reactant used up";
    case ReachEnd::TemperatureStop:
      return "the temperature limit";
    case ReachEnd::RateVanishes:
      return "the rates dying away";
    case ReachEnd::SpaceTimeBound:
      return "still rising at the longest space time searched";
  }
  return "?";
}

void classify_reach_end(const Mechanism& mech, const Stream& inlet, const double* F_end, int key,
                        bool still_rising, StageReach& reach) {
  // Reactants of the reactions that consume the key: the first to run out
  // (smallest share of its inlet flow left) ends the path.
  constexpr double kUsedUp = 1e-6;
  int used_up = -1;
  double least = kUsedUp;
  for (const auto& rx : mech.reactions()) {
    if (!(rx.nu[key] < 0)) continue;
    for (int i = 0; i < mech.n_species(); ++i) {
      if (!(rx.nu[i] < 0) || !(inlet.F[i] > 0)) continue;
      const double left = std::max(F_end[i], 0.0) / inlet.F[i];
      if (left <= least) {
        least = left;
        used_up = i;
      }
    }
  }
  reach.species = -1;
  if (used_up >= 0) {
    reach.end = ReachEnd::ReactantUsedUp;
    reach.species = used_up;
    return;
  }
  bool reversible = false;
  for (const auto& rx : mech.reactions()) reversible = reversible || rx.reversible;
  if (still_rising)
    reach.end = ReachEnd::SpaceTimeBound;
  else
    reach.end = reversible ? ReachEnd::Equilibrium : ReachEnd::RateVanishes;
}

void exact_equilibrium_end(const Mechanism& mech, const Stream& inlet, HeatMode heat,
                           const ConversionBasis& basis, StageReach& reach,
                           const ReachHints& known) {
  if (reach.end != ReachEnd::Equilibrium || mech.n_reactions() != 1) return;
  if (known.X_eq_end && known.T_eq_end) {
    reach.X_end = *known.X_eq_end;
    reach.T_end = *known.T_eq_end;
    return;
  }
  try {
    if (const auto eq = adiabatic_equilibrium(mech, inlet, heat, basis)) {
      reach.X_end = eq->X;
      reach.T_end = eq->stream.T;
    }
  } catch (const SolverError&) {
  }
}

void finish_reach(StageReach& reach, double V_last) {
  if (reach.peak_inside()) return;
  reach.X_max = reach.X_end;
  reach.T_at_X_max = reach.T_end;
  const bool cut = reach.end == ReachEnd::TemperatureStop || reach.end == ReachEnd::SpaceTimeBound;
  reach.V_at_X_max = cut ? std::optional<double>(V_last) : std::nullopt;
}

std::string out_of_reach_text(const ReactorSpec& spec, double X_target, const StageReach& reach,
                              const Mechanism& mech) {
  const std::string head = fmt::format(
      "stage {}: target conversion {:.4f} is out of reach; the most this stage can reach is "
      "X = {:.4f}",
      spec.id, X_target, reach.X_max);
  std::vector<std::string> ids;
  for (const auto& sp : mech.species()) ids.push_back(sp.id);
  // A cooled path ends at equilibrium near the coolant's temperature, on
  // no adiabatic line.
  const std::string end = spec.cooling && reach.end == ReachEnd::Equilibrium
                              ? std::string("the equilibrium limit along the cooled path")
                              : reach_end_text(reach, spec.heat, ids);
  if (!reach.peak_inside() || !reach.V_at_X_max)
    return head + fmt::format(" (at {}, {})", temperature_words(reach.T_at_X_max), end);
  std::string where = fmt::format("V = {:.4g} m3", *reach.V_at_X_max);
  if (spec.bulk_density)
    where += fmt::format(", {:.4g} kg of catalyst", *reach.V_at_X_max * *spec.bulk_density);
  return head +
         fmt::format(" (at {}, {}); a larger stage gives conversion back, to X = {:.4f} at {} ({})",
                     where, temperature_words(reach.T_at_X_max), reach.X_end,
                     temperature_words(reach.T_end), end);
}

std::vector<double> rate_multipliers(const Mechanism& mech, const ReactorSpec& spec) {
  std::vector<double> m;
  for (const auto& rx : mech.reactions()) {
    if (rx.rate.basis == RateBasis::Catalyst) {
      if (!spec.bulk_density)
        throw InputError(spec.where,
                         fmt::format("stage {}: reaction {} has a per-catalyst rate; give the "
                                     "stage a bulk_density (e.g. bulk_density: 750 kg/m3)",
                                     spec.id, rx.id));
      m.push_back(spec.activity * *spec.bulk_density);
    } else {
      m.push_back(spec.activity);
    }
  }
  return m;
}

}  // namespace rxtrain
