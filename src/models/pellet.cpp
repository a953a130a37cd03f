#include "rxtrain/models/pellet.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>

#include "rxtrain/base/error.hpp"

namespace rxtrain {

namespace {

// x^a for the shape exponent a = 0, 1, 2 (slab, cylinder, sphere).
int shape_exponent(PelletShape s) {
  switch (s) {
    case PelletShape::Slab:
      return 0;
    case PelletShape::Cylinder:
      return 1;
    case PelletShape::Sphere:
      break;
  }
  return 2;
}

double ipow(double x, int a) { return a == 0 ? 1.0 : (a == 1 ? x : x * x); }

// Hankel's asymptotic series of e^-x sqrt(2 pi x) I_nu(x) (Abramowitz &
// Stegun 9.7.1), for x > 500 where std::cyl_bessel_i overflows soon after.
double scaled_bessel_i_large(int nu, double x) {
  const double mu = 4.0 * nu * nu;
  double term = 1, sum = 1;
  for (int k = 1; k < 12; ++k) {
    const double odd = 2.0 * k - 1;
    term *= -(mu - odd * odd) / (k * 8.0 * x);
    sum += term;
  }
  return sum;
}

// Generalized-modulus integral's quadrature: 8-point Gauss-Legendre nodes
// and weights on [-1, 1] (Abramowitz & Stegun table 25.4).
constexpr std::array<double, 8> kGlX = {
    -0.9602898564975363, -0.7966664774136267, -0.5255324099163290, -0.1834346424956498,
    0.1834346424956498,  0.5255324099163290,  0.7966664774136267,  0.9602898564975363};
constexpr std::array<double, 8> kGlW = {0.1012285362903763, 0.2223810344533745, 0.3137066458778873,
                                        0.3626837833783620, 0.3626837833783620, 0.3137066458778873,
                                        0.2223810344533745, 0.1012285362903763};

}  // namespace

double pellet_length_scale(PelletShape shape, double size, std::optional<double> length) {
  switch (shape) {
    case PelletShape::Slab:
      return size / 2;
    case PelletShape::Sphere:
      return size / 6;
    case PelletShape::Cylinder:
      break;
  }
  if (!length) return size / 4;
  // V = pi d^2 l / 4; S = pi d l + 2 pi d^2 / 4 (mantle and both ends).
  const double d = size, l = *length;
  return d * l / (4 * l + 2 * d);
}

double first_order_effectiveness(PelletShape shape, double phi) {
  if (phi < 1e-2) {
    // Taylor series of the closed forms, which cancel in floating point
    // here (the sphere's loses half its digits by phi = 1e-4); the next
    // terms are O(phi^6) < 1e-12.
    const double p2 = phi * phi;
    switch (shape) {
      case PelletShape::Slab:
        return 1 - p2 / 3 + 2 * p2 * p2 / 15;
      case PelletShape::Cylinder:
        return 1 - p2 / 2 + p2 * p2 / 3;
      case PelletShape::Sphere:
        break;
    }
    return 1 - 0.6 * p2 + 18 * p2 * p2 / 35;
  }
  switch (shape) {
    case PelletShape::Slab:
      return std::tanh(phi) / phi;
    case PelletShape::Sphere:
      return (1 / std::tanh(3 * phi) - 1 / (3 * phi)) / phi;
    case PelletShape::Cylinder:
      break;
  }
  const double x = 2 * phi;
  const double ratio = x <= 500 ? std::cyl_bessel_i(1.0, x) / std::cyl_bessel_i(0.0, x)
                                : scaled_bessel_i_large(1, x) / scaled_bessel_i_large(0, x);
  return ratio / phi;
}

double thiele_effectiveness(const PelletKinetics& kin, const PelletTransport& tr,
                            const double* c_surface, int j, int key) {
  const int n = kin.n_species();
  const double nu_key = kin.nu(j, key);
  const double r_s = kin.rate(j, c_surface, nullptr);
  if (!(r_s > 0) || nu_key >= 0) return 1;
  // The invariant c_i = c_i,s + alpha_i (c_key - c_key,s).
  std::vector<double> alpha(n), c(n);
  double c_lo = 0;
  for (int i = 0; i < n; ++i) {
    alpha[i] = kin.nu(j, i) * tr.D[key] / (nu_key * tr.D[i]);
    if (i != key && alpha[i] > 0)  // a co-reactant: used up at this c_key
      c_lo = std::max(c_lo, c_surface[key] - c_surface[i] / alpha[i]);
  }
  auto rate_at = [&](double ck) {
    for (int i = 0; i < n; ++i)
      c[i] = std::max(c_surface[i] + alpha[i] * (ck - c_surface[key]), 0.0);
    c[key] = std::max(ck, 0.0);
    return kin.rate(j, c.data(), nullptr);
  };
  const double c_hi = c_surface[key];
  if (rate_at(c_lo) <= 0) {
    // Equilibrium inside the interval: bisect for r = 0 (r(c_hi) > 0).
    double a = c_lo, b = c_hi;
    for (int it = 0; it < 200 && b - a > 1e-14 * c_hi; ++it) {
      const double m = 0.5 * (a + b);
      (rate_at(m) > 0 ? b : a) = m;
    }
    c_lo = a;
  }
  // int r dc over [c_lo, c_hi]: composite Gauss-Legendre, exact for the
  // polynomial rates of integer orders up to 15.
  constexpr int kPanels = 6;
  const double h = (c_hi - c_lo) / kPanels;
  double integral = 0;
  for (int p = 0; p < kPanels; ++p) {
    const double mid = c_lo + (p + 0.5) * h;
    for (std::size_t q = 0; q < kGlX.size(); ++q)
      integral += kGlW[q] * 0.5 * h * rate_at(mid + 0.5 * h * kGlX[q]);
  }
  if (!(integral > 0)) return 1;
  const double phi = tr.L * r_s / std::sqrt(2 * tr.D[key] * integral);
  return first_order_effectiveness(tr.shape, phi);
}

PelletSolver::PelletSolver(PelletSolveOptions options) : options_(options) {}

void PelletSolver::reset() {
  profiles_.clear();
  last_nodes_ = 0;
}

namespace {

// In-place inverse of the n x n row-major matrix A by Gauss-Jordan with
// partial pivoting (the blocks are the species count, a handful). `piv`
// holds n ints. False when A is singular.
bool invert_small(double* A, int n, int* piv) {
  for (int k = 0; k < n; ++k) {
    int p = k;
    for (int i = k + 1; i < n; ++i)
      if (std::abs(A[i * n + k]) > std::abs(A[p * n + k])) p = i;
    if (!(std::abs(A[p * n + k]) > 0) || !std::isfinite(A[p * n + k])) return false;
    piv[k] = p;
    if (p != k)
      for (int m = 0; m < n; ++m) std::swap(A[k * n + m], A[p * n + m]);
    const double inv = 1.0 / A[k * n + k];
    A[k * n + k] = 1.0;
    for (int m = 0; m < n; ++m) A[k * n + m] *= inv;
    for (int i = 0; i < n; ++i) {
      if (i == k) continue;
      const double f = A[i * n + k];
      if (f == 0) continue;
      A[i * n + k] = 0.0;
      for (int m = 0; m < n; ++m) A[i * n + m] -= f * A[k * n + m];
    }
  }
  // Undo the row swaps as column swaps, last first.
  for (int k = n - 1; k >= 0; --k)
    if (piv[k] != k)
      for (int i = 0; i < n; ++i) std::swap(A[i * n + k], A[i * n + piv[k]]);
  return true;
}

}  // namespace

const PelletSolver::Grid& PelletSolver::grid(PelletShape shape, double L, int N) {
  for (const auto& g : grids_)
    if (g.N == N && g.shape == shape && g.L == L) return g;
  Grid g;
  g.N = N;
  g.shape = shape;
  g.L = L;
  const int a = shape_exponent(shape);
  const double R = L * (a + 1);
  // Nodes clustered toward the surface, where a large modulus puts the
  // reaction: x = R (1 - sinh(b (1 - s)) / sinh b), s uniform in [0, 1].
  constexpr double kB = 3.0;
  std::vector<double> x(N), face(N + 1);
  for (int k = 0; k < N; ++k) {
    const double s = static_cast<double>(k) / (N - 1);
    x[k] = R * (1 - std::sinh(kB * (1 - s)) / std::sinh(kB));
  }
  x[0] = 0;
  x[N - 1] = R;
  face[0] = 0;
  for (int k = 1; k < N; ++k) face[k] = 0.5 * (x[k - 1] + x[k]);
  face[N] = R;
  g.vol.resize(N);
  for (int k = 0; k < N; ++k)
    g.vol[k] = (ipow(face[k + 1], a) * face[k + 1] - ipow(face[k], a) * face[k]) / (a + 1);
  // Conductance of face k (between nodes k-1 and k): A / dx.
  g.Aw.assign(N + 1, 0.0);
  for (int k = 1; k < N; ++k) g.Aw[k] = ipow(face[k], a) / (x[k] - x[k - 1]);
  g.V = ipow(R, a) * R / (a + 1);
  grids_.push_back(std::move(g));
  return grids_.back();
}

bool PelletSolver::solve_grid(const PelletKinetics& kin, const PelletTransport& tr,
                              const double* c_s, int N, std::vector<double>& eta) {
  const int n = kin.n_species(), nr = kin.n_reactions();
  const Grid& g = grid(tr.shape, tr.L, N);
  const std::vector<double>& vol = g.vol;
  const std::vector<double>& Aw = g.Aw;

  // Unknowns: nodes 0..N-2 (node N-1 is the surface, c = c_s).
  const int M = N - 1;
  const std::size_t level =
      static_cast<std::size_t>(std::lround(std::log2((N - 1.0) / (options_.nodes - 1))));
  if (profiles_.size() <= level) profiles_.resize(level + 1);
  std::vector<double>& c = profiles_[level];
  if (c.size() != static_cast<std::size_t>(M * n)) {
    c.resize(static_cast<std::size_t>(M) * n);
    for (int k = 0; k < M; ++k)
      for (int i = 0; i < n; ++i) c[k * n + i] = c_s[i];
  }
  double c_ref = 0;
  for (int i = 0; i < n; ++i) c_ref += std::abs(c_s[i]);
  c_ref = std::max(c_ref, 1e-300);

  // Work space, kept between calls: per node the inverse of the eliminated
  // diagonal block (n x n) and the eliminated right-hand side (n).
  const std::size_t nn = static_cast<std::size_t>(n) * n;
  binv_.resize(static_cast<std::size_t>(M) * nn);
  d_.resize(static_cast<std::size_t>(M) * n);
  nu_.resize(static_cast<std::size_t>(nr) * n);
  g_.resize(n);
  piv_.resize(n);
  delta_.resize(2 * static_cast<std::size_t>(n));
  for (int j = 0; j < nr; ++j)
    for (int i = 0; i < n; ++i) nu_[j * n + i] = kin.nu(j, i);

  bool converged = false;
  for (int it = 0; it < options_.max_newton && !converged; ++it) {
    // Block Thomas forward sweep: the coupling to k-1 and k+1 is diagonal
    // (D_i Aw), so B'_k = B_k - diag(D Aw_k) B'_{k-1}^-1 diag(D Aw_k) and
    // d'_k = d_k - diag(D Aw_k) B'_{k-1}^-1 d'_{k-1}.
    for (int k = 0; k < M; ++k) {
      const double* ck = &c[k * n];
      double* B = &binv_[k * nn];
      double* d = &d_[k * n];
      std::fill(B, B + nn, 0.0);
      for (int i = 0; i < n; ++i) {
        const double up = k + 1 < M ? c[(k + 1) * n + i] : c_s[i];
        const double down = k > 0 ? c[(k - 1) * n + i] : 0.0;
        d[i] = -tr.D[i] * (Aw[k + 1] * (up - ck[i]) - Aw[k] * (ck[i] - down));
        B[i * n + i] = -tr.D[i] * (Aw[k + 1] + Aw[k]);
      }
      for (int j = 0; j < nr; ++j) {
        const double rj = kin.rate(j, ck, g_.data());
        for (int i = 0; i < n; ++i) {
          const double v = nu_[j * n + i] * vol[k];
          if (v == 0) continue;
          d[i] -= v * rj;
          for (int m = 0; m < n; ++m) B[i * n + m] += v * g_[m];
        }
      }
      if (k > 0) {
        const double* P = &binv_[(k - 1) * nn];
        const double* dp = &d_[(k - 1) * n];
        for (int i = 0; i < n; ++i) {
          const double li = tr.D[i] * Aw[k];
          double acc = 0;
          for (int m = 0; m < n; ++m) {
            B[i * n + m] -= li * P[i * n + m] * tr.D[m] * Aw[k];
            acc += P[i * n + m] * dp[m];
          }
          d[i] -= li * acc;
        }
      }
      if (!invert_small(B, n, piv_.data())) return false;
    }
    // Back substitution and the update (projected onto c >= 0).
    double step = 0;
    double* next = delta_.data() + n;  // delta of node k + 1
    double* cur = delta_.data();
    for (int k = M - 1; k >= 0; --k) {
      const double* P = &binv_[k * nn];
      const double* d = &d_[k * n];
      for (int i = 0; i < n; ++i) {
        double acc = 0;
        for (int m = 0; m < n; ++m) {
          const double rhs = d[m] - (k + 1 < M ? tr.D[m] * Aw[k + 1] * next[m] : 0.0);
          acc += P[i * n + m] * rhs;
        }
        cur[i] = acc;
      }
      for (int i = 0; i < n; ++i) {
        if (!std::isfinite(cur[i])) return false;
        c[k * n + i] = std::max(c[k * n + i] + cur[i], 0.0);
        step = std::max(step, std::abs(cur[i]));
      }
      std::swap(cur, next);
    }
    converged = step <= options_.newton_tol * c_ref;
  }
  if (!converged) {
    c.clear();  // no warm start from a failed iterate
    return false;
  }
  // eta_j = volume average of r_j over r_j(c_s); the surface shell at c_s.
  eta.assign(nr, 0.0);
  for (int j = 0; j < nr; ++j) {
    const double rs = kin.rate(j, c_s, nullptr);
    if (rs == 0) {
      eta[j] = 1;
      continue;
    }
    double sum = vol[N - 1] * rs;
    for (int k = 0; k < M; ++k) sum += vol[k] * kin.rate(j, &c[k * n], nullptr);
    eta[j] = sum / (g.V * rs);
  }
  return true;
}

void PelletSolver::solve(const PelletKinetics& kin, const PelletTransport& tr,
                         const double* c_surface, double* eta) {
  const int nr = kin.n_reactions();
  // Grids of N, 2N - 1, 4N - 3, ... nodes from the coarsest each call: the
  // Richardson extrapolation of each pair (the scheme is second order in the
  // mapped grid) is the estimate, and two successive estimates within rtol
  // end it. Starting from the coarsest every time keeps the test the same
  // along a bed (the grids are warm-started each from its own last profile,
  // so the coarse solves cost a Newton step or two).
  auto solve_on = [&](int N, std::vector<double>& out) {
    if (N > options_.max_nodes)
      throw SolverError(fmt::format(
          "pellet balance: effectiveness not converged to {:g} on {} nodes (the reaction lives "
          "in a film thinner than the grid resolves)",
          options_.rtol, (N - 1) / 2 + 1));
    if (!solve_grid(kin, tr, c_surface, N, out))
      throw SolverError(fmt::format("pellet balance: Newton did not converge on {} nodes", N));
  };
  int N = options_.nodes;
  solve_on(N, eta_a_);
  N = 2 * (N - 1) + 1;
  solve_on(N, eta_b_);
  eta_prev_.resize(nr);
  for (int j = 0; j < nr; ++j) eta_prev_[j] = eta_b_[j] + (eta_b_[j] - eta_a_[j]) / 3;
  while (true) {
    eta_a_.swap(eta_b_);
    N = 2 * (N - 1) + 1;
    solve_on(N, eta_b_);
    bool done = true;
    for (int j = 0; j < nr; ++j) {
      const double ext = eta_b_[j] + (eta_b_[j] - eta_a_[j]) / 3;
      if (std::abs(ext - eta_prev_[j]) > options_.rtol * std::max(std::abs(ext), 1e-12))
        done = false;
      eta_prev_[j] = ext;
    }
    if (done) break;
  }
  for (int j = 0; j < nr; ++j) eta[j] = eta_prev_[j];
  last_nodes_ = N;
}

}  // namespace rxtrain
