// Chemical equilibrium of a reactor train's reversible reactions: K(T)
// tables, equilibrium conversion at fixed T and P, the temperature that
// makes a conversion the equilibrium one, the adiabatic equilibrium point of
// a stage, the adiabatic line, approach to equilibrium at a stage outlet and
// the maximum-rate temperature locus. SI units throughout (T in K, P in Pa,
// flows and extents in mol/s, energies in J/mol).
//
// Equilibrium condition of reversible reaction j (activities as in
// kinetics.hpp: gas a_i = p_i / 1 bar, liquid a_i = C_i / (1 mol/L) with the
// mechanism's ideal-mixing volumetric flow):
//   g_j = sum_i nu_ij ln a_i - ln K_j(T) = 0.
// Written in logs so that a product absent at the inlet (ln a -> -inf)
// still gives a finite, monotone residual on the open feasible set.
// Flows are F = F_in + sum_j nu_j xi_j over every reaction: the reversible
// extents are the unknowns, the irreversible ones are held at given values
// (zero by default: the irreversible reactions stay at the inlet).
//
// Example:
//   EquilibriumOptions opt;
//   EquilibriumState eq = solve_equilibrium(mech, inlet, 650.0, basis, {}, opt);
//   double X_eq = eq.X;                      // key conversion at 650 K
//   auto ad = adiabatic_equilibrium(mech, inlet, HeatMode::Adiabatic, basis);
//   if (ad) report(ad->stream.T, ad->X);     // empty: no reversible reaction
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "rxtrain/chem/heat_mode.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"
#include "rxtrain/solvers/newton.hpp"

namespace rxtrain {

struct EquilibriumOptions {
  // Newton on the extents when two or more reversible reactions can run.
  // The residuals are in ln units (order one), the unknowns are extents
  // divided by the inlet's total flow, so both tolerances are relative.
  NewtonOptions newton{100, 1e-12, 1e-12, 1e-10, 0.99};
  // One reversible reaction: |g| at which the bracketed solve stops (a
  // relative error of this size in Q / K). The solve also stops when the
  // bracket has shrunk to round-off, e.g. at conversions within ~1e-15 of
  // complete, where the flows themselves are round-off.
  double ln_tolerance = 1e-12;
  // Iterations of the bracketed one-reaction solve and of every 1-D
  // temperature search; each halves the bracket at worst, so 200 is far
  // more than double precision needs.
  int max_iterations = 200;
  // Temperature searches (T_eq(X), the adiabatic equilibrium point, the
  // adiabatic line, the maximum-rate locus) stay inside [T_min, T_max].
  // The default spans every catalytic reactor and stays where ideal-gas
  // cp fits are still defined.
  double T_min = 150.0;
  double T_max = 3000.0;
  // Relative tolerance on every temperature found.
  double T_tolerance = 1e-12;
  // First step (K) of the outward bracket search from a starting
  // temperature; the step grows by 1.5 each try. Small enough not to jump
  // over a nearby root, large enough to reach T_max in ~15 tries.
  double bracket_step = 5.0;
  // Window (K) of a meaningful approach temperature: where K(T) is nearly
  // flat, X_eq moves little with T and T_eq(X_out) - T_out can be hundreds
  // of kelvin, correct by definition but saying little. A record beyond it
  // is flagged, and the reports leave the figure out (common practice, no
  // source).
  double approach_T_window = 100.0;

  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

// ---- 1. K(T), dH_r(T), dG0(T) ------------------------------------------------

// One row of a reaction's thermochemistry at T. K, ln_K and dG need an
// equilibrium source (Reaction::equilibrium); without one they are empty.
// K is also empty where exp(ln K) over- or underflows a double (|ln K| >
// 700); ln_K is still given.
struct ReactionThermoRow {
  double T = 0;             // K
  std::optional<double> K;  // activity basis (gas 1 bar, liquid 1 mol/L)
  std::optional<double> ln_K;
  double dH = 0;             // J/mol, Mechanism::dH(j, T)
  std::optional<double> dG;  // J/mol, dG0 = -R T ln K
};

// T = first, first + step, ... up to last (last included when it lies on
// the grid to within 1e-9 of a step).
struct TemperatureRange {
  double first = 0;  // K
  double last = 0;   // K
  double step = 0;   // K
};

ReactionThermoRow reaction_thermo(const Mechanism& mech, int j, double T);
// Throws InputError (no location: the range comes from the command line)
// when first <= 0, last < first, step <= 0 or the range has more than
// 100000 rows.
std::vector<ReactionThermoRow> reaction_thermo_table(const Mechanism& mech, int j,
                                                     const TemperatureRange& range);
std::vector<double> temperature_grid(const TemperatureRange& range);

// ---- 2. Equilibrium at fixed T and P ------------------------------------------

bool has_reversible_reaction(const Mechanism& mech);

// Equilibrium of every reversible reaction at T and the inlet's P.
struct EquilibriumState {
  Stream stream;                // T, P and flows at equilibrium
  std::vector<double> extents;  // mol/s per reaction from the inlet (irreversible: as given)
  double X = 0;                 // key conversion (basis) at equilibrium
  // max_j |g_j| over the reversible reactions solved for: the achieved
  // accuracy of ln Q = ln K.
  double max_ln_residual = 0;
  int iterations = 0;
  // Reversible reactions that cannot run in either direction (a species on
  // each side is absent and no other reaction can make it): held at zero
  // extent, their Q is 0/0.
  std::vector<int> frozen;
};

// Solves g_j = 0 for every reversible reaction at T and P = inlet.P.
// fixed_extents: mol/s per reaction (size n_reactions, or empty for all
// zero); only the irreversible entries are used. One reaction that can run
// is solved by a safeguarded Newton inside its bracket of feasible extents
// (g rises from -inf to +inf there), measured from the end the root lies
// toward so that a nearly exhausted species keeps its relative precision
// (K = 1e30 gives F = 1e-30 F0, not round-off). Several are solved by
// damped Newton on the extents (solvers/newton.hpp) from a strictly
// interior start, steps that would empty a species rejected by the line
// search, re-started from its last point (as the new origin of the
// extents) while each re-start at least halves the residual.
// Throws std::invalid_argument for malformed arguments (a programmer
// error; check has_reversible_reaction first), InputError when reversible
// reactions are linearly dependent (extents not unique) and SolverError
// when Newton fails.
EquilibriumState solve_equilibrium(const Mechanism& mech, const Stream& inlet, double T,
                                   const ConversionBasis& basis,
                                   const std::vector<double>& fixed_extents = {},
                                   const EquilibriumOptions& options = {});

// X_eq(T): solve_equilibrium(...).X.
double equilibrium_conversion(const Mechanism& mech, const Stream& inlet, double T,
                              const ConversionBasis& basis,
                              const std::vector<double>& fixed_extents = {},
                              const EquilibriumOptions& options = {});

struct EquilibriumCurvePoint {
  double T = 0;  // K
  double X_eq = 0;
};
// X_eq(T) over a temperature range (for plots of the equilibrium curve).
std::vector<EquilibriumCurvePoint> equilibrium_curve(const Mechanism& mech, const Stream& inlet,
                                                     const ConversionBasis& basis,
                                                     const TemperatureRange& range,
                                                     const std::vector<double>& fixed_extents = {},
                                                     const EquilibriumOptions& options = {});

// ---- 3. T_eq(X) ---------------------------------------------------------------

// The temperature at which X is the equilibrium conversion: a root of
// X_eq(T) - X, bracketed by stepping outward from T_start (default: the
// inlet's T) and refined by Brent's method; the root nearest T_start is
// returned. Empty when no T in [T_min, T_max] has X_eq(T) = X (X beyond
// what equilibrium allows, or the key in no reversible reaction).
// Exothermic: X_eq falls with T; endothermic: it rises.
std::optional<double> equilibrium_temperature(const Mechanism& mech, const Stream& inlet, double X,
                                              const ConversionBasis& basis,
                                              const std::vector<double>& fixed_extents = {},
                                              std::optional<double> T_start = {},
                                              const EquilibriumOptions& options = {});

// ---- 4. Adiabatic equilibrium point of a stage -------------------------------

// Adiabatic: the temperature where the adiabatic line from the inlet meets
// equilibrium, i.e. the root of
//   E(T) = sum_i F_i,in (hs_i(T) - hs_i(T_in)) + sum_j xi_j(T) dH_j(T)
// with xi(T) the equilibrium extents at T (and the irreversible extents
// fixed), bracketed outward from T_in and refined by Brent's method. For
// one reaction of either sign of dH, E rises with T, so the root is unique.
// Isothermal: the equilibrium at the inlet's (the stage's) T.
// The state's stream.T is T_ad_eq and X is X_ad_eq: the most that stage can
// reach at any size. Empty when the mechanism has no reversible reaction.
// Throws SolverError when no root lies in [T_min, T_max].
std::optional<EquilibriumState> adiabatic_equilibrium(const Mechanism& mech, const Stream& inlet,
                                                      HeatMode heat, const ConversionBasis& basis,
                                                      const std::vector<double>& fixed_extents = {},
                                                      const EquilibriumOptions& options = {});

// ---- 5. The adiabatic line ----------------------------------------------------

// The reaction that carries the key's conversion: the first reversible
// reaction that consumes the key (nu_key < 0); failing that, the first
// reaction of any kind that consumes it; -1 when none does. Other
// reactions that consume the key are ignored by the single-reaction views
// (adiabatic line, maximum-rate locus).
int key_reaction(const Mechanism& mech, int key);

// Flows after reaction j alone has taken the key from the inlet to overall
// conversion X: xi = (F_key_feed (1 - X) - F_key,in) / nu_key,j. Empty when
// a flow would be negative (beyond a limiting reactant) or nu_key,j = 0.
std::optional<std::vector<double>> flows_at_conversion(const Mechanism& mech, const Stream& inlet,
                                                       const ConversionBasis& basis, int j,
                                                       double X);

struct AdiabaticLinePoint {
  double X = 0;
  double T = 0;  // K
};
struct AdiabaticLine {
  int reaction = -1;  // key_reaction()
  std::vector<AdiabaticLinePoint> points;
  // The line stops early where a flow would go negative or T would leave
  // [T_min, T_max]; then truncated is set and why says which.
  bool truncated = false;
  std::string why;
};

// T(X) along the adiabatic line of the key reaction from the inlet:
// sum_i F_i,in (hs_i(T) - hs_i(T_in)) + xi(X) dH(T) = 0, at `points`
// (>= 2) evenly spaced X from X_first to X_last. Throws
// std::invalid_argument when no reaction consumes the key.
AdiabaticLine adiabatic_line(const Mechanism& mech, const Stream& inlet,
                             const ConversionBasis& basis, double X_first, double X_last,
                             int points, const EquilibriumOptions& options = {});

// ---- 6. Approach to equilibrium at a stage outlet ------------------------------

struct EquilibriumRecord {
  double X_ad_eq = 0;   // adiabatic (isothermal: at the stage T) equilibrium conversion
  double T_ad_eq = 0;   // K
  double X_eq_out = 0;  // X_eq(T_out) with the outlet's irreversible extents
  // X_eq(T_out) - X_out: > 0 short of equilibrium, < 0 when the stage
  // was fed beyond equilibrium (it ran backwards).
  double approach_X = 0;
  // T_eq(X_out) - T_out (K), the root nearest T_out. Short of
  // equilibrium it is > 0 for an exothermic bed (equilibrium at X_out lies
  // hotter) and < 0 for an endothermic one (it lies colder); fed beyond
  // equilibrium the signs flip. Empty when no T in [T_min, T_max] makes
  // X_out the equilibrium conversion.
  std::optional<double> approach_T;
  // |approach_T| lies beyond the window (K) it was judged against,
  // EquilibriumOptions::approach_T_window.
  bool approach_T_beyond_window = false;
  double approach_T_window = 0;
};

// The extents of every reaction that take `inlet` to `outlet` (least
// squares on F_out - F_in = N xi; minimum norm if the reactions are
// dependent). Throws std::invalid_argument when the outlet cannot be
// reached from the inlet by the reactions (relative misfit > 1e-6).
std::vector<double> stage_extents(const Mechanism& mech, const Stream& inlet, const Stream& outlet);

// Record of one reactor stage from its inlet and outlet streams. The
// irreversible reactions are held at their outlet extents for every
// equilibrium in the record. Empty when the mechanism has no reversible
// reaction.
std::optional<EquilibriumRecord> equilibrium_record(const Mechanism& mech, const Stream& inlet,
                                                    const Stream& outlet, HeatMode heat,
                                                    const ConversionBasis& basis,
                                                    const EquilibriumOptions& options = {});

// ---- 7. Maximum-rate temperature ---------------------------------------------

struct MaxRatePoint {
  double X = 0;
  double T = 0;     // K, temperature of the highest net rate of the key reaction
  double rate = 0;  // r_j(T) in the reaction's own basis (multiplier 1)
  // True when the maximum lies strictly inside the search window (the
  // locus proper); false when it sits on an end (endothermic reactions,
  // or a window too narrow).
  bool interior = false;
};

// At conversion X (composition from flows_at_conversion with the key
// reaction j), the T in [T_lo, T_hi] that maximizes the net rate r_j(T)
// from Mechanism::rates. The window is cut at T_eq,j(X), the root of
// ln K_j(T) = ln Q_j (r = 0 there), keeping the side where the reaction
// runs forward; the maximum is found by Brent's minimization (golden
// section with parabolic steps) and, when interior, refined to a root of
// the analytic dr/dT (Mechanism::rates_and_jacobian). Empty when the key
// reaction is not reversible, X is infeasible or the reaction runs
// backwards everywhere in [T_lo, T_hi]. Assumes dH_j keeps one sign over
// [T_lo, T_hi].
std::optional<MaxRatePoint> max_rate_temperature(const Mechanism& mech, const Stream& inlet,
                                                 const ConversionBasis& basis, double X,
                                                 double T_lo, double T_hi,
                                                 const EquilibriumOptions& options = {});

// The locus at `points` (>= 2) evenly spaced X from X_first to X_last;
// conversions where max_rate_temperature is empty are left out.
std::vector<MaxRatePoint> max_rate_locus(const Mechanism& mech, const Stream& inlet,
                                         const ConversionBasis& basis, double X_first,
                                         double X_last, int points, double T_lo, double T_hi,
                                         const EquilibriumOptions& options = {});

}  // namespace rxtrain
