#include "adiabatic_bed.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/energy_balance.hpp"

namespace rxtrain::detail {

void gauss_legendre(int n, std::vector<double>& nodes, std::vector<double>& weights) {
  nodes.assign(n, 0.0);
  weights.assign(n, 0.0);
  for (int i = 0; i < (n + 1) / 2; ++i) {
    // Tricomi's first guess for the i-th root, then Newton on P_n.
    double x = std::cos(std::numbers::pi * (i + 0.75) / (n + 0.5));
    double dp = 1;
    for (int it = 0; it < 100; ++it) {
      double p0 = 1, p1 = x;
      for (int k = 2; k <= n; ++k) {
        const double p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      if (n == 1) p0 = 1;
      dp = n * (x * p1 - p0) / (x * x - 1);
      const double dx = p1 / dp;
      x -= dx;
      if (std::abs(dx) < 1e-16) break;
    }
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    weights[i] = weights[n - 1 - i] = 2 / ((1 - x * x) * dp * dp);
  }
}

AdiabaticBedModel::AdiabaticBedModel(const Mechanism& mech, const Stream& feed,
                                     const ConversionBasis& basis, int j, int panels, int nodes,
                                     const EquilibriumOptions& equilibrium, double activity)
    : mech_(mech),
      feed_(feed),
      basis_(basis),
      j_(j),
      panels_(panels),
      equilibrium_(equilibrium),
      activity_(activity) {
  const auto& nu = mech.reactions()[j].nu;
  xi_per_X_ = basis.F_key_feed / std::abs(nu[basis.key]);
  // X at which the first reactant runs out.
  X_cap_ = std::numeric_limits<double>::infinity();
  for (int i = 0; i < mech.n_species(); ++i)
    if (nu[i] < 0) X_cap_ = std::min(X_cap_, feed.F[i] / (-nu[i] * xi_per_X_));
  gauss_legendre(nodes, nodes_, weights_);
}

std::vector<double> AdiabaticBedModel::flows(double X) const {
  std::vector<double> F;
  flows_into(X, F);
  return F;
}

void AdiabaticBedModel::flows_into(double X, std::vector<double>& F) const {
  F = feed_.F;
  const auto& nu = mech_.reactions()[j_].nu;
  const double xi = xi_per_X_ * X;
  for (std::size_t i = 0; i < F.size(); ++i) F[i] = std::max(F[i] + nu[i] * xi, 0.0);
}

double AdiabaticBedModel::enthalpy_flow(double X, double T) const {
  const auto F = flows(X);
  return mech_.sensible_enthalpy_flow(T, F.data());
}

double AdiabaticBedModel::temperature(double X_in, double T_in, double X) const {
  if (X == X_in) return T_in;
  const double dH298 = mech_.reactions()[j_].dH_298;
  std::vector<double>& F_in = scratch_.F_in;
  flows_into(X_in, F_in);
  const double H = mech_.sensible_enthalpy_flow(T_in, F_in.data()) + xi_per_X_ * (X_in - X) * dH298;
  // First guess: the heat of reaction at the inlet over the inlet's heat
  // capacity flow.
  double T = T_in - xi_per_X_ * (X - X_in) * mech_.dH(j_, T_in) /
                        mech_.heat_capacity_flow(T_in, F_in.data());
  if (!(T > 0)) T = 0.5 * T_in;
  flows_into(X, scratch_.F);
  try {
    return temperature_for_enthalpy(mech_, scratch_.F, H, T);
  } catch (const SolverError&) {
    throw SolverError(
        fmt::format("optimize: the energy balance of an adiabatic bed from X = {:.6f} at {} has no "
                    "temperature at X = {:.6f}",
                    X_in, temperature_words(T_in), X));
  }
}

double AdiabaticBedModel::rate(double X, double T) const {
  flows_into(X, scratch_.F_rate);
  scratch_.r.resize(mech_.n_reactions());
  mech_.rates(T, feed_.P, scratch_.F_rate.data(), scratch_.r.data());
  return activity_ * scratch_.r[j_];
}

AdiabaticBedModel::RatePartials AdiabaticBedModel::rate_partials(double X, double T) const {
  flows_into(X, scratch_.F_rate);
  const int n = mech_.n_species(), nr = mech_.n_reactions();
  scratch_.r.resize(nr);
  scratch_.dr_dF.resize(nr, n);
  scratch_.dr_dT.resize(nr);
  mech_.rates_and_jacobian(T, feed_.P, scratch_.F_rate.data(), scratch_.r.data(), scratch_.dr_dF,
                           scratch_.dr_dT, scratch_.mech);
  const auto& nu = mech_.reactions()[j_].nu;
  RatePartials p;
  p.r = activity_ * scratch_.r[j_];
  p.dr_dT = activity_ * scratch_.dr_dT(j_);
  for (int i = 0; i < n; ++i) p.dr_dX += activity_ * scratch_.dr_dF(j_, i) * nu[i] * xi_per_X_;
  return p;
}

AdiabaticBedModel::LineSlopes AdiabaticBedModel::line_slopes(double X_in, double T_in, double X,
                                                             double T) const {
  flows_into(X, scratch_.F);
  const double C = mech_.heat_capacity_flow(T, scratch_.F.data());
  flows_into(X_in, scratch_.F_in);
  LineSlopes s;
  // d/dX of sum F(X) hs(T) + xi X dH_298 = const: xi dH(T) + C dT/dX = 0.
  s.dT_dX = -xi_per_X_ * mech_.dH(j_, T) / C;
  s.dT_dT_in = mech_.heat_capacity_flow(T_in, scratch_.F_in.data()) / C;
  s.dT_dX_in = xi_per_X_ * mech_.dH(j_, T_in) / C;
  return s;
}

AdiabaticBedModel::EndSlopes AdiabaticBedModel::equilibrium_end_slopes(double X_in, double T_in,
                                                                       double X_e) const {
  // r(X_e, T(X_e; X_in, T_in)) = 0: dX_e/dθ = -r_T T_θ / (r_X + r_T T_X).
  const double T_e = temperature(X_in, T_in, X_e);
  const RatePartials p = rate_partials(X_e, T_e);
  const LineSlopes l = line_slopes(X_in, T_in, X_e, T_e);
  const double along = p.dr_dX + p.dr_dT * l.dT_dX;
  EndSlopes e;
  if (along == 0 || !std::isfinite(along)) return e;
  e.dX_in = -p.dr_dT * l.dT_dX_in / along;
  e.dT_in = -p.dr_dT * l.dT_dT_in / along;
  return e;
}

AdiabaticBedModel::SizeSlopes AdiabaticBedModel::size_slopes(double X_in, double T_in, double X_out,
                                                             double X_e) const {
  SizeSlopes out;
  out.size = size(X_in, T_in, X_out, X_e);
  if (!(X_out > X_in) || !std::isfinite(out.size)) return out;
  // W = xi ∫ dX / r(X, T(X)): the ends by the integrand, the inlet's
  // T and X also through the line, -r_T / r² · ∂T/∂θ, on size()'s nodes.
  const double u_a = -std::log(X_e - X_in);
  const double u_b = -std::log(X_e - X_out);
  const double h = (u_b - u_a) / panels_;
  double by_T_in = 0, by_X_in = 0;
  for (int p = 0; p < panels_; ++p) {
    const double mid = u_a + (p + 0.5) * h;
    for (std::size_t k = 0; k < nodes_.size(); ++k) {
      const double u = mid + 0.5 * h * nodes_[k];
      const double gap = std::exp(-u);
      const double X = X_e - gap;
      const double T = temperature(X_in, T_in, X);
      const RatePartials r = rate_partials(X, T);
      const LineSlopes l = line_slopes(X_in, T_in, X, T);
      const double w = weights_[k] * 0.5 * h * gap * (-r.dr_dT / (r.r * r.r));
      by_T_in += w * l.dT_dT_in;
      by_X_in += w * l.dT_dX_in;
    }
  }
  out.dT_in = xi_per_X_ * by_T_in;
  out.dX_in = xi_per_X_ * (by_X_in - 1.0 / rate(X_in, T_in));
  out.dX_out = xi_per_X_ / rate(X_out, temperature(X_in, T_in, X_out));
  return out;
}

double AdiabaticBedModel::equilibrium_end(double X_in, double T_in) const {
  // The optimizer returns to points it has seen (line searches, polish
  // rounds, the conditions' differences of one bed): an exact-match memo
  // (the function is pure) saves the equilibrium solve.
  for (const auto& e : ends_)
    if (e.X_in == X_in && e.T_in == T_in) return e.X_e;
  const double X_e = solve_equilibrium_end(X_in, T_in);
  if (ends_.size() < kEndMemo)
    ends_.push_back({X_in, T_in, X_e});
  else
    ends_[next_end_++ % kEndMemo] = {X_in, T_in, X_e};
  return X_e;
}

double AdiabaticBedModel::solve_equilibrium_end(double X_in, double T_in) const {
  const Stream inlet{T_in, feed_.P, flows(X_in)};
  const auto eq =
      adiabatic_equilibrium(mech_, inlet, HeatMode::Adiabatic, basis_, {}, equilibrium_);
  if (!eq) throw SolverError("optimize: the key reaction has no equilibrium");
  double X_e = eq->X;
  // Refine on this line: r > 0 short of equilibrium, < 0 beyond it, for
  // either sign of dH (the adiabatic line crosses the equilibrium curve
  // once). Regula falsi (Illinois) inside a bracket around the estimate.
  auto g = [&](double X) { return rate(X, temperature(X_in, T_in, X)); };
  const double X_top = std::min(X_cap_, 1.0);
  for (double d = 1e-10; d < 1e-3; d *= 10) {
    double lo = std::max(X_e - d, std::min(X_in, X_e)), hi = std::min(X_e + d, X_top);
    if (!(hi > lo)) break;
    double g_lo = g(lo), g_hi = g(hi);
    if (!(g_lo > 0 && g_hi < 0)) continue;
    int side = 0;
    for (int it = 0; it < 100 && hi - lo > 2 * std::numeric_limits<double>::epsilon() * hi; ++it) {
      const double m = (lo * g_hi - hi * g_lo) / (g_hi - g_lo);
      const double g_m = g(m);
      if (g_m == 0) return m;
      if (g_m > 0) {
        lo = m;
        g_lo = g_m;
        if (side == 1) g_hi /= 2;
        side = 1;
      } else {
        hi = m;
        g_hi = g_m;
        if (side == -1) g_lo /= 2;
        side = -1;
      }
    }
    return 0.5 * (lo + hi);
  }
  return X_e;
}

double AdiabaticBedModel::size(double X_in, double T_in, double X_out, double X_e) const {
  // As equilibrium_end: beds whose inputs repeat are not integrated again.
  for (const auto& e : sizes_)
    if (e.X_in == X_in && e.T_in == T_in && e.X_out == X_out && e.X_e == X_e) return e.size;
  const double W = integrate_size(X_in, T_in, X_out, X_e);
  if (sizes_.size() < kSizeMemo)
    sizes_.push_back({X_in, T_in, X_out, X_e, W});
  else
    sizes_[next_size_++ % kSizeMemo] = {X_in, T_in, X_out, X_e, W};
  return W;
}

double AdiabaticBedModel::integrate_size(double X_in, double T_in, double X_out, double X_e) const {
  if (!(X_out > X_in)) return 0.0;
  const double u_a = -std::log(X_e - X_in);
  const double u_b = -std::log(X_e - X_out);
  const double h = (u_b - u_a) / panels_;
  double sum = 0;
  for (int p = 0; p < panels_; ++p) {
    const double mid = u_a + (p + 0.5) * h;
    for (std::size_t k = 0; k < nodes_.size(); ++k) {
      const double u = mid + 0.5 * h * nodes_[k];
      const double gap = std::exp(-u);  // X_e - X = dX/du
      const double X = X_e - gap;
      const double r = rate(X, temperature(X_in, T_in, X));
      if (!(r > 0)) return std::numeric_limits<double>::infinity();
      sum += weights_[k] * 0.5 * h * gap / r;
    }
  }
  return xi_per_X_ * sum;
}

}  // namespace rxtrain::detail
