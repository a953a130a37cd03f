// Catalyst pellets: the effectiveness factor eta_j of each reaction, the
// pellet-average rate over the rate at the surface concentrations, written
// once for every tubular stage (models/tubular_balances.hpp uses it).
//
// Assumptions (stated in docs/case-format.md and the reports): the pellet
// is isothermal at the bulk temperature, and its surface concentrations
// equal the bulk ones (no external film resistance). Diffusion in the
// pellet is Fickian with a constant effective diffusivity per species.
//
// Every shape is reduced to a 1-D one by its length scale L = V_p/S_p
// (Aris 1957): a slab of half-thickness L, an infinite cylinder of radius
// 2L, a sphere of radius 3L. A finite cylinder is solved as the infinite
// cylinder of the same V_p/S_p (Aris 1957). The modulus phi is based on L
// throughout, so the first-order closed forms are
//   slab      eta = tanh(phi) / phi
//   cylinder  eta = I1(2 phi) / (phi I0(2 phi))
//   sphere    eta = (1/phi) (1/tanh(3 phi) - 1/(3 phi))
// with phi = L sqrt(k/D) (Aris 1957; Froment & Bischoff, Chemical Reactor
// Analysis and Design, ch. 3).
// SI: m, m2/s, mol/m3, mol/(m3 pellet s).
#pragma once

#include <optional>
#include <vector>

#include "rxtrain/kinetics/pellet_spec.hpp"

namespace rxtrain {

// V_p/S_p of a pellet. `size`: sphere or cylinder diameter, slab thickness
// (both faces open, so V_p/S_p = size/2); `length`: a finite cylinder's
// length (absent: infinite cylinder; ignored for a slab or sphere).
double pellet_length_scale(PelletShape shape, double size, std::optional<double> length);

// The first-order closed form eta(phi) of the shape (above), phi >= 0.
double first_order_effectiveness(PelletShape shape, double phi);

// The reactions inside a pellet at one bed position: the caller binds them
// to the temperature, pressure and rate law there. Rates are per m3 of
// pellet, as functions of the local concentrations.
class PelletKinetics {
 public:
  virtual ~PelletKinetics() = default;
  virtual int n_species() const = 0;
  virtual int n_reactions() const = 0;
  // Stoichiometric coefficient of species i in reaction j.
  virtual double nu(int j, int i) const = 0;
  // r_j(c), mol/(m3 pellet s); with grad (length n_species), dr_j/dc_i.
  virtual double rate(int j, const double* c, double* grad) const = 0;
};

// The pellet's geometry and transport, per species.
struct PelletTransport {
  PelletShape shape = PelletShape::Sphere;
  double L = 0;           // V_p/S_p, m
  std::vector<double> D;  // effective diffusivity per species, m2/s (> 0)
};

// eta_j by the generalized modulus for arbitrary kinetics (Bischoff 1965,
// shape factor after Aris 1957): on key species `key` of reaction j (a
// reactant with a nonzero order), the other species follow it by the
// stoichiometric invariant c_i = c_i,s + (nu_i D_key / (nu_key D_i))
// (c_key - c_key,s);
//   phi = L r(c_s) / sqrt(2 D_key int r dc_key)
// over c_key from where the rate vanishes (equilibrium, or a species used
// up, whichever comes first) to the surface, and eta = the shape's
// first-order closed form of phi. Exact for first order; 1 where the
// surface rate is not positive (no forward reaction to be limited).
double thiele_effectiveness(const PelletKinetics& kin, const PelletTransport& tr,
                            const double* c_surface, int j, int key);

// What the 1-D pellet solve does and how finely.
struct PelletSolveOptions {
  // Grid nodes (centre to surface) of the coarsest grid; each call solves
  // it and its doubles until the estimates converge (`rtol`).
  int nodes = 16;
  // Largest grid; beyond it the solve throws (a modulus so large that the
  // reaction lives in a film thinner than the grid resolves).
  int max_nodes = 4096;
  // Relative change of every eta_j between two successive Richardson
  // estimates (each from a grid and its double; the scheme is second
  // order) that counts as converged. Tubular stages pass their ODE
  // tolerance.
  double rtol = 1e-6;
  // Newton on the discretized pellet: relative step size that ends it.
  double newton_tol = 1e-12;
  int max_newton = 50;
};

// The steady isothermal diffusion-reaction balance of every species in
// the pellet, D_i (1/x^a) d/dx(x^a dc_i/dx) + sum_j nu_ij r_j(c) = 0 with
// c = c_s at the surface and a symmetric centre (a = 0, 1, 2 for slab,
// cylinder, sphere), by second-order finite volumes on a grid clustered
// toward the surface, Newton on the block-tridiagonal system, and grid
// doubling with Richardson extrapolation until eta converges. Keeps each
// grid's last profile to warm-start the next call (a tubular stage calls it at
// every right-hand side). Not thread-safe: one per integration.
class PelletSolver {
 public:
  explicit PelletSolver(PelletSolveOptions options = {});

  // eta_j for every reaction into eta (length n_reactions). Reactions
  // whose surface rate is zero get eta = 1. Throws SolverError when the
  // Newton iteration or the grid refinement fails.
  void solve(const PelletKinetics& kin, const PelletTransport& tr, const double* c_surface,
             double* eta);

  // Forget the warm start (a new stage).
  void reset();

  const PelletSolveOptions& options() const { return options_; }
  // Grid nodes of the last converged solve.
  int last_nodes() const { return last_nodes_; }

 private:
  // eta on a grid of `nodes` nodes, warm-started from profile_ when it
  // has that size. Returns false when Newton fails.
  bool solve_grid(const PelletKinetics& kin, const PelletTransport& tr, const double* c_surface,
                  int nodes, std::vector<double>& eta);

  // A grid's geometry: control volumes and face conductances (per shape,
  // length scale and node count; a stage uses a few).
  struct Grid {
    int N = 0;
    PelletShape shape = PelletShape::Sphere;
    double L = 0;
    std::vector<double> vol, Aw;
    double V = 0;  // the pellet's volume in the grid's measure
  };
  const Grid& grid(PelletShape shape, double L, int N);

  PelletSolveOptions options_;
  int last_nodes_ = 0;
  std::vector<Grid> grids_;
  // The Newton iteration's work space (see solve_grid).
  std::vector<double> binv_, d_, nu_, g_, delta_;
  std::vector<int> piv_;
  // Warm start: the profile (node-major, nodes x species) per grid size.
  std::vector<std::vector<double>> profiles_;
  std::vector<double> eta_a_, eta_b_, eta_prev_;  // eta per grid level
};

}  // namespace rxtrain
