// What lone and batched tubular stages share beyond their balances
// (models/tubular_balances.hpp): sizing by quadrature, the size
// sensitivity, profile points and the stage result. Internal to the
// library: not installed, not API.
#pragma once

#include <optional>
#include <vector>

#include "rxtrain/models/tubular_balances.hpp"
#include "rxtrain/solvers/scalar_root.hpp"
#include "rxtrain/stages/stage.hpp"

namespace rxtrain::detail {

// A one-reaction tubular bed sized to X_target by quadrature of dV/dX along
// its exact path (pfr.cpp): returns the volume, appends profile points to
// res (every quadrature piece, or only the end without full_profile) and
// leaves y = [F, T, Q] at the end.
double size_by_quadrature(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis, double X_target, double rtol,
                          bool full_profile, StageResult& res, std::vector<double>& y);

// A sized stage: res.size_sensitivity, the relative change of its volume
// per 1e-6 of conversion at the outlet, and a warning where the size is
// ill-conditioned.
void add_size_sensitivity(const Mechanism& mech, const std::vector<double>& multipliers,
                          const ConversionBasis& basis, StageResult& res);

// The pellet binding of a stage with effectiveness factors (pellets with
// D_eff): rates per m3 of pellet = activity x pellet density x the
// per-catalyst rate; `rtol` the pellet grid's tolerance (floored at 1e-7).
// Empty without a pellet or without D_eff (a pellet for pressure drop
// only). Throws InputError for per-volume rates or a pellet without a
// density.
std::optional<PelletBinding> pellet_binding(const Mechanism& mech, const ReactorSpec& spec,
                                            double rtol);

// The pressure drop binding of a stage with a bed, a pellet and a
// viscosity (ReactorSpec::has_pressure_drop); empty otherwise.
std::optional<HydraulicBinding> hydraulic_binding(const Mechanism& mech, const ReactorSpec& spec,
                                                  const Stream& inlet);

// The wall's heat of a cooled stage (ReactorSpec::cooling, with tubes);
// empty when it is not cooled. Throws InputError without tubes.
std::optional<CoolingBinding> cooling_binding(const ReactorSpec& spec);

// The bed of a stage with geometry, from its result (volume, inlet and
// outlet), with its warnings: a pressure drop above a tenth of the inlet
// pressure, a particle Reynolds number outside Ergun's data, a bed whose
// pressure drop is not computed.
void add_hydraulics(const Mechanism& mech, const ReactorSpec& spec, StageResult& res);

// Mole fraction of species i in flows F[0..n).
double mole_fraction(const double* F, int n, int i);

// A profile point at volume V from the state y = [F, T, ...].
ProfilePoint profile_point(double V, const double* y, int n, const ConversionBasis& basis);

// What a tubular stage's result holds whether it ran alone or batched:
// identity, volume, catalyst, outlet (flows' round-off below zero cleared),
// duty, conversion and space velocities, from its end state y = [F, T, Q]
// at volume V. Profile, T_max, T_min and solver statistics are the
// caller's.
StageResult pfr_result(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                       const ConversionBasis& basis, bool sized, double V, const double* y);

// Where T turns inside a step from t_prev to t of a tubular stage (lone
// or batched): dT/dt was `slope` at t_prev and is `s_now` at t; on a sign
// change the turn is bisected on `slope_at` (dT/dt from the integrator's
// interpolating polynomial). `slope` becomes s_now unless that is 0 (a
// flat point keeps the last direction).
template <class Slope>
std::optional<double> temperature_turn(double t_prev, double t, double& slope, double s_now,
                                       Slope&& slope_at) {
  std::optional<double> at;
  if ((slope > 0 && s_now < 0) || (slope < 0 && s_now > 0))
    at = bisect_sign_change(t_prev, t, slope, slope_at);
  if (s_now != 0) slope = s_now;
  return at;
}

}  // namespace rxtrain::detail
