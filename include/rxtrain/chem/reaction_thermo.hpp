// One reaction's heat of reaction, its temperature derivative and its
// equilibrium constant from the species' heat-capacity models, compiled
// into one polynomial per stretch of temperature. The rate equations ask
// for these at every right-hand-side evaluation; summing nu_i h_i(T)
// species by species costs a log and a set search per species, the
// compiled form one polynomial and (for K) one log.
//
// Exact algebra, not a fit: on each stretch where every species keeps one
// coefficient set, sum_i nu_i cp_i(T) is itself a polynomial of the common
// basis (CpPiece), and its integrals plus one constant per stretch give
// sum_i nu_i h_i(T) and sum_i nu_i s_i(T). The constants are taken from the
// species' own h and s at a point inside the stretch, so the two forms
// agree to rounding (tests/reaction_thermo_test.cpp).
//
// Example:
//   ReactionThermo rt(species, reaction.nu, reaction.dH_298);
//   double dH = rt.dH(700.0), lnK = rt.ln_K(700.0);
#pragma once

#include <array>
#include <vector>

#include "rxtrain/chem/species.hpp"

namespace rxtrain {

class ReactionThermo {
 public:
  ReactionThermo() = default;
  // nu per species; dH_298 the heat of reaction at 298.15 K (J/mol).
  ReactionThermo(const std::vector<Species>& species, const std::vector<double>& nu, double dH_298);

  // dH_298 + sum_i nu_i h_sensible_i(T), J/mol.
  double dH(double T) const;
  // d(dH)/dT = sum_i nu_i cp_i(T), J/(mol K).
  double dCp(double T) const;
  // True when every species in the reaction has h_f and s_298, so that
  // the Gibbs energy (ln_K) is defined.
  bool has_gibbs() const { return has_gibbs_; }
  // ln K = -sum_i nu_i (h_i - T s_i) / (R T) at 1 bar. Requires has_gibbs().
  double ln_K(double T) const;
  // d ln K / dT = sum_i nu_i h_i(T) / (R T^2) (van 't Hoff). Requires has_gibbs().
  double dln_K_dT(double T) const;

 private:
  struct Piece {
    double T_to = 0;            // the piece holds for T < T_to (the last: +infinity)
    std::array<double, 6> c{};  // sum_i nu_i cp_i in the CpPiece basis
    double h_sensible = 0;      // sum nu h_sensible = h_sensible + H(T)
    double h_abs = 0;           // sum nu h = h_abs + H(T)
    double s_abs = 0;           // sum nu s = s_abs + S(T)
  };
  const Piece& piece_at(double T) const;
  // integral of the piece's cp dT and cp/T dT, without constants.
  static double H(const Piece& p, double T);
  static double S(const Piece& p, double T);

  std::vector<Piece> pieces_;
  double dH_298_ = 0;
  bool has_gibbs_ = false;
};

}  // namespace rxtrain
