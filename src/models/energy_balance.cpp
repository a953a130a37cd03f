#include "rxtrain/models/energy_balance.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

namespace {

// Search range of the outlet temperature. Below 1 K or above 10000 K no
// heat-capacity model of a process stream means anything.
constexpr double kLowestT = 1.0;     // K
constexpr double kHighestT = 1.0e4;  // K
// Bracket growth per try: 1.5 reaches either end of the range from room
// temperature in about 15 tries.
constexpr double kBracketGrowth = 1.5;
constexpr int kMaxIterations = 200;
// Newton steps tried from the guess before the bracketed search.
constexpr int kNewtonFirstSteps = 8;

}  // namespace

double temperature_for_enthalpy(const Mechanism& mech, const std::vector<double>& F,
                                double enthalpy_flow, double T_guess) {
  auto g = [&](double T) { return mech.sensible_enthalpy_flow(T, F.data()) - enthalpy_flow; };
  double T0 = std::isfinite(T_guess) ? std::clamp(T_guess, kLowestT, kHighestT) : kReferenceT;
  // Tolerance on the enthalpy flow: round-off of the sums themselves.
  const double scale =
      std::max({std::abs(enthalpy_flow), std::abs(mech.heat_capacity_flow(T0, F.data())) * T0,
                std::abs(mech.sensible_enthalpy_flow(T0, F.data()))});
  const double tol = 1e-14 * scale;
  double g0 = g(T0);
  if (std::abs(g0) <= tol) return T0;

  // From a good guess (the usual case: the last temperature of a path, a
  // first-order estimate) plain Newton converges in a few steps; the
  // bracketed search below is for the rest. sum F hs(T) rises with T
  // wherever cp > 0, so a step that leaves the range or a non-positive
  // heat-capacity flow hands over to the bracket.
  {
    double T = T0, gT = g0;
    for (int it = 0; it < kNewtonFirstSteps; ++it) {
      const double C = mech.heat_capacity_flow(T, F.data());
      if (!(C > 0) || !std::isfinite(C)) break;
      const double T_next = T - gT / C;
      if (!(T_next > kLowestT && T_next < kHighestT)) break;
      if (std::abs(T_next - T) <= 4 * std::numeric_limits<double>::epsilon() * T) return T_next;
      T = T_next;
      gT = g(T);
      if (std::abs(gT) <= tol) return T;
    }
  }

  // Bracket the root: walk from T0 in the direction the slope points to,
  // then the other way, multiplying the distance each time.
  const double C0 = mech.heat_capacity_flow(T0, F.data());
  const bool up_first = (g0 < 0) == (C0 > 0);
  double lo = 0, hi = 0, g_lo = 0, g_hi = 0;
  bool bracketed = false;
  for (int pass = 0; pass < 2 && !bracketed; ++pass) {
    const bool up = (pass == 0) == up_first;
    double T_prev = T0, g_prev = g0;
    for (;;) {
      const double T_next = up ? std::min(T_prev * kBracketGrowth, kHighestT)
                               : std::max(T_prev / kBracketGrowth, kLowestT);
      const double g_next = g(T_next);
      if ((g_next <= 0) != (g_prev <= 0) || g_next == 0) {
        lo = std::min(T_prev, T_next);
        hi = std::max(T_prev, T_next);
        g_lo = (lo == T_prev) ? g_prev : g_next;
        g_hi = (hi == T_prev) ? g_prev : g_next;
        bracketed = true;
        break;
      }
      if (T_next == kHighestT || T_next == kLowestT) break;
      T_prev = T_next;
      g_prev = g_next;
    }
  }
  if (!bracketed) {
    throw SolverError(fmt::format(
        "no temperature between {:g} K and {:g} K gives a sensible enthalpy flow of {:.6g} W "
        "(it is {:.6g} W at {:g} K and {:.6g} W at {:g} K)",
        kLowestT, kHighestT, enthalpy_flow, g(kLowestT) + enthalpy_flow, kLowestT,
        g(kHighestT) + enthalpy_flow, kHighestT));
  }
  if (g_lo == 0) return lo;
  if (g_hi == 0) return hi;

  // Newton on the bracket, bisecting whenever a step would leave it.
  double T = (g_lo * hi - g_hi * lo) / (g_lo - g_hi);  // secant start
  for (int it = 0; it < kMaxIterations; ++it) {
    const double gT = g(T);
    if (std::abs(gT) <= tol) return T;
    if ((gT < 0) == (g_lo < 0)) {
      lo = T;
      g_lo = gT;
    } else {
      hi = T;
      g_hi = gT;
    }
    if (hi - lo <= 4 * std::numeric_limits<double>::epsilon() * hi) return T;
    const double C = mech.heat_capacity_flow(T, F.data());
    double T_new = (C != 0 && std::isfinite(C)) ? T - gT / C : lo - 1;
    if (!(T_new > lo && T_new < hi)) T_new = 0.5 * (lo + hi);
    if (T_new == T) return T;
    T = T_new;
  }
  return T;  // bracket already narrower than any use needs
}

Stream stream_after_extent(const Mechanism& mech, const Stream& inlet, HeatMode heat, int j,
                           double xi, double T_guess) {
  Stream out;
  stream_after_extent(mech, inlet, heat, j, xi, T_guess, out);
  return out;
}

void stream_after_extent(const Mechanism& mech, const Stream& inlet, HeatMode heat, int j,
                         double xi, double T_guess, Stream& out) {
  const auto& nu = mech.reactions()[j].nu;
  out.T = inlet.T;
  out.P = inlet.P;
  out.F.assign(inlet.F.begin(), inlet.F.end());  // no allocation once out has the room
  const double floor = 1e-12 * inlet.total_flow();
  for (int i = 0; i < mech.n_species(); ++i) {
    out.F[i] += nu[i] * xi;
    if (out.F[i] < 0 && out.F[i] > -floor) out.F[i] = 0;  // a reactant used up exactly
  }
  if (heat == HeatMode::Adiabatic) {
    // sum F hs(T) = sum F_in hs(T_in) - xi dH_298: the total enthalpy kept.
    const double H =
        mech.sensible_enthalpy_flow(inlet.T, inlet.F.data()) - xi * mech.reactions()[j].dH_298;
    out.T = temperature_for_enthalpy(mech, out.F, H, std::isnan(T_guess) ? inlet.T : T_guess);
  }
}

Stream mix_adiabatic(const Mechanism& mech, const Stream& main, const Stream& side) {
  Stream out;
  out.P = main.P;
  out.F.resize(main.F.size());
  for (std::size_t i = 0; i < out.F.size(); ++i) out.F[i] = main.F[i] + side.F[i];
  const double H = mech.sensible_enthalpy_flow(main.T, main.F.data()) +
                   mech.sensible_enthalpy_flow(side.T, side.F.data());
  const double Fm = main.total_flow(), Fs = side.total_flow();
  const double guess = Fm + Fs > 0 ? (Fm * main.T + Fs * side.T) / (Fm + Fs) : main.T;
  out.T = temperature_for_enthalpy(mech, out.F, H, guess);
  return out;
}

}  // namespace rxtrain
