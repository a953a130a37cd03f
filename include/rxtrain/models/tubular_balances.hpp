// The tubular balances: the mole and energy balances of a tubular stage
// as an ODE system in its volume, on the state y = [F_1..F_n, T, Q] or,
// for a packed bed with a pressure drop, y = [F_1..F_n, T, Q, P] (molar
// flows mol/s, temperature K, heat added W, pressure Pa), and for a cooled
// tube with a flowing coolant the coolant's temperature T_c (K) last,
// with its dense and sparse analytic Jacobians. The one home of these balances: lone and
// batched tubular stages (stages/pfr.cpp, stages/pfr_batch.cpp) integrate
// it; a new state (pressure, a coolant temperature) is added here.
// Internal to the library (rxtrain::detail), not API.
#pragma once

#include <algorithm>
#include <cmath>
#include <optional>
#include <vector>

#include "rxtrain/chem/heat_mode.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"
#include "rxtrain/models/hydraulics.hpp"
#include "rxtrain/models/pellet.hpp"
#include "rxtrain/solvers/cvode.hpp"

namespace rxtrain::detail {

// The mechanism's rate laws inside a pellet at one bed temperature: rates
// per m3 of pellet (the per-catalyst rate times the pellet density and the
// activity, in `multipliers`) at local concentrations.
class MechanismInPellet final : public PelletKinetics {
 public:
  void bind(const Mechanism& mech, const std::vector<double>& multipliers) {
    mech_ = &mech;
    mult_ = &multipliers;
    d_.assign(mech.n_species(), 0.0);
    g_.assign(mech.n_species(), 0.0);
  }
  // Driving quantity per unit concentration: R T for partial pressures of
  // a gas, else 1 (liquid laws read concentrations either way).
  void set_temperature(double T) {
    T_ = T;
    factor_.resize(mech_->n_reactions());
    for (int j = 0; j < mech_->n_reactions(); ++j)
      factor_[j] =
          mech_->phase() == Phase::Gas && mech_->reactions()[j].rate.driving == Driving::Pressure
              ? kGasConstant * T
              : 1.0;
  }
  int n_species() const override { return mech_->n_species(); }
  int n_reactions() const override { return mech_->n_reactions(); }
  double nu(int j, int i) const override { return mech_->reactions()[j].nu[i]; }
  double rate(int j, const double* c, double* grad) const override {
    const int n = mech_->n_species();
    const double f = factor_[j];
    for (int i = 0; i < n; ++i) d_[i] = std::max(c[i], 0.0) * f;
    if (grad) std::fill(g_.begin(), g_.end(), 0.0);
    const auto v = mech_->evaluate(j, T_, d_.data(), grad ? g_.data() : nullptr);
    const double s = (*mult_)[j] * v.k;
    if (grad)
      for (int i = 0; i < n; ++i) grad[i] = c[i] > 0 ? s * g_[i] * f : 0.0;
    return s * v.value;
  }

 private:
  const Mechanism* mech_ = nullptr;
  const std::vector<double>* mult_ = nullptr;
  double T_ = 0;
  std::vector<double> factor_;
  mutable std::vector<double> d_, g_;  // evaluate()'s work space
};

// What a stage's pellets make of its rates (see PfrSystem::reset).
struct PelletBinding {
  const PelletSpec* spec = nullptr;  // with D_eff
  std::vector<double> multipliers;   // per reaction: rate per pellet volume / intrinsic rate
  double rtol = 1e-6;                // the pellet solve's grid tolerance
};

// A packed bed's pressure drop (see PfrSystem::reset): Ergun along the bed
// length z, with dV = A dz (A the flow area) and the local fluid density.
struct HydraulicBinding {
  double area = 0;       // m2, the flow area
  double mass_flow = 0;  // kg/s, constant along the bed
  double d_p = 0;        // m, the pellet's equivalent diameter
  double eps = 0;        // bed voidage
  ViscosityLaw mu;
};

// A cooled tube (see PfrSystem::reset): the heat through the wall per bed
// volume is Ua (T - T_c), Ua = U 4 / d_tube. With a coolant flow T_c is
// the last state, dT_c/dV = sign Ua (T - T_c) / (flow cp): sign +1 when
// the coolant flows with the process stream, -1 against it (the balance
// is integrated in the process direction either way).
struct CoolingBinding {
  double Ua = 0;       // W/(m3 K)
  double T_c = 0;      // K, the coolant's temperature when it is constant
  double inv_mcp = 0;  // K/W, 1 / (flow cp); 0: a constant coolant (no state)
  double sign = 1;
  bool has_state() const { return inv_mcp != 0; }
};

// The tubular-reactor ODE system on y = [F_1..F_n, T, Q (, P) (, T_c)]. Rebound to each
// stage with reset(); its buffers keep their capacity between runs, so
// neither rhs() nor the Jacobians allocate.
class PfrSystem {
 public:
  // With `pellet` (effectiveness factors), every rate is the intrinsic one
  // times its eta_j at the bulk state; the Jacobians keep eta_j fixed at
  // the state they are evaluated at (its own derivatives are left out), so
  // they are approximate, which CVODE's Newton iteration tolerates: it
  // converges on the residual, and tests/pellet_test.cpp checks the stage
  // outlet against a tight-tolerance run and GSL.
  // With `hydraulics`, P is the state y[n+2] and every rate reads it; the
  // rows and column of P are analytic (the viscosity's T dependence too).
  // With `cooling` (heat must be Adiabatic), the energy row gains the wall
  // term and Q sums the heat through the wall; its entries are analytic.
  void reset(const Mechanism& mech, const std::vector<double>& multipliers, HeatMode heat, double P,
             const PelletBinding* pellet = nullptr, const HydraulicBinding* hydraulics = nullptr,
             const CoolingBinding* cooling = nullptr) {
    mech_ = &mech;
    hyd_ = hydraulics;
    cool_ = cooling;
    ic_ = mech.n_species() + 2 + (hydraulics ? 1 : 0);
    bind_pellet(mech, pellet);
    beta_.assign(multipliers.begin(), multipliers.end());
    heat_ = heat;
    P_ = P;
    n_ = mech.n_species();
    nr_ = mech.n_reactions();
    r_.resize(nr_);
    dr_dF_.resize(nr_, n_);
    dr_dT_.resize(nr_);
    dr_dP_.resize(nr_);
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

  int size() const { return n_ + 2 + (hyd_ ? 1 : 0) + (has_coolant_state() ? 1 : 0); }
  bool has_pressure() const { return hyd_ != nullptr; }
  bool has_coolant_state() const { return cool_ && cool_->has_state(); }
  // The coolant's temperature at state y (cooled tubes only).
  double coolant_T(const double* y) const { return has_coolant_state() ? y[ic_] : cool_->T_c; }
  int coolant_index() const { return ic_; }
  // The pressure at state y: its own state with a pressure drop, else the stage's.
  double pressure(const double* y) const { return hyd_ ? y[n_ + 2] : P_; }
  const Mechanism& mech() const { return *mech_; }

  int rhs(const double* y, double* ydot) {
    const Mechanism& mech = *mech_;
    const double T = y[n_];
    if (!(T > 0) || !std::isfinite(T)) return 1;  // recoverable: CVODE shortens the step
    double Ft = 0;
    for (int i = 0; i < n_; ++i) Ft += std::max(y[i], 0.0);
    if (!(Ft > 0)) return 1;
    P_now_ = pressure(y);
    if (!(P_now_ > 0) || !std::isfinite(P_now_)) return 1;
    mech.rates(T, P_now_, y, r_.data());
    if (pellet_) update_eta(T, y, Ft);
    for (int i = 0; i < n_; ++i) ydot[i] = 0;
    double q = 0;  // sum_j dH_j R_j, W/m3
    for (int j = 0; j < nr_; ++j) {
      const double R = r_[j] * beta_[j] * eta_[j];
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s) ydot[st_species_[s]] += st_nu_[s] * R;
      q += mech.dH(j, T) * R;
    }
    if (cool_) {
      const double w = cool_->Ua * (T - coolant_T(y));  // W/m3 through the wall
      ydot[n_] = -(q + w) / mech.heat_capacity_flow(T, y);
      ydot[n_ + 1] = -w;
      if (cool_->has_state()) ydot[ic_] = cool_->sign * w * cool_->inv_mcp;
    } else if (heat_ == HeatMode::Adiabatic) {
      ydot[n_] = -q / mech.heat_capacity_flow(T, y);
      ydot[n_ + 1] = 0;
    } else {
      ydot[n_] = 0;
      ydot[n_ + 1] = q;
    }
    if (hyd_) ydot[n_ + 2] = pressure_gradient(y, T, Ft);
    for (int i = 0; i < size(); ++i)
      if (!std::isfinite(ydot[i])) return 1;
    return 0;
  }

  // Column-major dense Jacobian.
  int jac(const double* y, double* J) {
    const Mechanism& mech = *mech_;
    const int N = size();
    std::fill(J, J + N * N, 0.0);
    const double T = y[n_];
    if (!(T > 0)) return 1;
    P_now_ = pressure(y);
    if (!(P_now_ > 0)) return 1;
    mech.rates_and_jacobian(T, P_now_, y, r_.data(), dr_dF_, dr_dT_, scratch_);
    if (hyd_) mech.rates_pressure_derivative(T, P_now_, y, dr_dP_.data(), scratch_);
    if (pellet_) {
      if (update_eta(T, y) != 0) return 1;
      for (int j = 0; j < nr_; ++j) {
        r_[j] *= eta_[j];
        dr_dF_.row(j) *= eta_[j];
        dr_dT_(j) *= eta_[j];
        dr_dP_[j] *= eta_[j];
      }
    }
    auto at = [&](int row, int col) -> double& { return J[row + N * col]; };
    for (int j = 0; j < nr_; ++j) {
      for (int s = st_start_[j]; s < st_start_[j + 1]; ++s) {
        const int i = st_species_[s];
        const double c = st_nu_[s] * beta_[j];
        for (int k = 0; k < n_; ++k) at(i, k) += c * dr_dF_(j, k);
        at(i, n_) += c * dr_dT_(j);
        if (hyd_) at(i, n_ + 2) += c * dr_dP_[j];
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
    if (hyd_) pressure_rows(y, T, [&](int row, int col) -> double& { return at(row, col); });
    if (cool_) cooling_rows(y, T, [&](int row, int col) -> double& { return at(row, col); });
    return 0;
  }

  // Sparsity pattern of the sparse Jacobian (CSC) and where each term of
  // sparse_jac() goes in it. Rebuilt per stage: O((n+2)^2), far below one
  // integration of a mechanism large enough to use it.
  void build_pattern(SparsePattern& pat) {
    const Mechanism& mech = *mech_;
    const int N = size();
    const int T_row = heat_ == HeatMode::Adiabatic ? n_ : n_ + 1;  // the dense energy row
    // The rate species r_j depends on directly (Mechanism::reads). The others
    // (products of an irreversible reaction) have dr_j/dF_k = 0 exactly;
    // in the pattern they would only add LU fill-in, which grows faster
    // than the network (synthetic 200-species stage: nnz(L+U) 11048 ->
    // 5929; 400 species: 42118 -> 21412).
    dep_start_.assign(1, 0);
    dep_p_.clear();
    for (int j = 0; j < nr_; ++j) {
      const auto& ks = mech.rate_species(j);
      for (std::size_t p = 0; p < ks.size(); ++p)
        if (mech.reads(j, static_cast<int>(p))) dep_p_.push_back(static_cast<int>(p));
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
    if (hyd_) {
      // The pressure column (every species row and the energy row) and the
      // pressure row (every flow through the density, and T).
      for (int i = 0; i < n_; ++i) mark(i, n_ + 2);
      mark(T_row, n_ + 2);
      for (int k = 0; k <= n_; ++k) mark(n_ + 2, k);
    }
    if (cool_) {
      mark(n_ + 1, n_);  // the wall's heat reads T
      if (has_coolant_state()) {
        mark(T_row, ic_);
        mark(n_ + 1, ic_);
        mark(ic_, n_);
      }
    }
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
    row_E_.resize(n_ + 1 + (hyd_ ? 1 : 0));
    for (int k = 0; k <= n_; ++k) row_E_[k] = at(T_row, k);
    if (hyd_) {
      row_E_[n_ + 1] = at(T_row, n_ + 2);  // the energy row's pressure entry
      col_P_.resize(n_);
      for (int i = 0; i < n_; ++i) col_P_[i] = at(i, n_ + 2);
      row_P_.resize(n_ + 2);
      for (int k = 0; k <= n_; ++k) row_P_[k] = at(n_ + 2, k);
      row_P_[n_ + 1] = at(n_ + 2, n_ + 2);
    }
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
    P_now_ = pressure(y);
    if (!(P_now_ > 0)) return 1;
    mech.rates_and_sparse_jacobian(T, P_now_, y, r_.data(), direct_.data(), dilution_.data(),
                                   dr_dT_.data(), scratch_);
    if (hyd_) mech.rates_pressure_derivative(T, P_now_, y, dr_dP_.data(), scratch_);
    if (pellet_) {
      if (update_eta(T, y) != 0) return 1;
      for (int j = 0; j < nr_; ++j) {
        const int np = static_cast<int>(mech.rate_species(j).size());
        for (int p = 0; p < np; ++p) direct_[mech.direct_offset(j) + p] *= eta_[j];
        r_[j] *= eta_[j];
        dilution_[j] *= eta_[j];
        dr_dT_(j) *= eta_[j];
        dr_dP_[j] *= eta_[j];
      }
    }
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
        if (hyd_) values[col_P_[i]] += c * dr_dP_[j];
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
    energy_rows(y, T, q, dq_dT, [&](int, int col) -> double& {
      return values[row_E_[col == n_ + 2 ? n_ + 1 : col]];
    });
    if (hyd_)
      pressure_rows(y, T, [&](int, int col) -> double& {
        return values[row_P_[col == n_ + 2 ? n_ + 1 : col]];  // only the P row is written
      });
    if (cool_)
      cooling_rows(y, T, [&](int row, int col) -> double& {
        return values[pos_[row + static_cast<std::size_t>(size()) * col]];
      });
    return 0;
  }

  // eta_j at the last evaluated state (all 1 without effectiveness factors).
  const std::vector<double>& eta() const { return eta_; }
  bool has_pellet() const { return pellet_ != nullptr; }
  // eta_j at state y (for the profile points); 0 on success.
  int update_eta(double T, const double* y) {
    P_now_ = pressure(y);
    double Ft = 0;
    for (int i = 0; i < n_; ++i) Ft += std::max(y[i], 0.0);
    if (!(Ft > 0) || !(T > 0)) return 1;
    update_eta(T, y, Ft);
    return 0;
  }

 private:
  void bind_pellet(const Mechanism& mech, const PelletBinding* pellet) {
    pellet_ = pellet;
    eta_.assign(mech.n_reactions(), 1.0);
    if (!pellet) return;
    const PelletSpec& ps = *pellet->spec;
    transport_.shape = ps.shape;
    transport_.L = pellet_length_scale(ps.shape, ps.size, ps.length);
    transport_.D = ps.D_eff;
    in_pellet_.bind(mech, pellet->multipliers);
    solver_ = PelletSolver(PelletSolveOptions{.rtol = pellet->rtol});
    // Thiele: each reaction's key is its first reactant with a nonzero order.
    key_.assign(mech.n_reactions(), -1);
    for (int j = 0; j < mech.n_reactions(); ++j) {
      const auto& rx = mech.reactions()[j];
      for (int i = 0; i < mech.n_species() && key_[j] < 0; ++i)
        if (rx.nu[i] < 0 && rx.rate.orders[i] != 0) key_[j] = i;
    }
    c_surface_.resize(mech.n_species());
  }

  // eta_j at the bulk state: surface concentrations = bulk (no film).
  void update_eta(double T, const double* y, double Ft) {
    const Mechanism& mech = *mech_;
    double scale = 0;
    if (mech.phase() == Phase::Gas) {
      scale = P_now_ / (Ft * kGasConstant * T);
    } else {
      for (int i = 0; i < n_; ++i) c_surface_[i] = std::max(y[i], 0.0);
      scale = 1.0 / mech.liquid_volume_flow(c_surface_.data());
    }
    for (int i = 0; i < n_; ++i) c_surface_[i] = std::max(y[i], 0.0) * scale;
    in_pellet_.set_temperature(T);
    if (pellet_->spec->effectiveness == EffectivenessModel::Pellet) {
      solver_.solve(in_pellet_, transport_, c_surface_.data(), eta_.data());
    } else {
      for (int j = 0; j < nr_; ++j)
        eta_[j] = key_[j] < 0
                      ? 1.0
                      : thiele_effectiveness(in_pellet_, transport_, c_surface_.data(), j, key_[j]);
    }
  }

  // The energy row (adiabatic: T; isothermal: Q) from q, dq/dT and dq_dF_.
  template <class At>
  void energy_rows(const double* y, double T, double q, double dq_dT, At at) {
    const Mechanism& mech = *mech_;
    T_last_ = T;
    if (heat_ == HeatMode::Adiabatic) {
      // A cooled tube: the wall's heat w = Ua (T - T_c) joins q.
      const double w = cool_ ? cool_->Ua * (T - coolant_T(y)) : 0.0;
      q += w;
      dq_dT += cool_ ? cool_->Ua : 0.0;
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
      if (hyd_) at(n_, n_ + 2) = -dq_dP() / C;
    } else {
      for (int k = 0; k < n_; ++k) at(n_ + 1, k) = dq_dF_[k];
      at(n_ + 1, n_) = dq_dT;
      if (hyd_) at(n_ + 1, n_ + 2) = dq_dP();
    }
  }

  // A cooled tube's entries beyond energy_rows: the heat row Q' = -w, the
  // T row's coolant column, and the coolant's row (with a coolant flow).
  template <class At>
  void cooling_rows(const double* y, double T, At at) {
    const double Ua = cool_->Ua;
    at(n_ + 1, n_) = -Ua;
    if (!has_coolant_state()) return;
    at(n_, ic_) = Ua / mech_->heat_capacity_flow(T, y);
    at(n_ + 1, ic_) = Ua;
    const double g = cool_->sign * Ua * cool_->inv_mcp;
    at(ic_, n_) = g;
    at(ic_, ic_) = -g;
  }

  // sum_j dH_j beta_j dr_j/dP (dr_dP_ already times eta_j).
  double dq_dP() const {
    double s = 0;
    for (int j = 0; j < nr_; ++j) s += mech_->dH(j, T_last_) * beta_[j] * dr_dP_[j];
    return s;
  }

  // 1/rho of the fluid at state y (m3/kg): an ideal gas at the local T and
  // P, or the liquid by ideal mixing (incompressible).
  double specific_volume(const double* y, double T, double Ft) const {
    if (mech_->phase() == Phase::Gas) return Ft * kGasConstant * T / (P_now_ * hyd_->mass_flow);
    double v = 0;
    for (int i = 0; i < n_; ++i) v += mech_->dilution_weight(i, y) * std::max(y[i], 0.0);
    return v / hyd_->mass_flow;
  }

  // dP/dV = (dP/dz) / A by Ergun at the local density and viscosity.
  double pressure_gradient(const double* y, double T, double Ft) const {
    const HydraulicBinding& h = *hyd_;
    const double G = h.mass_flow / h.area;
    return ergun_gradient(G, 1.0 / specific_volume(y, T, Ft), h.mu.at(T), h.d_p, h.eps) / h.area;
  }

  // The pressure row: g = dP/dV = -K(T) / rho with K the Ergun factor at
  // T (the viscous term's mu(T)); 1/rho = Ft R T / (P mdot) for a gas and
  // sum v_i F_i / mdot for a liquid.
  template <class At>
  void pressure_rows(const double* y, double T, At at) {
    double Ft = 0;
    for (int i = 0; i < n_; ++i) Ft += std::max(y[i], 0.0);
    const HydraulicBinding& h = *hyd_;
    const double g = pressure_gradient(y, T, Ft);
    const double G = h.mass_flow / h.area;
    const double viscous = kErgunViscous * (1 - h.eps) / h.d_p;
    const double bracket = viscous * h.mu.at(T) + kErgunInertial * G;
    const double dlnK_dT = viscous * h.mu.slope(T) / bracket;
    const int row = n_ + 2;
    if (mech_->phase() == Phase::Gas) {
      for (int k = 0; k < n_; ++k) at(row, k) = y[k] > 0 ? g / Ft : 0.0;
      at(row, n_) = g * (1.0 / T + dlnK_dT);
      at(row, n_ + 2) = -g / P_now_;
    } else {
      const double v = specific_volume(y, T, Ft) * h.mass_flow;
      for (int k = 0; k < n_; ++k) at(row, k) = g * mech_->dilution_weight(k, y) / v;
      at(row, n_) = g * dlnK_dT;
      at(row, n_ + 2) = 0.0;
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
  std::vector<double> dr_dP_;  // with a pressure drop only
  std::vector<double> dq_dF_;
  const HydraulicBinding* hyd_ = nullptr;
  const CoolingBinding* cool_ = nullptr;
  int ic_ = 0;         // the coolant's state (with a coolant flow)
  double P_now_ = 0;   // the pressure of the state last evaluated
  double T_last_ = 0;  // its temperature (energy_rows)
  Mechanism::Scratch scratch_;
  std::vector<int> st_start_, st_species_;
  std::vector<double> st_nu_;
  // Sparse form only.
  std::vector<int> pos_;      // (row, col) -> index in the pattern, -1 outside
  std::vector<int> scatter_;  // per (reaction, stoichiometric entry, dependency)
  std::vector<int> col_T_;    // entry (i, T) per species row
  std::vector<int> row_E_;    // entry (energy row, k) for k = 0..n, then (energy row, P)
  std::vector<int> col_P_;    // entry (i, P) per species row (pressure drop)
  std::vector<int> row_P_;    // entry (P row, k) for k = 0..n, then (P, P)
  std::vector<double> direct_, dilution_;
  // Per reaction j, dep_p_[dep_start_[j] .. dep_start_[j+1]) are the
  // positions in rate_species(j) that r_j depends on (see build_pattern).
  std::vector<int> dep_start_, dep_p_;
  int nnz_ = 0;
  // Effectiveness factors (bind_pellet); eta_ is all 1 without them.
  const PelletBinding* pellet_ = nullptr;
  std::vector<double> eta_;
  MechanismInPellet in_pellet_;
  PelletTransport transport_;
  PelletSolver solver_;
  std::vector<int> key_;
  std::vector<double> c_surface_;
};

// True when an integrator made with options a can run with options b.
inline bool same_options(const CvodeOptions& a, const CvodeOptions& b) {
  return a.rtol == b.rtol && a.atol == b.atol && a.max_steps == b.max_steps &&
         a.max_order == b.max_order;
}

// with_pressure: the state carries P (a bed with a pressure drop);
// T_c0: the coolant's temperature at the inlet (a coolant flow).
inline void initial_state(const Stream& in, std::vector<double>& y, bool with_pressure = false,
                          std::optional<double> T_c0 = std::nullopt) {
  y.assign(in.F.begin(), in.F.end());
  y.push_back(in.T);
  y.push_back(0.0);
  if (with_pressure) y.push_back(in.P);
  if (T_c0) y.push_back(*T_c0);
}

inline void state_scale(const Mechanism& mech, const Stream& in, std::vector<double>& s,
                        bool with_pressure = false, bool with_coolant = false) {
  const double Ft = in.total_flow();
  s.assign(in.F.size(), Ft);
  s.push_back(in.T);
  s.push_back(std::max(1.0, mech.heat_capacity_flow(in.T, in.F.data()) * in.T));
  if (with_pressure) s.push_back(in.P);
  if (with_coolant) s.push_back(in.T);
}

}  // namespace rxtrain::detail
