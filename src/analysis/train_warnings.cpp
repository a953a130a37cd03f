#include "rxtrain/analysis/train_warnings.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <variant>

#include "rxtrain/analysis/result_guard.hpp"
#include "rxtrain/analysis/runaway.hpp"
#include "rxtrain/analysis/stability.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/equilibrium.hpp"
#include "rxtrain/stages/exchanger.hpp"
#include "rxtrain/stages/limit_check.hpp"
#include "rxtrain/stages/pfr.hpp"

namespace rxtrain {

namespace {

// The last tenth of a bed and the conversion it should at least add
// (common practice, no source). A bed whose last tenth adds less than half
// its even share of the bed's conversion has a falling rate there; only
// then is the warning about catalyst wasted near the end rather than
// about a bed that is small overall.
constexpr double kTailFraction = 0.1;
constexpr double kTailMinConversion = 0.01;
constexpr double kTailShare = 0.5;

// Usual space times (common practice, no source).
constexpr double kTankTauLow = 600.0;     // s, 10 min
constexpr double kTankTauHigh = 14400.0;  // s, 4 h
constexpr double kTubeTauLow = 0.5;       // s
constexpr double kTubeTauHigh = 3600.0;   // s, 1 h

std::string celsius(double T) { return fmt::format("{:.2f} °C", T - kZeroCelsius); }

// Space time in words: seconds, minutes or hours, whichever reads best.
std::string duration(double s) {
  if (s < 120) return fmt::format("{:.3g} s", s);
  if (s < 7200) return fmt::format("{:.3g} min", s / 60);
  return fmt::format("{:.3g} h", s / 3600);
}

// Conversion at 90 % of a tubular bed's volume: the bed re-run to that
// volume from its inlet (exact); the profile, interpolated, if that fails.
double conversion_at(const Case& c, const StageResult& r, double V, const SunContext& ctx) {
  ReactorSpec spec;
  spec.id = r.id;
  spec.type = ReactorType::Pfr;
  spec.heat = r.heat.value_or(HeatMode::Adiabatic);
  spec.volume = V;
  spec.bulk_density = r.bulk_density;
  spec.activity = r.activity;
  spec.pellet = r.pellet;
  // A cooled bed is re-run cooled, through its tubes (the diameter as run).
  for (const auto& s : c.train)
    if (const auto* rs = std::get_if<ReactorSpec>(&s); rs && rs->id == r.id && rs->cooling) {
      spec.cooling = rs->cooling;
      spec.geometry = r.hydraulics ? r.hydraulics->geometry : *rs->geometry;
      spec.geometry->dP_max.reset();
    }
  // The stage's own basis: the key fed up to it (side streams included).
  const ConversionBasis basis{c.key, r.F_key_fed > 0 ? r.F_key_fed : c.feed.F[c.key]};
  try {
    return run_pfr(c.mechanism, spec, r.inlet, basis, ctx).conversion;
  } catch (const SolverError&) {
    const auto& p = r.profile;
    for (std::size_t k = 1; k < p.size(); ++k)
      if (p[k].V >= V) {
        const double w = p[k].V > p[k - 1].V ? (V - p[k - 1].V) / (p[k].V - p[k - 1].V) : 1.0;
        return p[k - 1].X + w * (p[k].X - p[k - 1].X);
      }
    return p.back().X;
  }
}

}  // namespace

std::optional<double> adiabatic_temperature_change(const Case& c) {
  const Mechanism& mech = c.mechanism;
  const int j = key_reaction(mech, c.key);
  if (j < 0) return std::nullopt;
  const auto& nu = mech.reactions()[j].nu;
  const std::vector<double>& F_in = c.feed.F;
  // Extent at full conversion of the key, or where a co-reactant runs out.
  double xi = std::numeric_limits<double>::infinity();
  for (int i = 0; i < mech.n_species(); ++i)
    if (nu[i] < 0) xi = std::min(xi, F_in[i] / -nu[i]);
  if (!std::isfinite(xi) || !(xi > 0)) return std::nullopt;
  std::vector<double> F_out(F_in.size());
  for (std::size_t i = 0; i < F_in.size(); ++i) F_out[i] = std::max(0.0, F_in[i] + nu[i] * xi);
  // Total enthalpy sum F_i hs_i(T) + sum_j xi_j dH_298,j is conserved
  // (Kirchhoff form of dH(T), kinetics.hpp).
  const double H_out =
      mech.sensible_enthalpy_flow(c.feed.T, F_in.data()) - xi * mech.reactions()[j].dH_298;
  try {
    return temperature_for_enthalpy(mech, F_out, H_out, c.feed.T) - c.feed.T;
  } catch (const SolverError&) {
    return std::nullopt;
  }
}

std::vector<std::string> design_warnings(const Case& c, const TrainResult& result) {
  std::vector<std::string> out;
  const auto& lim = c.limits;
  const std::string key = c.mechanism.species()[c.key].id;

  // First what the train did against the limits, stage by stage.
  for (const auto& f : result.limit_check.findings)
    out.push_back(limit_finding_text(f, result.limit_check.margin));

  // Then against the train's own target, said plainly when missed.
  if (c.target_conversion && result.conversion < *c.target_conversion - kReachTolerance)
    out.push_back(fmt::format(
        "the train as the case gives it reaches X = {:.4f} of {} at its outlet, short of its "
        "target {:.4f}; {}",
        result.conversion, key, *c.target_conversion,
        c.interchanger() ? "the loop's other steady states are listed with it"
                         : "staging shows how many beds with intercoolers the target takes"));
  if (c.target_outlet) {
    const auto& t = *c.target_outlet;
    const double x = mole_fractions(result.outlet)[t.species];
    if (x > t.x * (1 + kReachTolerance))
      out.push_back(fmt::format(
          "the outlet of the train as the case gives it holds {:.6g} ppm of {}, above its target "
          "{:.6g} ppm",
          x * 1e6, c.mechanism.species()[t.species].id, t.x * 1e6));
  }

  if (const auto dT = adiabatic_temperature_change(c)) {
    const double T_full = c.feed.T + *dT;
    if (*dT > 0 && lim.T_max && T_full > *lim.T_max && c.feed.T >= *lim.T_max) {
      out.push_back(fmt::format("the feed, at {}, is already above T_max = {}", celsius(c.feed.T),
                                celsius(*lim.T_max)));
    } else if (*dT > 0 && lim.T_max && T_full > *lim.T_max) {
      // Where every reactor is cooled, the advice is the coolant's, not
      // intercooling's.
      bool all_cooled = true;
      for (const auto& r : result.stages)
        if (is_reactor(r.kind)) all_cooled = all_cooled && (r.coolant || r.cooling);
      out.push_back(fmt::format(
          "adiabatic temperature rise of the feed at full conversion of {} is {:.1f} K (from {} "
          "to {}), above T_max = {}: an adiabatic bed passes T_max near X = {:.2f} (linear in "
          "conversion) unless equilibrium stops it first; {}",
          key, *dT, celsius(c.feed.T), celsius(T_full), celsius(*lim.T_max),
          std::clamp((*lim.T_max - c.feed.T) / *dT, 0.0, 1.0),
          all_cooled ? "every reactor here is cooled, so it is the coolant that must hold each "
                       "one below T_max (a loss of coolant lets it run away towards that rise)"
                     : "split the conversion between beds with intercooling"));
    }
    if (*dT < 0 && lim.T_in_min && T_full < *lim.T_in_min && c.feed.T <= *lim.T_in_min) {
      out.push_back(fmt::format("the feed, at {}, is already below T_in_min = {}",
                                celsius(c.feed.T), celsius(*lim.T_in_min)));
    } else if (*dT < 0 && lim.T_in_min && T_full < *lim.T_in_min) {
      out.push_back(fmt::format(
          "adiabatic temperature fall of the feed at full conversion of {} is {:.1f} K (from {} "
          "to {}), below T_in_min = {}: an adiabatic bed cools below the useful range near X = "
          "{:.2f} (linear in conversion) unless equilibrium stops it first; split the "
          "conversion between beds with interstage reheating",
          key, -*dT, celsius(c.feed.T), celsius(T_full), celsius(*lim.T_in_min),
          std::clamp((c.feed.T - *lim.T_in_min) / -*dT, 0.0, 1.0)));
    }
  }

  SunContext ctx;
  for (const auto& r : result.stages) {
    if (!is_reactor(r.kind)) continue;

    // A stage sized to an outlet purity needs its last ppm, however little
    // conversion they are: its tail is the specification, not waste.
    bool sized_to_purity = false;
    for (const auto& s : c.train)
      if (const auto* spec = std::get_if<ReactorSpec>(&s); spec && spec->id == r.id)
        sized_to_purity = spec->target_outlet.has_value();
    if (r.kind == StageKind::Pfr && r.volume && *r.volume > 0 && !r.profile.empty() &&
        !sized_to_purity) {
      const double V = *r.volume;
      const double X_in =
          ConversionBasis{c.key, r.F_key_fed > 0 ? r.F_key_fed : c.feed.F[c.key]}.conversion(
              r.inlet);
      const double gain = r.conversion - X_in;
      const double tail = r.conversion - conversion_at(c, r, (1 - kTailFraction) * V, ctx);
      if (gain > 0 && tail < kTailMinConversion && tail < kTailShare * kTailFraction * gain) {
        // A tube without catalyst (no bulk density) wastes volume, not catalyst.
        std::string amount = fmt::format("{:.3f} m3", kTailFraction * V);
        if (r.catalyst_mass)
          amount += fmt::format(", {:.0f} kg of catalyst", kTailFraction * *r.catalyst_mass);
        const std::string added =
            tail < 1e-4 ? std::string("less than 0.0001") : fmt::format("only {:.4f}", tail);
        out.push_back(fmt::format(
            "stage {}: its last 10 % of volume ({}) adds {} to the conversion: the rate there "
            "has nearly died out, close to equilibrium or complete conversion, so that {} is "
            "largely wasted",
            r.id, amount, added, r.catalyst_mass ? "catalyst" : "volume"));
      }
    }

    // A stirred tank's reported state must be one the plant can hold, and
    // the designer must know when another state is possible.
    if (r.kind == StageKind::Cstr) {
      const SteadyState* held = nullptr;
      int stable_states = 0;
      for (const auto& ss : r.steady_states) {
        if (ss.outlet) held = &ss;
        if (!ss.eigenvalues.empty() && ss.stable()) ++stable_states;
      }
      if (held && !held->eigenvalues.empty() && !held->stable())
        out.push_back(fmt::format(
            "stage {}: the steady state reported ({}) is not stable ({}): the tank cannot hold "
            "it without control and will move away from it{}",
            r.id, celsius(held->T), stability_kind_name(held->kind),
            held->kind == StabilityKind::Oscillatory ? ", swinging in temperature" : ""));
      else if (held && stable_states > 1)
        out.push_back(fmt::format(
            "stage {}: {} stable steady states at these conditions: the tank sits in a region of "
            "multiple steady states, and a disturbance or a different start-up can move it to "
            "another (rxtrain stability shows where they exist)",
            r.id, stable_states));
    }

    // A catalyst bed is judged by its space velocities (GHSV, WHSV), not
    // by a residence time: only empty tubes and tanks get this check.
    if (r.space_time && !r.bulk_density) {
      const bool tank = r.kind == StageKind::Cstr;
      const double lo = tank ? kTankTauLow : kTubeTauLow;
      const double hi = tank ? kTankTauHigh : kTubeTauHigh;
      const double tau = *r.space_time;
      if (tau < lo || tau > hi)
        out.push_back(fmt::format("stage {}: space time {} is {} what {} usually have ({})", r.id,
                                  duration(tau), tau < lo ? "below" : "above",
                                  tank ? "stirred tanks" : "empty tubular reactors",
                                  tank ? "about 10 min to 4 h" : "about 0.5 s to 1 h"));
    }
  }
  return out;
}

TrainResult run_checked(const Case& c, const TrainOptions& options, double ignition_margin,
                        double runaway_margin) {
  TrainResult result = run_train(c, options);
  for (auto& w : design_warnings(c, result)) result.warnings.push_back(std::move(w));
  for (auto& w : flip_warnings(c, result, ignition_margin)) result.warnings.push_back(std::move(w));
  for (auto& w : runaway_warnings(c, result, runaway_margin, options.solvers))
    result.warnings.push_back(std::move(w));
  check_finite(result);
  return result;
}

}  // namespace rxtrain
