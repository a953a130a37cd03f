#include "rxtrain/models/tank_stability.hpp"

#include <Eigen/Eigenvalues>
#include <algorithm>

#include "rxtrain/base/error.hpp"
#include "rxtrain/models/tank_balances.hpp"

namespace rxtrain {

namespace detail {

// d(dx/dt)/dx on x = [N, T] (docs/stability.md). At the steady state the
// holdups are N_i = lambda F_i with lambda = V / q_out, q_out the outlet's
// volumetric flow; every rate law sees concentrations only, so
// dR_j/dN_k = beta_j dr_j/dF_k / lambda, and the rows follow from the
// steady Jacobian dg of eval() at the same point.
void CstrBalances::dynamic_jacobian(const double* F, double T, double V, double C_vessel,
                                    Eigen::MatrixXd& J) {
  const int n = n_;
  const bool energy = heat_ == HeatMode::Adiabatic;
  Eigen::VectorXd g(n + 1);
  Eigen::MatrixXd dg(n + 1, n + 2);
  eval(F, T, V, g, &dg);  // also leaves r_, dr_dF_, dr_dT_ at (F, T)
  const Mechanism& mech = *mech_;
  const bool liquid = mech.phase() == Phase::Liquid;
  const double q = mech.volumetric_flow(T, in_.P, F);
  const double lambda = V / q;  // s
  double Ft = 0;
  for (int i = 0; i < n; ++i) Ft += F[i];
  // The change of the contents' volume (liquid, m3 per mol of reaction) or
  // moles (gas) by each reaction, times its multiplier.
  Eigen::VectorXd dv = Eigen::VectorXd::Zero(nr_);
  for (int j = 0; j < nr_; ++j) {
    double s = 0;
    for (int i = 0; i < n; ++i)
      s += mech.reactions()[j].nu[i] *
           (liquid ? mech.species()[i].liquid_molar_volume().value_or(0.0) : 1.0);
    dv[j] = s * beta_[j];
  }
  const Eigen::RowVectorXd s_F = dv.transpose() * dr_dF_;  // sum_j dv_j beta_j dr_j/dF_k
  const double s_T = dv.dot(dr_dT_);
  const int m = energy ? n + 1 : n;
  J.resize(m, m);
  if (energy) {
    const double Ch = lambda * mech.heat_capacity_flow(T, F) + C_vessel;  // J/K
    for (int k = 0; k < n; ++k) J(n, k) = -dg(n, k) / lambda / Ch;
    J(n, n) = -dg(n, n) / Ch;
  }
  for (int i = 0; i < n; ++i) {
    for (int k = 0; k < n; ++k) J(i, k) = dg(i, k) / lambda;
    if (energy) J(i, n) = dg(i, n);
    if (liquid) {
      // q_out = q_in + V sum_j dv_j R_j and F_out,i = N_i q_out / V.
      for (int k = 0; k < n; ++k) J(i, k) -= F[i] * s_F[k];
      if (energy) J(i, n) -= lambda * F[i] * s_T;
    } else {
      // F_out,t = F_in,t + V sum_j dnu_j R_j + (N*/T) dT/dt, N* = P V/(R T)
      // and F_out,i = N_i F_out,t / N*.
      const double y = F[i] / Ft;
      for (int k = 0; k < n; ++k) {
        J(i, k) -= y * V * s_F[k] / lambda;
        if (energy) J(i, k) -= lambda * F[i] / T * J(n, k);
      }
      if (energy) J(i, n) -= F[i] / T + y * V * s_T + lambda * F[i] / T * J(n, n);
    }
  }
}

void CstrBalances::species_jacobian(const double* F, double T, double V, Eigen::MatrixXd& J) {
  const HeatMode keep = heat_;
  heat_ = HeatMode::Isothermal;  // the T row is dropped
  dynamic_jacobian(F, T, V, 0.0, J);
  heat_ = keep;
}

}  // namespace detail

namespace {
// Relative to the largest eigenvalue (see tank_stability); 1e-7, ten times
// sqrt(double epsilon), is far below any oscillation a plant would see
// (a period a million times the fastest time constant).
constexpr double kRealPairTolerance = 1e-7;
}  // namespace

std::string_view stability_kind_name(StabilityKind kind) {
  switch (kind) {
    case StabilityKind::Stable:
      return "stable";
    case StabilityKind::Saddle:
      return "saddle";
    case StabilityKind::Unstable:
      return "unstable";
    case StabilityKind::Oscillatory:
      return "oscillatory";
  }
  return "stable";
}

StabilityKind classify_eigenvalues(std::span<const std::complex<double>> eigenvalues) {
  int real_up = 0;
  bool complex_up = false;
  for (const auto& e : eigenvalues) {
    if (!(e.real() >= 0)) continue;
    if (e.imag() != 0)
      complex_up = true;
    else
      ++real_up;
  }
  if (complex_up) return StabilityKind::Oscillatory;
  if (real_up == 0) return StabilityKind::Stable;
  return real_up == 1 ? StabilityKind::Saddle : StabilityKind::Unstable;
}

TankStability tank_stability(detail::CstrBalances& b, const double* F, double T, double V,
                             double C_vessel) {
  Eigen::MatrixXd J;
  if (b.heat() == HeatMode::Adiabatic)
    b.dynamic_jacobian(F, T, V, C_vessel, J);
  else
    b.species_jacobian(F, T, V, J);
  if (!J.allFinite())
    throw SolverError("the linearized tank balances are not finite at the steady state");
  Eigen::EigenSolver<Eigen::MatrixXd> es(J, false);
  if (es.info() != Eigen::Success)
    throw SolverError("the eigenvalues of the linearized tank balances did not converge");
  TankStability out;
  double scale = 0;
  for (Eigen::Index k = 0; k < es.eigenvalues().size(); ++k)
    scale = std::max(scale, std::abs(es.eigenvalues()[k]));
  for (Eigen::Index k = 0; k < es.eigenvalues().size(); ++k) {
    std::complex<double> e = es.eigenvalues()[k];
    // A double real eigenvalue (a tank's flushing modes often coincide at
    // -1/tau) comes out of the QR iteration as a pair split by about the
    // square root of the rounding error, sqrt(1e-16) of the largest
    // eigenvalue: such a pair is real, not an oscillation.
    if (std::abs(e.imag()) <= kRealPairTolerance * scale) e = {e.real(), 0.0};
    out.eigenvalues.push_back(e);
  }
  std::sort(out.eigenvalues.begin(), out.eigenvalues.end(),
            [](const std::complex<double>& x, const std::complex<double>& y) {
              return x.real() != y.real() ? x.real() > y.real() : x.imag() > y.imag();
            });
  out.kind = classify_eigenvalues(out.eigenvalues);
  return out;
}

}  // namespace rxtrain
