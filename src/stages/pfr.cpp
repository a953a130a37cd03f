#include "rxtrain/stages/pfr.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "rxtrain/error.hpp"

namespace rxtrain {

namespace {

// The tubular-reactor ODE system on y = [F_1..F_n, T, Q].
class PfrSystem {
 public:
  PfrSystem(const Mechanism& mech, std::vector<double> multipliers, HeatMode heat, double P)
      : mech_(mech),
        beta_(std::move(multipliers)),
        heat_(heat),
        P_(P),
        n_(mech.n_species()),
        nr_(mech.n_reactions()),
        r_(nr_),
        dr_dF_(nr_, n_),
        dr_dT_(nr_) {}

  int size() const { return n_ + 2; }

  int rhs(const double* y, double* ydot) {
    const double T = y[n_];
    if (!(T > 0) || !std::isfinite(T)) return 1;  // recoverable: CVODE shortens the step
    double Ft = 0;
    for (int i = 0; i < n_; ++i) Ft += std::max(y[i], 0.0);
    if (!(Ft > 0)) return 1;
    mech_.rates(T, P_, y, r_.data());
    for (int i = 0; i < n_; ++i) ydot[i] = 0;
    double q = 0;  // sum_j dH_j R_j, W/m3
    for (int j = 0; j < nr_; ++j) {
      const double R = r_[j] * beta_[j];
      for (int i = 0; i < n_; ++i) {
        const double nu = mech_.reactions()[j].nu[i];
        if (nu != 0) ydot[i] += nu * R;
      }
      q += mech_.dH(j, T) * R;
    }
    if (heat_ == HeatMode::Adiabatic) {
      ydot[n_] = -q / mech_.heat_capacity_flow(T, y);
      ydot[n_ + 1] = 0;
    } else {
      ydot[n_] = 0;
      ydot[n_ + 1] = q;
    }
    for (int i = 0; i < n_ + 2; ++i)
      if (!std::isfinite(ydot[i])) return 1;
    return 0;
  }

  // Column-major dense Jacobian.
  int jac(const double* y, double* J) {
    const int N = n_ + 2;
    std::fill(J, J + N * N, 0.0);
    const double T = y[n_];
    if (!(T > 0)) return 1;
    mech_.rates_and_jacobian(T, P_, y, r_.data(), dr_dF_, dr_dT_);
    auto at = [&](int row, int col) -> double& { return J[row + N * col]; };
    for (int j = 0; j < nr_; ++j) {
      const auto& nu = mech_.reactions()[j].nu;
      for (int i = 0; i < n_; ++i) {
        if (nu[i] == 0) continue;
        const double c = nu[i] * beta_[j];
        for (int k = 0; k < n_; ++k) at(i, k) += c * dr_dF_(j, k);
        at(i, n_) += c * dr_dT_(j);
      }
    }
    // Energy rows: q = sum_j dH_j(T) beta_j r_j.
    std::vector<double> dq_dF(n_, 0.0);
    double q = 0, dq_dT = 0;
    for (int j = 0; j < nr_; ++j) {
      const double dH = mech_.dH(j, T);
      const double R = beta_[j] * r_[j];
      q += dH * R;
      dq_dT += mech_.dCp(j, T) * R + dH * beta_[j] * dr_dT_(j);
      for (int k = 0; k < n_; ++k) dq_dF[k] += dH * beta_[j] * dr_dF_(j, k);
    }
    if (heat_ == HeatMode::Adiabatic) {
      const double C = mech_.heat_capacity_flow(T, y);
      // d(sum F cp)/dT by a central difference of the property (the rate
      // terms above are analytic).
      const double h = 1e-4 * T;
      const double dC_dT =
          (mech_.heat_capacity_flow(T + h, y) - mech_.heat_capacity_flow(T - h, y)) / (2 * h);
      for (int k = 0; k < n_; ++k) {
        const double cp_k = mech_.species()[k].thermo.cp(T);
        at(n_, k) = -dq_dF[k] / C + q * cp_k / (C * C);
      }
      at(n_, n_) = -dq_dT / C + q * dC_dT / (C * C);
    } else {
      for (int k = 0; k < n_; ++k) at(n_ + 1, k) = dq_dF[k];
      at(n_ + 1, n_) = dq_dT;
    }
    return 0;
  }

 private:
  const Mechanism& mech_;
  std::vector<double> beta_;
  HeatMode heat_;
  double P_;
  int n_, nr_;
  std::vector<double> r_;
  Eigen::MatrixXd dr_dF_;
  Eigen::VectorXd dr_dT_;
};

std::vector<double> initial_state(const Stream& in) {
  std::vector<double> y = in.F;
  y.push_back(in.T);
  y.push_back(0.0);
  return y;
}

std::vector<double> state_scale(const Mechanism& mech, const Stream& in) {
  const double Ft = in.total_flow();
  std::vector<double> s(in.F.size(), Ft);
  s.push_back(in.T);
  s.push_back(std::max(1.0, mech.heat_capacity_flow(in.T, in.F.data()) * in.T));
  return s;
}

CvodeIntegrator make_integrator(const SunContext& ctx, PfrSystem& sys, const Mechanism& mech,
                                const Stream& inlet, const PfrOptions& options) {
  CvodeIntegrator ode(
      ctx, sys.size(), [&sys](double, const double* y, double* yd) { return sys.rhs(y, yd); },
      [&sys](double, const double* y, const double*, double* J) { return sys.jac(y, J); },
      options.cvode, state_scale(mech, inlet));
  ode.init(0.0, initial_state(inlet));
  return ode;
}

}  // namespace

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, const SunContext& ctx,
                    const PfrOptions& options) {
  const int n = mech.n_species();
  PfrSystem sys(mech, rate_multipliers(mech, spec), spec.heat, inlet.P);
  CvodeIntegrator ode = make_integrator(ctx, sys, mech, inlet, options);

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

  // Roots: dT/dV (temperature extremes; adiabatic only, as T is constant
  // otherwise) and, when sizing, the target conversion.
  const double X_target = sizing ? *spec.target_conversion : 0.0;
  const bool track_T = spec.heat == HeatMode::Adiabatic;
  const int i_T = track_T ? 0 : -1;
  const int i_target = sizing ? (track_T ? 1 : 0) : -1;
  // The stop temperature only matters where T moves.
  const bool stop_at_T = track_T && options.stop_temperature.has_value();
  const double T_stop = stop_at_T ? *options.stop_temperature : 0.0;
  const int i_stop = stop_at_T ? (sizing ? 2 : 1) : -1;
  const int n_roots = (track_T ? 1 : 0) + (sizing ? 1 : 0) + (stop_at_T ? 1 : 0);
  std::vector<double> ydot(sys.size());
  std::vector<int> directions;
  if (track_T) directions.push_back(0);
  if (sizing) directions.push_back(1);
  if (stop_at_T) directions.push_back(0);
  if (n_roots > 0) {
    ode.set_roots(
        n_roots,
        [&](double, const double* y, double* g) {
          if (sys.rhs(y, ydot.data()) != 0) return 1;
          if (track_T) {
            // dT/dV is exactly zero along a stretch where nothing reacts
            // (reactant used up, rates clipped, or exact equilibrium). CVODE
            // stops with "root found at and very near t" on a root function
            // that stays at zero, and a flat stretch is no extremum, so it
            // counts as slightly positive.
            g[i_T] = ydot[n] != 0 ? ydot[n] : std::numeric_limits<double>::min();
          }
          if (sizing) g[i_target] = basis.conversion(y) - X_target;
          if (stop_at_T) g[i_stop] = y[n] - T_stop;
          return 0;
        },
        directions);
  }

  auto record = [&](double V, const std::vector<double>& y) {
    ProfilePoint p;
    p.V = V;
    p.T = y[n];
    p.X = basis.conversion(y.data());
    p.F.assign(y.begin(), y.begin() + n);
    res.profile.push_back(std::move(p));
  };
  std::vector<double> y = initial_state(inlet);
  record(0.0, y);
  double V = 0;
  bool reached = false;
  bool stopped = false;
  if (stop_at_T) {
    // A root at the inlet itself is not reported by CVODE: an inlet at or
    // past the stop temperature, on the side T moves to, ends the stage here.
    if (sys.rhs(y.data(), ydot.data()) == 0 &&
        ((ydot[n] > 0 && inlet.T >= T_stop) || (ydot[n] < 0 && inlet.T <= T_stop)))
      stopped = true;
  }
  while (!stopped) {
    CvodeIntegrator::Event ev;
    try {
      ev = ode.step(V_end, V, y);
    } catch (const SolverError& e) {
      throw SolverError(fmt::format(
          "{} at V = {:.6g} m3 (of {:.6g} m3): {}; try: check the units and size of A and Ea "
          "(a rate far too fast or too slow), split the stage at that volume, or loosen --rtol",
          spec.id, V, V_end, e.what()));
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
  const int n = mech.n_species();
  PfrSystem sys(mech, multipliers, heat, inlet.P);
  CvodeIntegrator ode = make_integrator(ctx, sys, mech, inlet, options);
  const double V_end =
      options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  ode.set_stop_time(V_end);
  std::vector<double> y = initial_state(inlet);
  double V = 0;
  while (ode.step(V_end, V, y) != CvodeIntegrator::Event::Stop) {
  }
  Stream out{y[n], inlet.P, std::vector<double>(y.begin(), y.begin() + n)};
  for (auto& f : out.F) f = std::max(f, 0.0);
  return out;
}

}  // namespace rxtrain
