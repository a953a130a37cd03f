// Internal to the design optimizer (design.hpp): one adiabatic bed of a
// single reaction, with the overall key conversion X as the independent
// variable. SI units.
//
// Composition: F(X) = F_feed + nu xi(X), xi = F_key,feed X / |nu_key|.
// Adiabatic line through (X_in, T_in), from the steady-flow energy balance
// (the same one the PFR integrates, written for the whole bed):
//   sum_i F_i(X) hs_i(T) + xi(X) dH_298 = sum_i F_i(X_in) hs_i(T_in) + xi(X_in) dH_298
// (hs: sensible enthalpy; dH(T) = dH_298 + sum nu_i hs_i(T), Kirchhoff).
// Bed size: W = F_key,feed / |nu_key| * integral dX / r(X, T(X)).
#pragma once

#include <Eigen/Core>
#include <optional>
#include <vector>

#include "rxtrain/chem/stream.hpp"
#include "rxtrain/kinetics/mechanism.hpp"
#include "rxtrain/models/equilibrium.hpp"

namespace rxtrain::detail {

class AdiabaticBedModel {
 public:
  // j: the reaction that carries the key (the mechanism's only one).
  // panels x nodes: the Gauss-Legendre rule of size().
  AdiabaticBedModel(const Mechanism& mech, const Stream& feed, const ConversionBasis& basis, int j,
                    int panels, int nodes, const EquilibriumOptions& equilibrium,
                    double activity = 1);

  std::vector<double> flows(double X) const;
  void flows_into(double X, std::vector<double>& F) const;
  // Highest X at which no flow is negative.
  double X_cap() const { return X_cap_; }
  // T at X on the adiabatic line through (X_in, T_in). Throws SolverError
  // when the energy balance has no positive root.
  double temperature(double X_in, double T_in, double X) const;
  // Rate of the key reaction at (X, T), in its own basis, times the
  // catalyst activity the beds are designed for.
  double rate(double X, double T) const;
  // Sensible enthalpy flow (W) of the stream at conversion X and T.
  double enthalpy_flow(double X, double T) const;
  // Where the adiabatic line from (X_in, T_in) meets equilibrium: the
  // equilibrium module's adiabatic equilibrium point, refined on this line
  // to the root of r (so X_e is this line's own, to round-off). Below X_in
  // when the inlet lies beyond equilibrium. Throws SolverError when no
  // equilibrium lies in the module's temperature window.
  double equilibrium_end(double X_in, double T_in) const;
  // The rate of the key reaction and its partial derivatives at (X, T):
  // in T at fixed flows, and in X at fixed T (the flows moved by the
  // reaction's stoichiometry).
  struct RatePartials {
    double r = 0, dr_dT = 0, dr_dX = 0;
  };
  RatePartials rate_partials(double X, double T) const;
  // How T at X on the adiabatic line through (X_in, T_in) moves (T the
  // line's temperature there): along the line (dT/dX), with the inlet
  // temperature and with the inlet conversion. From the enthalpy kept,
  // sum F(X) hs(T) = sum F(X_in) hs(T_in) - xi (X - X_in) dH_298.
  struct LineSlopes {
    double dT_dX = 0, dT_dT_in = 0, dT_dX_in = 0;
  };
  LineSlopes line_slopes(double X_in, double T_in, double X, double T) const;
  // The derivatives of equilibrium_end in the inlet's X and T (implicit:
  // the rate vanishes at X_e on the line).
  struct EndSlopes {
    double dX_in = 0, dT_in = 0;
  };
  EndSlopes equilibrium_end_slopes(double X_in, double T_in, double X_e) const;
  // size() and its derivatives in X_in, T_in and X_out (the integral of
  // dX / r does not depend on X_e, which only sets the substitution).
  struct SizeSlopes {
    double size = 0, dX_in = 0, dT_in = 0, dX_out = 0;
  };
  SizeSlopes size_slopes(double X_in, double T_in, double X_out, double X_e) const;
  // Catalyst mass (kg, per-catalyst rates) or volume (m3) of the bed from
  // X_in to X_out < X_e, by Gauss-Legendre quadrature in u = -ln(X_e - X).
  // Infinity when the rate is not positive at a node.
  double size(double X_in, double T_in, double X_out, double X_e) const;

 private:
  const Mechanism& mech_;
  Stream feed_;
  ConversionBasis basis_;
  int j_;
  double xi_per_X_;  // mol/s of reaction per unit conversion
  double X_cap_ = 1;
  std::vector<double> nodes_, weights_;  // on [-1, 1]
  int panels_;
  EquilibriumOptions equilibrium_;
  double activity_ = 1;
  // Buffers of temperature() and rate(), kept so that the optimizer's
  // millions of calls do not allocate. A model serves one thread.
  struct Scratch {
    std::vector<double> F_in, F, F_rate, r;
    Eigen::MatrixXd dr_dF;
    Eigen::VectorXd dr_dT;
    Mechanism::Scratch mech;
  };
  mutable Scratch scratch_;
  // The last equilibrium ends computed (equilibrium_end), by exact inlet.
  struct End {
    double X_in, T_in, X_e;
  };
  static constexpr std::size_t kEndMemo = 64;
  mutable std::vector<End> ends_;
  mutable std::size_t next_end_ = 0;
  double solve_equilibrium_end(double X_in, double T_in) const;
  // The last sizes computed (size), by exact arguments.
  struct Size {
    double X_in, T_in, X_out, X_e, size;
  };
  static constexpr std::size_t kSizeMemo = 64;
  mutable std::vector<Size> sizes_;
  mutable std::size_t next_size_ = 0;
  double integrate_size(double X_in, double T_in, double X_out, double X_e) const;
};

// Gauss-Legendre nodes and weights on [-1, 1] (n >= 1), by Newton's method
// on the Legendre polynomial P_n (Golub-Welsch would do as well).
void gauss_legendre(int n, std::vector<double>& nodes, std::vector<double>& weights);

}  // namespace rxtrain::detail
