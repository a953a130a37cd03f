#include "rxtrain/stages/pfr.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <vector>

#include "pfr_system.hpp"
#include "rxtrain/error.hpp"

namespace rxtrain {

using detail::initial_state;
using detail::PfrSystem;
using detail::same_options;
using detail::state_scale;

// Everything a tubular stage needs between runs. The integrator's
// callbacks point at `sys` and `roots`, which live as long as it does.
struct PfrWorkspace::State {
  PfrSystem sys;
  std::optional<CvodeIntegrator> ode;
  SparsePattern pattern;  // of the current sparse integrator
  std::vector<double> y, ydot, scale;
  // Root functions of the current stage (see run_pfr): the target
  // conversion and the stop temperature. Neither needs the right-hand side.
  struct Roots {
    ConversionBasis basis{0, 0};
    int n = 0;
    bool sizing = false, stop_at_T = false;
    int i_target = -1, i_stop = -1;
    double X_target = 0, T_stop = 0;
    int eval(const double* y, double* g) const {
      if (sizing) g[i_target] = basis.conversion(y) - X_target;
      if (stop_at_T) g[i_stop] = y[n] - T_stop;
      return 0;
    }
  } roots;
  std::vector<double> dky;  // interpolated dT/dV search (see run_pfr)

  // Binds the system to a stage and (re)starts the integrator at its inlet,
  // re-creating the integrator only when it cannot be reused.
  CvodeIntegrator& start(const SunContext& ctx, const Mechanism& mech,
                         const std::vector<double>& multipliers, HeatMode heat, const Stream& inlet,
                         const PfrOptions& options) {
    sys.reset(mech, multipliers, heat, inlet.P);
    const bool sparse = uses_sparse_jacobian(options, mech.n_species());
    state_scale(mech, inlet, scale);
    bool reuse = ode && ode->size() == sys.size() && ode->sparse() == sparse &&
                 same_options(ode->options(), options.cvode);
    if (sparse) {
      SparsePattern pat;
      sys.build_pattern(pat);
      reuse = reuse && pat.col_start == pattern.col_start && pat.row == pattern.row;
      if (!reuse) {
        pattern = pat;
        ode.reset();
        ode.emplace(
            ctx, sys.size(),
            [s = &sys](double, const double* y, double* yd) { return s->rhs(y, yd); },
            std::move(pat),
            [s = &sys](double, const double* y, const double*, double* v, double* u, double* w) {
              return s->sparse_jac(y, v, u, w);
            },
            options.cvode, scale);
      }
    } else if (!reuse) {
      ode.reset();
      ode.emplace(
          ctx, sys.size(),
          [s = &sys](double, const double* y, double* yd) { return s->rhs(y, yd); },
          [s = &sys](double, const double* y, const double*, double* J) { return s->jac(y, J); },
          options.cvode, scale);
    }
    if (reuse) ode->set_scale(scale);
    initial_state(inlet, y);
    ydot.resize(y.size());
    ode->init(0.0, y);
    return *ode;
  }
};

PfrWorkspace::PfrWorkspace(const SunContext& ctx) : ctx_(&ctx), state_(std::make_unique<State>()) {}
PfrWorkspace::~PfrWorkspace() = default;
PfrWorkspace::PfrWorkspace(PfrWorkspace&&) noexcept = default;
PfrWorkspace& PfrWorkspace::operator=(PfrWorkspace&&) noexcept = default;

bool uses_sparse_jacobian(const PfrOptions& options, int n_species) {
  switch (options.jacobian) {
    case JacobianForm::Dense:
      return false;
    case JacobianForm::Sparse:
      return true;
    case JacobianForm::Automatic:
      break;
  }
  return n_species >= kSparseJacobianMinSpecies;
}

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, const SunContext& ctx,
                    const PfrOptions& options) {
  PfrWorkspace ws(ctx);
  return run_pfr(mech, spec, inlet, basis, ws, options);
}

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, PfrWorkspace& ws, const PfrOptions& options) {
  const int n = mech.n_species();
  PfrWorkspace::State& st = ws.state();
  CvodeIntegrator& ode =
      st.start(ws.context(), mech, rate_multipliers(mech, spec), spec.heat, inlet, options);
  PfrSystem& sys = st.sys;

  StageResult res;
  res.id = spec.id;
  res.kind = StageKind::Pfr;
  res.heat = spec.heat;
  res.inlet = inlet;
  res.bulk_density = spec.bulk_density;

  const double X_in = basis.conversion(inlet);
  const bool sizing = spec.target_conversion.has_value();
  double V_end = 0;
  if (sizing) {
    if (*spec.target_conversion <= X_in)
      throw InputError(spec.where,
                       fmt::format("stage {}: target conversion {:.4f} is not above the "
                                   "conversion at its inlet ({:.4f})",
                                   spec.id, *spec.target_conversion, X_in));
    V_end = options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  } else {
    V_end = spec.volume.value();
  }
  ode.set_stop_time(V_end);

  // Roots: the target conversion when sizing, and the stop temperature.
  // Temperature extremes (dT/dV = 0) are found after each step from the
  // integrator's interpolating polynomial instead (below): as a root
  // function dT/dV would cost one more right-hand side per step.
  auto& rt = st.roots;
  rt.basis = basis;
  rt.n = n;
  rt.X_target = sizing ? *spec.target_conversion : 0.0;
  rt.sizing = sizing;
  rt.i_target = sizing ? 0 : -1;
  // The stop temperature only matters where T moves.
  const bool adiabatic = spec.heat == HeatMode::Adiabatic;
  const bool stop_at_T = adiabatic && options.stop_temperature.has_value();
  rt.stop_at_T = stop_at_T;
  const double T_stop = stop_at_T ? *options.stop_temperature : 0.0;
  rt.T_stop = T_stop;
  rt.i_stop = stop_at_T ? (sizing ? 1 : 0) : -1;
  const int n_roots = (sizing ? 1 : 0) + (stop_at_T ? 1 : 0);
  const double X_target = rt.X_target;
  const int i_target = rt.i_target, i_stop = rt.i_stop;
  std::vector<double>& ydot = st.ydot;
  std::vector<int> directions;
  if (sizing) directions.push_back(1);
  if (stop_at_T) directions.push_back(0);
  // Always set, so that a reused integrator drops the last stage's roots.
  ode.set_roots(
      n_roots, [r = &rt](double, const double* y, double* g) { return r->eval(y, g); }, directions);

  auto record = [&](double V, const std::vector<double>& y) {
    ProfilePoint p;
    p.V = V;
    p.T = y[n];
    p.X = basis.conversion(y.data());
    p.F.assign(y.begin(), y.begin() + n);
    res.profile.push_back(std::move(p));
  };
  std::vector<double>& y = st.y;
  record(0.0, y);
  double V = 0;
  bool reached = false;
  bool stopped = false;
  // dT/dV at the last recorded point; 0 where it is unknown or flat.
  double slope = 0;
  if (adiabatic && sys.rhs(y.data(), ydot.data()) == 0) slope = ydot[n];
  if (stop_at_T) {
    // A root at the inlet itself is not reported by CVODE: an inlet at or
    // past the stop temperature, on the side T moves to, ends the stage here.
    if ((slope > 0 && inlet.T >= T_stop) || (slope < 0 && inlet.T <= T_stop)) stopped = true;
  }
  std::vector<double>& dky = st.dky;
  dky.resize(y.size());
  // dT/dV of the interpolating polynomial of the last step at V.
  auto slope_at = [&](double at) {
    ode.interpolate(at, 1, dky.data());
    return dky[n];
  };
  // A sign change of dT/dV between the last point and V (both inside the
  // last step) is a temperature extreme: bisect the polynomial's dT/dV for
  // it and record the point, so T_max and T_min are the true extremes.
  auto record_extreme = [&](double V_prev, double V_now) {
    const double V_ext = detail::bisect_turn(V_prev, V_now, slope, slope_at);
    std::vector<double> y_ext(y.size());
    ode.interpolate(V_ext, 0, y_ext.data());
    record(V_ext, y_ext);
  };
  // With one reaction dT/dV = -dH r / sum F cp: r keeps its sign along a
  // bed (the reaction approaches its equilibrium without crossing it) and
  // so does dH over the few hundred kelvin of one bed, so T is monotonic
  // and its extremes are the end points (isothermal: T is constant).
  const bool monotonic = !adiabatic || mech.n_reactions() == 1;
  const bool every_step = options.full_profile || !monotonic;
  while (!stopped) {
    CvodeIntegrator::Event ev;
    try {
      ev = every_step ? ode.step(V_end, V, y) : ode.advance(V_end, V, y);
    } catch (const SolverError& e) {
      throw SolverError(fmt::format(
          "{} at V = {:.6g} m3 (of {:.6g} m3): {}; try: check the units and size of A and Ea "
          "(a rate far too fast or too slow), split the stage at that volume, or loosen --rtol",
          spec.id, V, V_end, e.what()));
    }
    // A temperature extreme inside the last step (several reactions only).
    if (!monotonic) {
      const double V_prev = res.profile.back().V;
      const double s_now = slope_at(V);
      if ((slope > 0 && s_now < 0) || (slope < 0 && s_now > 0))
        record_extreme(V_prev, V);
      if (s_now != 0) slope = s_now;
    }
    record(V, y);
    if (ev == CvodeIntegrator::Event::Stop) break;
    if (ev == CvodeIntegrator::Event::Root && (sizing || stop_at_T)) {
      const auto found = ode.roots_found();
      if (sizing && found[i_target] != 0) {
        reached = true;
        break;
      }
      if (stop_at_T && found[i_stop] != 0) {
        stopped = true;
        break;
      }
    }
  }
  if (sizing && !reached && !stopped) {
    const auto& last = res.profile.back();
    throw InfeasibleError(
        spec.where,
        fmt::format("stage {}: target conversion {:.4f} is out of reach; the most this stage "
                    "can reach is X = {:.4f} (at T = {:.2f} K, the {} limit)",
                    spec.id, X_target, last.X, last.T,
                    spec.heat == HeatMode::Adiabatic ? "adiabatic equilibrium" : "equilibrium"));
  }

  res.volume = V;
  res.sized = sizing;
  if (spec.bulk_density) res.catalyst_mass = V * *spec.bulk_density;
  res.outlet = Stream{y[n], inlet.P, std::vector<double>(y.begin(), y.begin() + n)};
  for (auto& f : res.outlet.F) f = std::max(f, 0.0);  // solver round-off below zero
  res.duty = y[n + 1];
  res.conversion = basis.conversion(res.outlet);
  res.T_max = res.T_min = inlet.T;
  for (const auto& p : res.profile) {
    res.T_max = std::max(res.T_max, p.T);
    res.T_min = std::min(res.T_min, p.T);
  }
  res.stats = ode.stats();
  if (stopped)
    res.stats.message =
        fmt::format("stopped at the stop temperature {:.2f} K at V = {:.6g} m3", T_stop, V);
  add_space_velocities(mech, res);
  return res;
}

Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, const SunContext& ctx,
                       const PfrOptions& options) {
  PfrWorkspace ws(ctx);
  return adiabatic_limit(mech, multipliers, inlet, heat, ws, options);
}

Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, PfrWorkspace& ws,
                       const PfrOptions& options) {
  const int n = mech.n_species();
  PfrWorkspace::State& st = ws.state();
  CvodeIntegrator& ode = st.start(ws.context(), mech, multipliers, heat, inlet, options);
  ode.set_roots(0, nullptr, {});
  const double V_end =
      options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  ode.set_stop_time(V_end);
  std::vector<double>& y = st.y;
  double V = 0;
  while (ode.advance(V_end, V, y) != CvodeIntegrator::Event::Stop) {
  }
  Stream out{y[n], inlet.P, std::vector<double>(y.begin(), y.begin() + n)};
  for (auto& f : out.F) f = std::max(f, 0.0);
  return out;
}

namespace detail {

void pfr_jacobians(const Mechanism& mech, const std::vector<double>& multipliers, HeatMode heat,
                   double P, const std::vector<double>& y, std::vector<double>& f,
                   std::vector<double>& J_dense, std::vector<double>& J_sparse) {
  PfrSystem sys;
  sys.reset(mech, multipliers, heat, P);
  const int N = sys.size();
  f.assign(N, 0.0);
  if (sys.rhs(y.data(), f.data()) != 0) throw SolverError("pfr_jacobians: RHS failed");
  J_dense.assign(static_cast<std::size_t>(N) * N, 0.0);
  if (sys.jac(y.data(), J_dense.data()) != 0) throw SolverError("pfr_jacobians: dense failed");
  SparsePattern pat;
  sys.build_pattern(pat);
  std::vector<double> values(pat.nonzeros()), u(N, 0.0), w(N, 0.0);
  if (sys.sparse_jac(y.data(), values.data(), u.data(), w.data()) != 0)
    throw SolverError("pfr_jacobians: sparse failed");
  J_sparse.assign(static_cast<std::size_t>(N) * N, 0.0);
  for (int k = 0; k < N; ++k)
    for (int p = pat.col_start[k]; p < pat.col_start[k + 1]; ++p)
      J_sparse[pat.row[p] + static_cast<std::size_t>(N) * k] = values[p];
  for (int k = 0; k < N; ++k)
    for (int i = 0; i < N; ++i) J_sparse[i + static_cast<std::size_t>(N) * k] += u[i] * w[k];
}

}  // namespace detail

}  // namespace rxtrain
