// Species + reactions + phase: evaluates rates, heats of reaction and
// equilibrium constants, with analytic derivatives for the solvers.
// Immutable after construction; safe to share between threads.
#pragma once

#include <Eigen/Core>
#include <utility>
#include <vector>

#include "rxtrain/chem/reaction_thermo.hpp"
#include "rxtrain/chem/species.hpp"
#include "rxtrain/kinetics/kinetics.hpp"

namespace rxtrain {

enum class Phase { Gas, Liquid };

class Mechanism {
 public:
  Mechanism() = default;
  // Preconditions (checked by the case loader): nu and orders sized to the
  // species; liquid phase has density and mw for every species.
  Mechanism(Phase phase, std::vector<Species> species, std::vector<Reaction> reactions);

  Phase phase() const { return phase_; }
  const std::vector<Species>& species() const { return species_; }
  const std::vector<Reaction>& reactions() const { return reactions_; }
  int n_species() const { return static_cast<int>(species_.size()); }
  int n_reactions() const { return static_cast<int>(reactions_.size()); }
  int index_of(const std::string& id) const;  // -1 when unknown

  // Volumetric flow (m3/s) of flows F (mol/s) at T (K), P (Pa):
  // gas F_t R T / P; liquid sum F_i MW_i / rho_i (ideal mixing).
  double volumetric_flow(double T, double P, const double* F) const;
  // sum_i F_i cp_i(T), W/K.
  double heat_capacity_flow(double T, const double* F) const;
  // cp_i(T) of species i, J/(mol K): species()[i].thermo.cp(T) from the
  // compiled pieces (no model dispatch; the right-hand side calls it).
  double cp(int i, double T) const;
  // sum_i F_i h_sensible_i(T), W (reference 298.15 K).
  double sensible_enthalpy_flow(double T, const double* F) const;
  // Volume flow of a liquid by ideal mixing, sum of F_i MW_i / rho_i
  // (m3/s), from the molar volumes computed once (Species::
  // liquid_molar_volume); the rate laws use the same volumes with flows
  // below zero counted as zero. Liquid phase only.
  double liquid_volume_flow(const double* F) const;
  // Mass flow, kg/s; requires every mw.
  double mass_flow(const double* F) const;

  double dH(int j, double T) const;    // J/mol
  double dCp(int j, double T) const;   // d(dH)/dT, J/(mol K)
  double ln_K(int j, double T) const;  // activity basis
  double dln_K_dT(int j, double T) const;
  double rate_constant(int j, double T) const;

  // Reaction j's rate law, written once: at the driving quantities d_i
  // (partial pressures or concentrations, indexed by species; only the
  // reaction's participants are read),
  //   r_j = k(T) * value,  value = num / DEN^n,
  //   num = prod d_i^o_i - c_rev(T) prod d_i^(o_i + nu_i)
  // (c_rev = 0 for an irreversible reaction; for a reversible one
  // c_rev = s^sum(nu) / K(T), s the activity scale; DEN = 1 without
  // adsorption terms, see kinetics.hpp). With g, also g_i = d value / d d_i
  // for the participants. rates() and both Jacobians call it; a new rate
  // law changes it alone.
  struct RateLawValue {
    double k = 0, dk_dT = 0;          // rate constant and dk/dT
    double value = 0;                 // the driving-force part: r = k * value
    double dvalue_dT = 0;             // d value / dT at fixed d (K(T), K_j(T))
    double rev = 0;                   // prod d_i^(o_i + nu_i) (reversible)
    double c_rev = 0, dc_rev_dT = 0;  // reverse coefficient and its dT
    double den = 1;                   // DEN (1 without adsorption terms)
    double rate() const { return k * value; }
  };
  RateLawValue evaluate(int j, double T, const double* d, double* g = nullptr) const;

  // Rates r_j in each reaction's own basis (see kinetics.hpp).
  void rates(double T, double P, const double* F, double* r) const;
  // Rates and their derivatives: dr_dF is n_reactions x n_species.
  void rates_and_jacobian(double T, double P, const double* F, double* r,
                          Eigen::Ref<Eigen::MatrixXd> dr_dF,
                          Eigen::Ref<Eigen::VectorXd> dr_dT) const;

  // Working buffers of the derivative evaluations, owned by the caller
  // (one per thread) so that repeated calls never allocate.
  struct Scratch {
    std::vector<double> d, g, direct;
  };
  void rates_and_jacobian(double T, double P, const double* F, double* r,
                          Eigen::Ref<Eigen::MatrixXd> dr_dF, Eigen::Ref<Eigen::VectorXd> dr_dT,
                          Scratch& scratch) const;

  // Sparsity of the rate derivatives. The species whose flows enter
  // reaction j's rate law directly (nonzero order or stoichiometric
  // coefficient), ascending. Through the mixture's total flow (gas) or
  // volume (liquid) every rate also depends on every species; that part is
  // one "dilution" coefficient per reaction (below), so a sparse Jacobian
  // keeps it as a rank-one term instead of a dense block.
  const std::vector<int>& rate_species(int j) const { return compiled_[j].species; }
  // Entries of `direct` before reaction j's: sum of rate_species(i).size(), i < j.
  int direct_offset(int j) const { return compiled_[j].offset; }
  int n_direct() const { return n_direct_; }
  // dr_j/dF_k = direct[direct_offset(j) + p]       (k = rate_species(j)[p])
  //           + dilution[j] * dilution_weight(k, F)  (every k)
  // with the same values rates_and_jacobian gives.
  void rates_and_sparse_jacobian(double T, double P, const double* F, double* r, double* direct,
                                 double* dilution, double* dr_dT, Scratch& scratch) const;
  // dr_j/dP at fixed flows and T: every driving quantity of a gas is
  // proportional to P, so dr_j/dP = (1/P) sum_i (dr_j/dd_i) d_i; 0 for a
  // liquid (incompressible).
  void rates_pressure_derivative(double T, double P, const double* F, double* dr_dP,
                                 Scratch& scratch) const;
  // Whether r_j's law reads rate_species(j)[p] itself: a forward order, a
  // reverse exponent (reversible) or an adsorption term. The other rate
  // species (products of an irreversible reaction) have dr_j/dF = 0
  // exactly, apart from the dilution term.
  bool reads(int j, int p) const { return compiled_[j].parts[p].read; }
  // d(total flow or mixture volume)/dF_k as the rates see it: 1 (gas) or
  // MW_k / rho_k (liquid) where F_k > 0; 0 where F_k <= 0 (flows are
  // clipped at zero in the rate laws).
  double dilution_weight(int k, const double* F) const;

 private:
  struct Participant {
    int i;
    double forward_exp;  // o_i
    double reverse_exp;  // o_i + nu_i
    bool read;           // see reads()
  };
  // One adsorption term, K_j(T) prod d_i^m_ij, over its species.
  struct CompiledTerm {
    double K = 0, dH = 0;
    double inv_T_ref = 0;                         // 1/T_ref, or 0 for K exp(-dH/(R T))
    std::vector<std::pair<int, double>> factors;  // (species, m_ij > 0)
  };
  struct Compiled {
    std::vector<Participant> parts;
    std::vector<int> species;       // parts[p].i, for rate_species()
    int offset = 0;                 // see direct_offset()
    double dnu = 0;                 // sum of nu (for the activity scale)
    ReactionThermo thermo;          // dH, dCp, ln K from the species' cp models
    double ln_s = 0;                // activity scale ln s where it is constant (see activity_scale)
    std::vector<CompiledTerm> ads;  // empty: no adsorption denominator
    double ads_exp = 1;             // n of DEN^n
  };
  // evaluate(), the T derivatives (dk_dT, dc_rev_dT, dvalue_dT) left zero
  // unless with_dT: rates() needs the value alone.
  RateLawValue evaluate(int j, double T, const double* d, double* g, bool with_dT) const;
  // Divides v's value (and g, when given) by DEN^n of reaction j.
  void apply_adsorption(int j, double T, const double* d, double* g, RateLawValue& v) const;
  // Driving forces d_i = max(F_i, 0) * phi; returns phi and its derivatives.
  struct Scale {
    double phi = 0;  // d_i = max(F_i, 0) * phi
    double dphi_dT = 0;
    double dphi_dFt = 0;  // gas: d phi / d F_k for every k
    double dphi_dv = 0;   // liquid: d phi / d v, with dv/dF_k = MW_k/rho_k
  };
  Scale driving_scale(Driving driving, double T, double P, const double* F) const;
  // log of activity scale s (a_i = s * d_i) and its T derivative.
  void activity_scale(int j, double T, double& ln_s, double& dln_s_dT) const;
  // Reaction j's rate, the derivatives through its participants (direct[p]
  // for parts[p]; 0 where F <= 0), the coefficient of the dilution term and
  // dr_j/dT. d and g are scratch indexed by species.
  double reaction_derivatives(int j, double T, const Scale& sc, const double* F, double* d,
                              double* g, double* direct, double& dilution, double& dr_dT) const;
  // The driving-force scale of each kind, computed once per evaluation.
  struct Scales {
    Scale conc, press;
    bool have_conc = false, have_press = false;
  };
  const Scale& scale_for(Driving driving, double T, double P, const double* F, Scales& s) const;

  Phase phase_ = Phase::Gas;
  std::vector<Species> species_;
  std::vector<Reaction> reactions_;
  std::vector<Compiled> compiled_;
  std::vector<double> liquid_v_;  // MW_i / rho_i (liquid phase), m3/mol
  // Heat-capacity pieces of every species, species i's at
  // cp_pieces_[cp_start_[i] .. cp_start_[i+1]).
  std::vector<CpPiece> cp_pieces_;
  std::vector<int> cp_start_;
  int n_direct_ = 0;
};

}  // namespace rxtrain
