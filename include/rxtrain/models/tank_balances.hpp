// The tank balances: the steady mole and energy balances of a stirred
// tank as residuals of its outlet flows and temperature (and their
// analytic Jacobian). The one home of these balances: stages/cstr.cpp
// solves them by Newton with continuation; a new term (a cooled tank's
// UA (T - T_coolant)) is added here. Internal to the library
// (rxtrain::detail), not API.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"

namespace rxtrain::detail {

// The tank's balances in SI, unscaled, with R_j = beta_j r_j:
//   g_i = F_i,in - F_i + V sum_j nu_ij R_j                                 (mol/s)
//   adiabatic:  g_n = sum_i F_i,in (hs_i(T) - hs_i(T_in)) + V sum_j R_j dH_j(T)   (W)
//   cooled:     g_n = (adiabatic g_n) + UA (T - T_coolant)                 (W)
//   isothermal: g_n = T - T_in                                             (K)
// The adiabatic row is sum F_in h(T_in) = sum F h(T) with the mole balances
// substituted (dH_j(T) = dH_298 + sum_i nu_ij hs_i(T), kinetics.hpp).
// Kept in a CstrWorkspace: reset() for each tank reuses the buffers.
class CstrBalances {
 public:
  // `cooling` (adiabatic tanks only): the wall's UA and coolant.
  void reset(const Mechanism& mech, const std::vector<double>& beta, HeatMode heat,
             const Stream& inlet, std::optional<TankCooling> cooling = std::nullopt) {
    mech_ = &mech;
    UA_ = cooling && heat == HeatMode::Adiabatic ? cooling->UA : 0.0;
    T_coolant_ = cooling ? cooling->T_coolant : 0.0;
    beta_ = beta;
    heat_ = heat;
    in_ = inlet;
    n_ = mech.n_species();
    nr_ = mech.n_reactions();
    hs_in_.resize(n_);
    for (int i = 0; i < n_; ++i) hs_in_[i] = mech.species()[i].thermo.h_sensible(inlet.T);
    r_.resize(nr_);
    dr_dF_.resize(nr_, n_);
    dr_dT_.resize(nr_);
  }

  int n() const { return n_; }
  HeatMode heat() const { return heat_; }
  const Stream& inlet() const { return in_; }
  const Mechanism& mechanism() const { return *mech_; }

  // g has n + 1 entries; dg (if given) is (n + 1) x (n + 2): derivatives
  // with respect to [F_1..F_n, T, V].
  void eval(const double* F, double T, double V, Eigen::VectorXd& g, Eigen::MatrixXd* dg) {
    const Mechanism& mech = *mech_;
    std::vector<double>& r = r_;
    Eigen::MatrixXd& dr_dF = dr_dF_;
    Eigen::VectorXd& dr_dT = dr_dT_;
    if (dg)
      mech.rates_and_jacobian(T, in_.P, F, r.data(), dr_dF, dr_dT, scratch_);
    else
      mech.rates(T, in_.P, F, r.data());
    for (int i = 0; i < n_; ++i) g[i] = in_.F[i] - F[i];
    double q = 0;  // sum_j R_j dH_j(T), W/m3
    for (int j = 0; j < nr_; ++j) {
      const auto& nu = mech.reactions()[j].nu;
      const double R = beta_[j] * r[j];
      for (int i = 0; i < n_; ++i)
        if (nu[i] != 0) g[i] += V * nu[i] * R;
      q += R * mech.dH(j, T);
    }
    if (heat_ == HeatMode::Adiabatic) {
      double h = 0;
      for (int i = 0; i < n_; ++i)
        h += in_.F[i] * (mech.species()[i].thermo.h_sensible(T) - hs_in_[i]);
      g[n_] = h + V * q + UA_ * (T - T_coolant_);
    } else {
      g[n_] = T - in_.T;
    }
    if (!dg) return;

    Eigen::MatrixXd& d = *dg;
    d.setZero();
    for (int i = 0; i < n_; ++i) d(i, i) = -1.0;
    for (int j = 0; j < nr_; ++j) {
      const auto& nu = mech.reactions()[j].nu;
      const double dHj = mech.dH(j, T);
      for (int i = 0; i < n_; ++i) {
        if (nu[i] == 0) continue;
        const double c = V * nu[i] * beta_[j];
        for (int k = 0; k < n_; ++k) d(i, k) += c * dr_dF(j, k);
        d(i, n_) += c * dr_dT(j);
        d(i, n_ + 1) += nu[i] * beta_[j] * r[j];
      }
      if (heat_ == HeatMode::Adiabatic) {
        for (int k = 0; k < n_; ++k) d(n_, k) += V * beta_[j] * dHj * dr_dF(j, k);
        d(n_, n_) += V * beta_[j] * (mech.dCp(j, T) * r[j] + dHj * dr_dT(j));
        d(n_, n_ + 1) += beta_[j] * r[j] * dHj;
      }
    }
    if (heat_ == HeatMode::Adiabatic)
      d(n_, n_) += mech.heat_capacity_flow(T, in_.F.data()) + UA_;
    else
      d(n_, n_) = 1.0;
  }

  // The wall's UA, W/K (0: no cooling), and the coolant's T, K.
  double UA() const { return UA_; }
  double T_coolant() const { return T_coolant_; }

  // The heat the wall of a cooled tank adds to the stream at T: -UA (T -
  // T_coolant), W.
  double wall_duty(double T) const { return -UA_ * (T - T_coolant_); }

  // The tank's dynamic balances linearized at a steady state (F, T) of
  // volume V: J = d(dx/dt)/dx on x = [N_1..N_n, T], holdups N_i in mol,
  // (n + 1) x (n + 1), in 1/s. `C_vessel` (J/K) adds to the contents' heat
  // capacity. Adiabatic or cooled tanks only (an isothermal tank's T is
  // held by its duty: see species_jacobian). Derivation and the outflow
  // rules: docs/stability.md.
  void dynamic_jacobian(const double* F, double T, double V, double C_vessel, Eigen::MatrixXd& J);
  // An isothermal tank's: n x n, on the holdups at fixed T.
  void species_jacobian(const double* F, double T, double V, Eigen::MatrixXd& J);

  // Heat that holds the contents at T: V sum_j R_j dH_j(T), W (heat added
  // to the stream; negative for a cooled exothermic tank).
  double duty(const double* F, double T, double V) {
    mech_->rates(T, in_.P, F, r_.data());
    double q = 0;
    for (int j = 0; j < nr_; ++j) q += beta_[j] * r_[j] * mech_->dH(j, T);
    return V * q;
  }

  // Rate of reaction j per reactor volume, R_j = beta_j r_j.
  double volumetric_rate(const double* F, double T, int j) {
    mech_->rates(T, in_.P, F, r_.data());
    return r_[j] * beta_[j];
  }

 private:
  const Mechanism* mech_ = nullptr;
  std::vector<double> beta_;
  HeatMode heat_ = HeatMode::Adiabatic;
  Stream in_;
  double UA_ = 0, T_coolant_ = 0;
  int n_ = 0, nr_ = 0;
  std::vector<double> hs_in_;
  // Scratch of eval(), duty() and volumetric_rate().
  std::vector<double> r_;
  Eigen::MatrixXd dr_dF_;
  Eigen::VectorXd dr_dT_;
  Mechanism::Scratch scratch_;
};

}  // namespace rxtrain::detail
