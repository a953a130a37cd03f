// Reactions and their rate laws, as declared in the case (SI units).
//
// Rate of reaction j (mol per m3 of reactor per s, or per kg of catalyst
// per s when basis == Catalyst):
//   irreversible: r = k(T) * prod_i d_i^o_i
//   reversible:   r = k(T) * prod_i d_i^o_i * (1 - Q/K)
// with d_i the driving force of species i (concentration mol/m3 or partial
// pressure Pa), Q the reaction quotient in activities (gas: p_i / 1 bar;
// liquid: C_i / 1 mol/L) and K the equilibrium constant in the same basis.
// k(T) = A exp(-Ea/(R T)), or A exp(-Ea/R (1/T - 1/T_ref)) with T_ref.
// With adsorption terms (Langmuir-Hinshelwood-Hougen-Watson form) the law
// is divided by DEN^n, DEN = 1 + sum_j K_j(T) prod_i d_i^m_ij, with
// K_j(T) = K_j exp(-dH_j/R (1/T - 1/T_ref)), or K_j exp(-dH_j/(R T))
// without T_ref; dH_j is the adsorption enthalpy (negative: adsorption
// weakens as T rises).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

enum class RateBasis { Volume, Catalyst };
enum class Driving { Concentration, Pressure };

// One term K_j(T) prod_i d_i^m_ij of an adsorption denominator.
struct AdsorptionTerm {
  double K = 0;                 // SI: 1 / driving unit^sum(powers)
  double dH = 0;                // J/mol, adsorption enthalpy
  std::optional<double> T_ref;  // K
  std::vector<double> powers;   // per species m_ij >= 0 (0 when absent)
};

// The denominator DEN^exponent of an adsorption-inhibited law.
struct Adsorption {
  // Published LHHW laws carry a handful of terms; the bound lets the
  // mechanism keep each term's K(T) on the stack.
  static constexpr std::size_t kMaxTerms = 32;

  double exponent = 1;  // n > 0: the number of sites in the rate-determining step
  std::vector<AdsorptionTerm> terms;
};

struct RateLaw {
  RateBasis basis = RateBasis::Volume;
  double A = 0;                 // SI: rate unit / driving unit^sum(orders)
  double Ea = 0;                // J/mol
  std::optional<double> T_ref;  // K
  Driving driving = Driving::Concentration;
  std::vector<double> orders;  // per species (0 when absent from the law)
  // Absent: a plain power law (DEN = 1), evaluated as before.
  std::optional<Adsorption> adsorption;
  // The parameters as the case file gives them, units and all ("A: 3.0e-2
  // mol/(kg*s*bar), Ea: 65 kJ/mol, T_ref: 420 K"), for reports beside the
  // SI form; empty for a law built in code.
  std::string as_written;
};

// Where K(T) of a reversible reaction comes from.
struct EquilibriumSource {
  enum class Kind { None, Thermo, VantHoff };
  Kind kind = Kind::None;
  double K_ref = 0;  // VantHoff: K at T_ref (activity basis)
  double T_ref = 0;  // K
  double dH = 0;     // J/mol, constant over T
};

struct Reaction {
  std::string id;
  std::string equation;    // as written, for reports
  std::vector<double> nu;  // per species: products > 0, reactants < 0
  bool reversible = false;
  RateLaw rate;
  // Heat of reaction at 298.15 K consistent with the species' cp:
  // dH(T) = dH_298 + sum_i nu_i h_sensible_i(T) (Kirchhoff).
  double dH_298 = 0;
  EquilibriumSource equilibrium;
  SourceLocation where;  // the reaction's entry in the case file
};

}  // namespace rxtrain
