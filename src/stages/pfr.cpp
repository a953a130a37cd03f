#include "rxtrain/stages/pfr.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <vector>

#include "rxtrain/error.hpp"

namespace rxtrain {

namespace {

// The tubular-reactor ODE system on y = [F_1..F_n, T, Q]. Rebound to each
// stage with reset(); its buffers keep their capacity between runs, so
// neither rhs() nor the Jacobians allocate.
class PfrSystem {
 public:
  void reset(const Mechanism& mech, const std::vector<double>& multipliers, HeatMode heat,
             double P) {
    mech_ = &mech;
    beta_.assign(multipliers.begin(), multipliers.end());
    heat_ = heat;
    P_ = P;
    n_ = mech.n_species();
    nr_ = mech.n_reactions();
    r_.resize(nr_);
    dr_dF_.resize(nr_, n_);
    dr_dT_.resize(nr_);
    dq_dF_.resize(n_);
    // Nonzero stoichiometric coefficients per reaction, in species order.
    st_start_.clear();
    st_species_.clear();
    st_nu_.clear();
    for (int j = 0; j < nr_; ++j) {
      st_start_.push_back(static_cast<int>(st_species_.size()));
      const auto& nu = mech.reactions()[j].nu;
      for (int i = 0; i < n_; ++i)
        if (nu[i] != 0) {
          st_species_.push_back(i);
          st_nu_.push_back(nu[i]);
        }
    }
    st_start_.push_back(static_cast<int>(st_species_.size()));
  }

  int size() const { return n_ + 2; }
  const Mechanism& mech() const { return *mech_; }

  int rhs(const double* y, double* ydot) {
    const Mechanism& mech = *mech_;
    const double T = y[n_];
    if (!(T > 0) || !std::isfinite(T)) return 1;  // recoverable: CVODE shortens the step
    double Ft = 0;
    for (int i = 0; i < n_; ++i) Ft += std::max(y[i], 0.0);
    if (!(Ft > 0)) return 1;
    mech.rates(T, P_, y, r_.data());
    for (int i = 0; i < n_; ++i) ydot[i] = 0;
    double q = 0;  // sum_j dH_j R_j, W/m3
    for (int j = 0; j < nr_; ++j) {
      const double R = r_[j] * beta_[j];
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s) ydot[st_species_[s]] += st_nu_[s] * R;
      q += mech.dH(j, T) * R;
    }
    if (heat_ == HeatMode::Adiabatic) {
      ydot[n_] = -q / mech.heat_capacity_flow(T, y);
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
    const Mechanism& mech = *mech_;
    const int N = n_ + 2;
    std::fill(J, J + N * N, 0.0);
    const double T = y[n_];
    if (!(T > 0)) return 1;
    mech.rates_and_jacobian(T, P_, y, r_.data(), dr_dF_, dr_dT_, scratch_);
    auto at = [&](int row, int col) -> double& { return J[row + N * col]; };
    for (int j = 0; j < nr_; ++j) {
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s) {
        const int i = st_species_[s];
        const double c = st_nu_[s] * beta_[j];
        for (int k = 0; k < n_; ++k) at(i, k) += c * dr_dF_(j, k);
        at(i, n_) += c * dr_dT_(j);
      }
    }
    // Energy rows: q = sum_j dH_j(T) beta_j r_j.
    std::fill(dq_dF_.begin(), dq_dF_.end(), 0.0);
    double q = 0, dq_dT = 0;
    for (int j = 0; j < nr_; ++j) {
      const double dH = mech.dH(j, T);
      const double R = beta_[j] * r_[j];
      q += dH * R;
      dq_dT += mech.dCp(j, T) * R + dH * beta_[j] * dr_dT_(j);
      for (int k = 0; k < n_; ++k) dq_dF_[k] += dH * beta_[j] * dr_dF_(j, k);
    }
    energy_rows(y, T, q, dq_dT, [&](int row, int col) -> double& { return at(row, col); });
    return 0;
  }

  // Sparsity pattern of the sparse Jacobian (CSC) and where each term of
  // sparse_jac() goes in it. Rebuilt per stage: O((n+2)^2), far below one
  // integration of a mechanism large enough to use it.
  void build_pattern(SparsePattern& pat) {
    const Mechanism& mech = *mech_;
    const int N = n_ + 2;
    const int T_row = heat_ == HeatMode::Adiabatic ? n_ : n_ + 1;  // the dense energy row
    // The rate species r_j depends on directly: a forward order, or a
    // reverse exponent (order + nu) of a reversible reaction. The others
    // (products of an irreversible reaction) have dr_j/dF_k = 0 exactly;
    // in the pattern they would only add LU fill-in, which grows faster
    // than the network (synthetic 200-species stage: nnz(L+U) 11048 ->
    // 5929; 400 species: 42118 -> 21412).
    dep_start_.assign(1, 0);
    dep_p_.clear();
    for (int j = 0; j < nr_; ++j) {
      const Reaction& rx = mech.reactions()[j];
      const auto& ks = mech.rate_species(j);
      for (std::size_t p = 0; p < ks.size(); ++p) {
        const double o = rx.rate.orders[ks[p]];
        if (o != 0 || (rx.reversible && o + rx.nu[ks[p]] != 0))
          dep_p_.push_back(static_cast<int>(p));
      }
      dep_start_.push_back(static_cast<int>(dep_p_.size()));
    }
    pos_.assign(static_cast<std::size_t>(N) * N, -1);
    auto mark = [&](int row, int col) { pos_[row + static_cast<std::size_t>(N) * col] = 0; };
    for (int k = 0; k < N; ++k) mark(k, k);
    for (int j = 0; j < nr_; ++j)
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s)
        for (int d = dep_start_[j]; d < dep_start_[j + 1]; ++d)
          mark(st_species_[s], mech.rate_species(j)[dep_p_[d]]);
    for (int i = 0; i < n_; ++i) mark(i, n_);  // every species row: dF_i/dT
    for (int k = 0; k <= n_; ++k) mark(T_row, k);
    pat.n = N;
    pat.col_start.assign(1, 0);
    pat.row.clear();
    for (int k = 0; k < N; ++k) {
      for (int i = 0; i < N; ++i) {
        int& p = pos_[i + static_cast<std::size_t>(N) * k];
        if (p < 0) continue;
        p = static_cast<int>(pat.row.size());
        pat.row.push_back(i);
      }
      pat.col_start.push_back(static_cast<int>(pat.row.size()));
    }
    auto at = [&](int row, int col) { return pos_[row + static_cast<std::size_t>(N) * col]; };
    scatter_.clear();
    for (int j = 0; j < nr_; ++j)
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s)
        for (int d = dep_start_[j]; d < dep_start_[j + 1]; ++d)
          scatter_.push_back(at(st_species_[s], mech.rate_species(j)[dep_p_[d]]));
    col_T_.resize(n_);
    for (int i = 0; i < n_; ++i) col_T_[i] = at(i, n_);
    row_E_.resize(n_ + 1);
    for (int k = 0; k <= n_; ++k) row_E_[k] = at(T_row, k);
    direct_.resize(mech.n_direct());
    dilution_.resize(nr_);
    nnz_ = pat.nonzeros();
  }

  // Sparse Jacobian S (values on the pattern of build_pattern) with the
  // dilution coupling of the species rows as u w^T.
  int sparse_jac(const double* y, double* values, double* u, double* w) {
    const Mechanism& mech = *mech_;
    const double T = y[n_];
    if (!(T > 0)) return 1;
    mech.rates_and_sparse_jacobian(T, P_, y, r_.data(), direct_.data(), dilution_.data(),
                                   dr_dT_.data(), scratch_);
    std::fill(values, values + nnz_, 0.0);
    std::fill(dq_dF_.begin(), dq_dF_.end(), 0.0);
    double q = 0, dq_dT = 0, dq_dilution = 0;
    std::size_t t = 0;
    for (int j = 0; j < nr_; ++j) {
      const auto& ks = mech.rate_species(j);
      const double* dj = direct_.data() + mech.direct_offset(j);
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s) {
        const int i = st_species_[s];
        const double c = st_nu_[s] * beta_[j];
        for (int d = dep_start_[j]; d < dep_start_[j + 1]; ++d)
          values[scatter_[t++]] += c * dj[dep_p_[d]];
        values[col_T_[i]] += c * dr_dT_(j);
        u[i] += c * dilution_[j];
      }
      const double dH = mech.dH(j, T);
      const double R = beta_[j] * r_[j];
      q += dH * R;
      dq_dT += mech.dCp(j, T) * R + dH * beta_[j] * dr_dT_(j);
      for (std::size_t p = 0; p < ks.size(); ++p) dq_dF_[ks[p]] += dH * beta_[j] * dj[p];
      dq_dilution += dH * beta_[j] * dilution_[j];
    }
    for (int k = 0; k < n_; ++k) {
      w[k] = mech.dilution_weight(k, y);
      dq_dF_[k] += dq_dilution * w[k];  // the energy row is dense: exact in S
    }
    // Only the energy row is written, so the column picks the entry.
    energy_rows(y, T, q, dq_dT, [&](int, int col) -> double& { return values[row_E_[col]]; });
    return 0;
  }

 private:
  // The energy row (adiabatic: T; isothermal: Q) from q, dq/dT and dq_dF_.
  template <class At>
  void energy_rows(const double* y, double T, double q, double dq_dT, At at) {
    const Mechanism& mech = *mech_;
    if (heat_ == HeatMode::Adiabatic) {
      const double C = mech.heat_capacity_flow(T, y);
      // d(sum F cp)/dT by a central difference of the property (the rate
      // terms above are analytic).
      const double h = 1e-4 * T;
      const double dC_dT =
          (mech.heat_capacity_flow(T + h, y) - mech.heat_capacity_flow(T - h, y)) / (2 * h);
      for (int k = 0; k < n_; ++k) {
        const double cp_k = mech.cp(k, T);
        at(n_, k) = -dq_dF_[k] / C + q * cp_k / (C * C);
      }
      at(n_, n_) = -dq_dT / C + q * dC_dT / (C * C);
    } else {
      for (int k = 0; k < n_; ++k) at(n_ + 1, k) = dq_dF_[k];
      at(n_ + 1, n_) = dq_dT;
    }
  }

  const Mechanism* mech_ = nullptr;
  std::vector<double> beta_;
  HeatMode heat_ = HeatMode::Adiabatic;
  double P_ = 0;
  int n_ = 0, nr_ = 0;
  std::vector<double> r_;
  Eigen::MatrixXd dr_dF_;
  Eigen::VectorXd dr_dT_;
  std::vector<double> dq_dF_;
  Mechanism::Scratch scratch_;
  std::vector<int> st_start_, st_species_;
  std::vector<double> st_nu_;
  // Sparse form only.
  std::vector<int> pos_;      // (row, col) -> index in the pattern, -1 outside
  std::vector<int> scatter_;  // per (reaction, stoichiometric entry, dependency)
  std::vector<int> col_T_;    // entry (i, T) per species row
  std::vector<int> row_E_;    // entry (energy row, k) for k = 0..n
  std::vector<double> direct_, dilution_;
  // Per reaction j, dep_p_[dep_start_[j] .. dep_start_[j+1]) are the
  // positions in rate_species(j) that r_j depends on (see build_pattern).
  std::vector<int> dep_start_, dep_p_;
  int nnz_ = 0;
};

void initial_state(const Stream& in, std::vector<double>& y) {
  y.assign(in.F.begin(), in.F.end());
  y.push_back(in.T);
  y.push_back(0.0);
}

void state_scale(const Mechanism& mech, const Stream& in, std::vector<double>& s) {
  const double Ft = in.total_flow();
  s.assign(in.F.size(), Ft);
  s.push_back(in.T);
  s.push_back(std::max(1.0, mech.heat_capacity_flow(in.T, in.F.data()) * in.T));
}

bool same_options(const CvodeOptions& a, const CvodeOptions& b) {
  return a.rtol == b.rtol && a.atol == b.atol && a.max_steps == b.max_steps &&
         a.max_order == b.max_order;
}

}  // namespace

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
    double lo = V_prev, hi = V_now, s_lo = slope;
    for (int it = 0; it < 60 && hi - lo > 1e-14 * std::max(std::abs(hi), 1e-300); ++it) {
      const double mid = 0.5 * (lo + hi);
      const double s_mid = slope_at(mid);
      if (s_mid == 0) {
        lo = hi = mid;
        break;
      }
      if ((s_mid > 0) == (s_lo > 0)) {
        lo = mid;
        s_lo = s_mid;
      } else {
        hi = mid;
      }
    }
    const double V_ext = 0.5 * (lo + hi);
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
