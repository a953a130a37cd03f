// Ideal heat-capacity models of one species, and the enthalpy and entropy
// they imply. Units: T in K, cp and s in J/(mol K), h in J/mol.
//
// Reference state: h(T) = h_f + integral_{298.15}^{T} cp dT and
// s(T) = s_298 + integral_{298.15}^{T} cp/T dT (standard pressure 1 bar),
// with every integral evaluated in closed form for the model at hand.
// The NASA-7 form carries its own h and s (a6, a7), so h_f and s_298 come
// from the polynomials.
#pragma once

#include <array>
#include <optional>
#include <string>
#include <variant>
#include <vector>

namespace rxtrain {

inline constexpr double kGasConstant = 8.31446261815324;  // J/(mol K), exact (2019 SI)
inline constexpr double kReferenceT = 298.15;             // K
inline constexpr double kStandardPressure = 1.0e5;        // Pa (1 bar)

// cp = constant.
struct CpConstant {
  double cp = 0;
};

// cp = a + b T + c T^2 + d T^3 (T in K). Optional validity range.
struct CpPolynomial {
  std::array<double, 4> a{};
  std::optional<std::array<double, 2>> T_range;
};

// NIST Shomate form, t = T/1000:
// cp = A + B t + C t^2 + D t^3 + E / t^2. One set per temperature range;
// the sets are sorted by T_low and must not overlap (adjacent ranges share
// an end point). Outside every range the nearest set is extrapolated and
// the caller is expected to warn (see ThermoModel::in_range).
struct ShomateSet {
  std::array<double, 5> c{};  // A..E
  double T_low = 0;
  double T_high = 0;
};
struct CpShomate {
  std::vector<ShomateSet> sets;
};

// NASA 7-coefficient polynomials (two ranges split at T_mid):
// cp/R = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
// h/(R T) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
// s/R = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7
// T_low/T_high are optional (0 = not given).
struct Nasa7 {
  double T_low = 0;
  double T_mid = 1000;
  double T_high = 0;
  std::array<double, 7> low{};
  std::array<double, 7> high{};
};

using CpModel = std::variant<CpConstant, CpPolynomial, CpShomate, Nasa7>;

// cp on one stretch of temperature [T_from, T_to) where one coefficient set
// applies, in a basis every model above fits (T in K):
//   cp = c0 + c1 T + c2 T^2 + c3 T^3 + c4 T^4 + c5 / T^2
// Lets a caller combine several species into one polynomial per stretch
// (see ReactionThermo).
struct CpPiece {
  double T_from = 0;  // K; 0 for the first piece
  double T_to = 0;    // K; +infinity for the last
  std::array<double, 6> c{};
};

class ThermoModel {
 public:
  ThermoModel() = default;
  // h_f (J/mol) and s_298 (J/mol/K) are optional for the cp forms and
  // ignored for Nasa7 (taken from the polynomials).
  ThermoModel(CpModel cp, std::optional<double> h_f, std::optional<double> s_298);

  double cp(double T) const;
  // Sensible enthalpy integral_{298.15}^{T} cp dT (J/mol); no h_f needed.
  double h_sensible(double T) const;
  // integral_{298.15}^{T} cp/T dT (J/mol/K); no s_298 needed.
  double s_sensible(double T) const;
  // Absolute h(T) = h_f + h_sensible(T). Requires has_h_f().
  double h(double T) const;
  // Absolute s(T) at 1 bar. Requires has_s().
  double s(double T) const;

  bool has_h_f() const;
  bool has_s() const;
  std::optional<double> h_f() const;    // h at 298.15 K
  std::optional<double> s_298() const;  // s at 298.15 K

  // True when T lies inside a declared validity range (always true for a
  // constant cp and for models with no declared range).
  bool in_range(double T) const;
  // Overall declared range [T_low, T_high], if any, for messages.
  std::optional<std::array<double, 2>> declared_range() const;

  const CpModel& model() const { return cp_; }
  // The pieces in ascending order, covering (0, infinity) with the same
  // choice of coefficient set as cp(T), extrapolation included.
  std::vector<CpPiece> pieces() const;

 private:
  CpModel cp_ = CpConstant{0};
  std::optional<double> h_f_;
  std::optional<double> s_298_;
};

}  // namespace rxtrain
