// Stability of a stirred tank's steady state: the eigenvalues of its
// dynamic balances linearized there (CstrBalances::dynamic_jacobian) and
// what they say. A steady state the plant can hold on its own has every
// eigenvalue in the left half plane; one with a real eigenvalue in the
// right half plane is a saddle (the middle state of an S-curve: a small
// upset sends the tank to ignition or to extinction); a complex pair in
// the right half plane means the tank swings about the state (sustained
// oscillation, the instability a cooled tank can show).
// Derivation and outflow rules: docs/stability.md.
#pragma once

#include <complex>
#include <span>
#include <string_view>
#include <vector>

namespace rxtrain {

namespace detail {
class CstrBalances;  // models/tank_balances.hpp
}

enum class StabilityKind {
  Stable,       // every eigenvalue has a negative real part
  Saddle,       // exactly one real eigenvalue >= 0, no complex pair with a real part >= 0
  Unstable,     // two or more eigenvalues with real part >= 0, all of them real
  Oscillatory,  // a complex pair with a real part >= 0
};

// "stable", "saddle", "unstable", "oscillatory" (the JSON's words).
std::string_view stability_kind_name(StabilityKind kind);

// The kind of a spectrum (a real part of exactly 0 counts as not negative:
// a steady state on the edge is not called stable).
StabilityKind classify_eigenvalues(std::span<const std::complex<double>> eigenvalues);

struct TankStability {
  // 1/s, n_species + 1 of them (n_species for an isothermal tank, whose
  // temperature is held), sorted by real part, largest first (a complex
  // pair: positive imaginary part first).
  std::vector<std::complex<double>> eigenvalues;
  StabilityKind kind = StabilityKind::Stable;
  bool stable() const { return kind == StabilityKind::Stable; }
};

// The stability of the steady state (F in mol/s, T in K) of the tank `b`
// is set up for, of volume V (m3); C_vessel (J/K) is the vessel's and
// catalyst's heat capacity. Eigen's EigenSolver on the dense Jacobian.
TankStability tank_stability(detail::CstrBalances& b, const double* F, double T, double V,
                             double C_vessel);

}  // namespace rxtrain
