#include "rxtrain/models/equilibrium.hpp"

#include <fmt/format.h>

#include <Eigen/LU>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/solvers/scalar_root.hpp"

namespace rxtrain {

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kEps = std::numeric_limits<double>::epsilon();
// Liquid activities are C / (1 mol/L) = C / 1000 mol/m3 (as in mechanism.cpp).
constexpr double kLiquidStandardConcentration = 1000.0;
// exp() of anything beyond this over- or underflows a double.
constexpr double kMaxLnForExp = 700.0;
constexpr int kMaxTableRows = 100000;

bool opposite_signs(double a, double b) { return (a < 0 && b > 0) || (a > 0 && b < 0); }

struct Bracket {
  double a = 0, b = 0, fa = 0, fb = 0;
};

// Steps outward from T0 in both directions (step growing by 1.5) until f
// changes sign between neighbouring samples on one side, inside
// [T_min, T_max]. The first side to change sign wins, so the bracket is the
// one nearest T0.
template <class Fn>
std::optional<Bracket> bracket_outward(Fn&& f, double T0, const EquilibriumOptions& o) {
  T0 = std::clamp(T0, o.T_min, o.T_max);
  const double f0 = f(T0);
  if (f0 == 0) return Bracket{T0, T0, 0, 0};
  double up = T0, f_up = f0, dn = T0, f_dn = f0;
  double step = o.bracket_step;
  while (up < o.T_max || dn > o.T_min) {
    if (up < o.T_max) {
      const double T = std::min(T0 + step, o.T_max);
      const double fT = f(T);
      if (fT == 0 || opposite_signs(f_up, fT)) return Bracket{up, T, f_up, fT};
      up = T, f_up = fT;
    }
    if (dn > o.T_min) {
      const double T = std::max(T0 - step, o.T_min);
      const double fT = f(T);
      if (fT == 0 || opposite_signs(f_dn, fT)) return Bracket{T, dn, fT, f_dn};
      dn = T, f_dn = fT;
    }
    step *= 1.5;
  }
  return std::nullopt;
}

template <class Fn>
std::optional<double> root_outward(Fn&& f, double T0, const EquilibriumOptions& o,
                                   const char* what) {
  const auto br = bracket_outward(f, T0, o);
  if (!br) return std::nullopt;
  if (br->a == br->b) return br->a;
  const ScalarRoot r = brent_root(f, br->a, br->b, br->fa, br->fb, o.T_tolerance, o.max_iterations);
  if (!r.converged)
    throw SolverError(
        fmt::format("{}: no convergence in {} iterations between {:.6g} K and "
                    "{:.6g} K",
                    what, o.max_iterations, br->a, br->b));
  return r.x;
}

// ---- The equilibrium system -----------------------------------------------

// ln of the activity scale phi (a_i = F_i * phi) and its derivative along
// a change of flows dF: gas phi = P / (p0 Ft), liquid phi = 1 / (C0 v).
double ln_phi(const Mechanism& mech, double P, const std::vector<double>& F) {
  if (mech.phase() == Phase::Gas) {
    double Ft = 0;
    for (double f : F) Ft += f;
    return std::log(P / kStandardPressure) - std::log(Ft);
  }
  return -std::log(kLiquidStandardConcentration * mech.liquid_volume_flow(F.data()));
}

double sum_nu(const Reaction& rx) {
  double s = 0;
  for (double n : rx.nu) s += n;
  return s;
}

// ln Q_j at flows F (+inf / -inf when a reactant / product is absent).
double ln_Q(const Mechanism& mech, int j, double P, const std::vector<double>& F) {
  const auto& nu = mech.reactions()[j].nu;
  double lq = 0;
  bool zero_product = false, zero_reactant = false;
  for (int i = 0; i < mech.n_species(); ++i) {
    if (nu[i] == 0) continue;
    if (F[i] <= 0) {
      (nu[i] > 0 ? zero_product : zero_reactant) = true;
      continue;
    }
    lq += nu[i] * std::log(F[i]);
  }
  if (zero_reactant) return kInf;
  if (zero_product) return -kInf;
  return lq + sum_nu(mech.reactions()[j]) * ln_phi(mech, P, F);
}

// Reversible reactions solved at one (T, P) from flows F0 (the inlet with
// the irreversible extents applied); unknowns are the extents of the
// `active` reactions.
class EquilibriumSystem {
 public:
  EquilibriumSystem(const Mechanism& mech, std::vector<double> F0, double T, double P,
                    std::vector<int> active)
      : mech_(mech), F0_(std::move(F0)), P_(P), active_(std::move(active)) {
    const int n = mech.n_species();
    const int m = static_cast<int>(active_.size());
    nu_.resize(n, m);
    dnu_.resize(m);
    ln_K_.resize(m);
    for (int k = 0; k < m; ++k) {
      const auto& rx = mech.reactions()[active_[k]];
      for (int i = 0; i < n; ++i) nu_(i, k) = rx.nu[i];
      dnu_[k] = sum_nu(rx);
      ln_K_[k] = mech.ln_K(active_[k], T);
    }
    participant_.assign(n, false);
    for (int i = 0; i < n; ++i)
      for (int k = 0; k < m; ++k)
        if (nu_(i, k) != 0) participant_[i] = true;
    // Liquid volume per mole of each species (ideal mixing).
    if (mech.phase() == Phase::Liquid) {
      w_.resize(n);
      for (int i = 0; i < n; ++i) w_[i] = mech.species()[i].liquid_molar_volume().value();
    }
  }

  int size() const { return static_cast<int>(active_.size()); }
  const std::vector<int>& active() const { return active_; }
  // The same reactions at the same T and P from other flows F0 (their
  // ln K kept: no second thermo evaluation).
  void set_origin(const std::vector<double>& F0) { F0_ = F0; }
  const Eigen::MatrixXd& nu() const { return nu_; }

  void flows(const Eigen::VectorXd& xi, std::vector<double>& F) const {
    F = F0_;
    for (int k = 0; k < size(); ++k)
      for (int i = 0; i < static_cast<int>(F.size()); ++i) F[i] += nu_(i, k) * xi[k];
  }

  // g_k = sum_i nu_ik ln a_i - ln K_k and, when J != nullptr, dg/dxi.
  // Returns false (g untouched) when a participating species is not
  // strictly positive: outside the domain of the logs.
  bool residual(const std::vector<double>& F, Eigen::VectorXd& g, Eigen::MatrixXd* J) const {
    const int n = static_cast<int>(F.size());
    const int m = size();
    for (int i = 0; i < n; ++i)
      if (participant_[i] && !(F[i] > 0)) return false;
    const double lp = ln_phi(mech_, P_, F);
    if (!std::isfinite(lp)) return false;
    g.resize(m);
    for (int k = 0; k < m; ++k) {
      double s = dnu_[k] * lp - ln_K_[k];
      for (int i = 0; i < n; ++i)
        if (nu_(i, k) != 0) s += nu_(i, k) * std::log(F[i]);
      g[k] = s;
    }
    if (J) {
      // d ln phi / d xi_k: gas -dnu_k / Ft; liquid -(sum_i nu_ik w_i) / v.
      Eigen::VectorXd& dlp = dlp_;
      dlp.resize(m);
      if (mech_.phase() == Phase::Gas) {
        double Ft = 0;
        for (double f : F) Ft += f;
        for (int k = 0; k < m; ++k) dlp[k] = -dnu_[k] / Ft;
      } else {
        double v = 0;
        for (int i = 0; i < n; ++i) v += F[i] * w_[i];
        for (int k = 0; k < m; ++k) {
          double dv = 0;
          for (int i = 0; i < n; ++i) dv += nu_(i, k) * w_[i];
          dlp[k] = -dv / v;
        }
      }
      J->resize(m, m);
      for (int a = 0; a < m; ++a)
        for (int b = 0; b < m; ++b) {
          double s = dnu_[a] * dlp[b];
          for (int i = 0; i < n; ++i)
            if (nu_(i, a) != 0 && nu_(i, b) != 0) s += nu_(i, a) * nu_(i, b) / F[i];
          (*J)(a, b) = s;
        }
    }
    return true;
  }

 private:
  const Mechanism& mech_;
  std::vector<double> F0_;
  double P_;
  std::vector<int> active_;
  Eigen::MatrixXd nu_;  // n_species x active
  std::vector<double> dnu_, ln_K_, w_;
  std::vector<bool> participant_;
  mutable Eigen::VectorXd dlp_;  // residual()'s work space
};

// Feasible interval [lo, hi] of one extent from flows F with the others
// held: limited by the first product (lo) and reactant (hi) to run out.
void extent_interval(const Eigen::MatrixXd& nu, int k, const std::vector<double>& F, double& lo,
                     double& hi) {
  lo = -kInf;
  hi = kInf;
  for (int i = 0; i < nu.rows(); ++i) {
    const double c = nu(i, k);
    if (c < 0) hi = std::min(hi, F[i] / -c);
    if (c > 0) lo = std::max(lo, -F[i] / c);
  }
}

// A strictly interior start: each pass moves every extent to 1/m of its
// interval's midpoint, which keeps each present species at >= half its
// flow (each of the m reactions takes at most 1/(2m) of it) and makes
// every absent species that one reaction can form from present ones
// positive; n passes reach any species the closure can form.
Eigen::VectorXd interior_start(const EquilibriumSystem& sys, const std::vector<double>& F0) {
  const int m = sys.size();
  const int n = static_cast<int>(F0.size());
  Eigen::VectorXd xi = Eigen::VectorXd::Zero(m);
  std::vector<double> F = F0;
  for (int pass = 0; pass <= n; ++pass) {
    bool all_positive = true;
    for (int i = 0; i < n && all_positive; ++i)
      for (int k = 0; k < m; ++k)
        if (sys.nu()(i, k) != 0 && !(F[i] > 0)) all_positive = false;
    if (all_positive) break;
    Eigen::VectorXd d(m);
    for (int k = 0; k < m; ++k) {
      double lo, hi;
      extent_interval(sys.nu(), k, F, lo, hi);
      d[k] = (std::isfinite(lo) && std::isfinite(hi)) ? 0.5 * (lo + hi) / m : 0.0;
    }
    xi += d;
    sys.flows(xi, F);
  }
  return xi;
}

// Which reversible reactions can run at all: a reaction can run forward
// when all its reactants can be present, backward when all its products
// can; what it forms becomes available to the others (closure).
void split_active(const Mechanism& mech, const std::vector<double>& F0, std::vector<int>& active,
                  std::vector<int>& frozen) {
  const int n = mech.n_species();
  std::vector<bool> present(n);
  for (int i = 0; i < n; ++i) present[i] = F0[i] > 0;
  std::vector<bool> on(mech.n_reactions(), false);
  for (bool changed = true; changed;) {
    changed = false;
    for (int j = 0; j < mech.n_reactions(); ++j) {
      const auto& rx = mech.reactions()[j];
      if (!rx.reversible || on[j]) continue;
      bool reactants = true, products = true;
      for (int i = 0; i < n; ++i) {
        if (rx.nu[i] < 0 && !present[i]) reactants = false;
        if (rx.nu[i] > 0 && !present[i]) products = false;
      }
      if (!reactants && !products) continue;
      on[j] = true;
      changed = true;
      for (int i = 0; i < n; ++i)
        if (rx.nu[i] != 0) present[i] = true;
    }
  }
  active.clear();
  frozen.clear();
  for (int j = 0; j < mech.n_reactions(); ++j) {
    if (!mech.reactions()[j].reversible) continue;
    (on[j] ? active : frozen).push_back(j);
  }
}

void check_independent(const Mechanism& mech, const std::vector<int>& active) {
  const int n = mech.n_species();
  // One reaction (every solve of a one-reaction case): independent unless
  // its column is zero, the rank the LU below would find, without its
  // allocations.
  if (active.size() == 1) {
    const auto& rx = mech.reactions()[active[0]];
    if (std::any_of(rx.nu.begin(), rx.nu.end(), [](double c) { return c != 0; })) return;
  }
  Eigen::MatrixXd N(n, 0);
  for (std::size_t k = 0; k < active.size(); ++k) {
    N.conservativeResize(n, N.cols() + 1);
    for (int i = 0; i < n; ++i) N(i, N.cols() - 1) = mech.reactions()[active[k]].nu[i];
    Eigen::FullPivLU<Eigen::MatrixXd> lu(N);
    if (lu.rank() < N.cols()) {
      const auto& rx = mech.reactions()[active[k]];
      throw InputError(rx.where,
                       fmt::format("reversible reaction {} is a combination of the reversible "
                                   "reactions before it; their equilibrium extents are not "
                                   "unique: drop one of them or make it irreversible",
                                   rx.id));
    }
  }
}

// F_in + sum over irreversible reactions of nu_j xi_j, checked >= 0.
std::vector<double> apply_fixed_extents(const Mechanism& mech, const Stream& inlet,
                                        const std::vector<double>& fixed) {
  const int n = mech.n_species();
  std::vector<double> F = inlet.F;
  if (fixed.empty()) return F;
  if (static_cast<int>(fixed.size()) != mech.n_reactions())
    throw std::invalid_argument("fixed extents: expected one per reaction");
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const auto& rx = mech.reactions()[j];
    if (rx.reversible) continue;
    if (!std::isfinite(fixed[j]))
      throw std::invalid_argument("fixed extent of " + rx.id + " is not finite");
    for (int i = 0; i < n; ++i) F[i] += rx.nu[i] * fixed[j];
  }
  const double Ft = inlet.total_flow();
  for (int i = 0; i < n; ++i) {
    if (F[i] < -1e-9 * Ft)
      throw std::invalid_argument("fixed extents leave species " + mech.species()[i].id +
                                  " with a negative flow");
    F[i] = std::max(F[i], 0.0);
  }
  return F;
}

void check_inlet_flows(const Mechanism& mech, const Stream& inlet) {
  if (static_cast<int>(inlet.F.size()) != mech.n_species())
    throw std::invalid_argument("equilibrium: inlet flows not sized to the species");
  double Ft = 0;
  for (double f : inlet.F) {
    if (!(f >= 0) || !std::isfinite(f))
      throw std::invalid_argument("equilibrium: inlet flows must be finite and >= 0");
    Ft += f;
  }
  if (!(Ft > 0)) throw std::invalid_argument("equilibrium: inlet has no flow");
}

// T and the inlet's P.
void check_conditions(const Mechanism& mech, const Stream& inlet, double T) {
  if (!(T > 0) || !std::isfinite(T))
    throw std::invalid_argument("equilibrium: temperature must be > 0 K");
  if (mech.phase() == Phase::Gas && (!(inlet.P > 0) || !std::isfinite(inlet.P)))
    throw std::invalid_argument("equilibrium: pressure must be > 0 Pa");
}

void check_inlet(const Mechanism& mech, const Stream& inlet, double T) {
  check_inlet_flows(mech, inlet);
  check_conditions(mech, inlet, T);
}

struct SingleResult {
  double xi = 0;
  double g = 0;
  int iterations = 0;
  std::vector<double> F;
};

// One active reaction j: g(xi) rises from -inf to +inf over the open
// feasible interval (lo, hi), so the root is bracketed from the start.
// After one look at the midpoint the flows are re-based at the end the
// root lies toward, F = F_end + sigma nu t with t >= 0 the distance from
// that end and the limiting species exactly zero in F_end: a species that
// nearly runs out (K of 1e30, say) then keeps its full relative precision
// instead of being the round-off of F0 - nu xi. t is found by a
// safeguarded Newton: every step is a Newton step inside the bracket or a
// bisection.
SingleResult solve_single(const Mechanism& mech, const std::vector<double>& F0, double T, double P,
                          int j, const EquilibriumOptions& o) {
  const int n = mech.n_species();
  const auto& nu = mech.reactions()[j].nu;
  EquilibriumSystem sys(mech, F0, T, P, {j});
  const EquilibriumSystem& whole = sys;
  double lo, hi;
  extent_interval(whole.nu(), 0, F0, lo, hi);
  if (!std::isfinite(lo) || !std::isfinite(hi))
    throw std::invalid_argument("equilibrium: reaction " + mech.reactions()[j].id +
                                " has no reactant or no product");
  SingleResult res;
  Eigen::VectorXd x(1), g(1);
  Eigen::MatrixXd J(1, 1);
  const double mid = 0.5 * (lo + hi);
  x[0] = mid;
  whole.flows(x, res.F);
  if (!whole.residual(res.F, g, nullptr))
    throw std::logic_error("equilibrium: midpoint of the feasible extents is not interior");
  res.iterations = 1;
  if (std::abs(g[0]) <= o.ln_tolerance) {
    res.xi = mid;
    res.g = g[0];
    return res;
  }
  const bool from_hi = g[0] < 0;  // the root lies toward hi
  const double sigma = from_hi ? -1.0 : 1.0;
  const double end = from_hi ? hi : lo;
  std::vector<double> Fb(n);
  for (int i = 0; i < n; ++i) {
    Fb[i] = F0[i] + nu[i] * end;
    const bool limiting_side = from_hi ? nu[i] < 0 : nu[i] > 0;
    if (limiting_side && Fb[i] <= 4 * kEps * F0[i]) Fb[i] = 0;
    Fb[i] = std::max(Fb[i], 0.0);
  }
  sys.set_origin(Fb);
  const EquilibriumSystem& near = sys;
  // h(t) = sigma g(end + sigma t) rises from -inf at t = 0+ to
  // |g(mid)| at t = (hi - lo) / 2; dh/dt = dg/dxi.
  auto eval = [&](double t, double& h, double& dh) {
    x[0] = sigma * t;
    near.flows(x, res.F);
    if (near.residual(res.F, g, &J)) {
      h = sigma * g[0];
      dh = J(0, 0);
    } else {  // a limiting species at zero: the t = 0 end
      h = -kInf;
      dh = std::numeric_limits<double>::quiet_NaN();
    }
  };
  double a = 0, b = 0.5 * (hi - lo);
  double t = 0.5 * b;
  double h_prev = kInf;
  bool prev_newton = false;
  double h = -kInf, dh = 0;
  for (; res.iterations < o.max_iterations; ++res.iterations) {
    eval(t, h, dh);
    if (std::abs(h) <= o.ln_tolerance) break;
    (h > 0 ? b : a) = t;
    if (b - a <= 4 * kEps * std::max(std::abs(a), std::abs(b))) break;  // round-off
    double next = t - h / dh;
    // Bisect when Newton would leave the bracket or the last Newton step
    // did not at least halve |h|: every step then halves |h| or the bracket.
    // The bisection is geometric while the bracket spans decades (h is
    // logarithmic in t near t = 0, so a root at t = 1e-30 takes ~10 steps,
    // not 100).
    const bool newton =
        next > a && next < b && dh > 0 && !(prev_newton && std::abs(h) > 0.5 * h_prev);
    if (!newton) {
      if (a == 0)
        next = b / 1024;
      else if (b > 4 * a)
        next = std::sqrt(a * b);
      else
        next = 0.5 * (a + b);
    }
    prev_newton = newton;
    h_prev = std::abs(h);
    t = next;
  }
  res.xi = end + sigma * t;
  res.g = sigma * h;
  return res;
}

// max_k |g_k| at flows F, or +inf outside the logs' domain.
double max_abs_residual(const EquilibriumSystem& sys, const std::vector<double>& F) {
  Eigen::VectorXd g;
  if (!sys.residual(F, g, nullptr)) return kInf;
  return g.lpNorm<Eigen::Infinity>();
}

// What every equilibrium from one inlet with the same fixed extents
// shares, whatever T: the flows the reversible reactions start from, which
// of them can run, and the checks. A curve or a temperature search
// prepares it once and solves at each T.
struct PreparedEquilibrium {
  std::vector<double> F0;       // the inlet with the irreversible extents applied
  double Fscale = 0;            // sum of F0
  std::vector<double> extents;  // per reaction: the irreversible ones as given, else 0
  std::vector<int> active, frozen;
};

PreparedEquilibrium prepare_equilibrium(const Mechanism& mech, const Stream& inlet,
                                        const std::vector<double>& fixed) {
  check_inlet_flows(mech, inlet);
  if (!has_reversible_reaction(mech))
    throw std::invalid_argument("equilibrium: the mechanism has no reversible reaction");
  PreparedEquilibrium p;
  p.F0 = apply_fixed_extents(mech, inlet, fixed);
  for (double f : p.F0) p.Fscale += f;
  p.extents.assign(mech.n_reactions(), 0.0);
  if (!fixed.empty())
    for (int j = 0; j < mech.n_reactions(); ++j)
      if (!mech.reactions()[j].reversible) p.extents[j] = fixed[j];
  split_active(mech, p.F0, p.active, p.frozen);
  check_independent(mech, p.active);
  return p;
}

EquilibriumState solve_prepared(const Mechanism& mech, const Stream& inlet, double T,
                                const ConversionBasis& basis, const PreparedEquilibrium& prep,
                                const EquilibriumOptions& o) {
  check_conditions(mech, inlet, T);
  const int n = mech.n_species();
  const std::vector<double>& F0 = prep.F0;
  const double Fscale = prep.Fscale;
  const std::vector<int>& active = prep.active;

  EquilibriumState st;
  st.extents = prep.extents;
  st.frozen = prep.frozen;

  std::vector<double> F = F0;
  const int m = static_cast<int>(active.size());
  if (m == 1) {
    SingleResult r = solve_single(mech, F0, T, inlet.P, active[0], o);
    F = std::move(r.F);
    st.extents[active[0]] = r.xi;
    st.iterations = r.iterations;
    st.max_ln_residual = std::abs(r.g);
  } else if (m > 1) {
    // Damped Newton (solvers/newton.hpp) on the extents, re-based at its
    // last point whenever it stalls: the flows then become the new origin,
    // so a species that nearly runs out is no longer the round-off of
    // F0 + N xi and the next run resolves it. Each re-start must at least
    // halve the residual.
    std::vector<double> Fb = F0;
    double best = kInf;
    for (int attempt = 0;; ++attempt) {
      const EquilibriumSystem sys(mech, Fb, T, inlet.P, active);
      // Unknowns scaled by the total flow so the step tolerance is relative.
      Eigen::VectorXd x = attempt == 0 ? Eigen::VectorXd(interior_start(sys, Fb) / Fscale)
                                       : Eigen::VectorXd::Zero(m);
      // A reactant or product that belongs to one reaction alone bounds
      // that extent exactly; shared species are kept positive by the line
      // search (the residual is NaN outside the logs' domain).
      Eigen::VectorXd lower = Eigen::VectorXd::Constant(m, -kInf);
      Eigen::VectorXd upper = Eigen::VectorXd::Constant(m, kInf);
      for (int i = 0; i < n; ++i) {
        int owner = -1, count = 0;
        for (int k = 0; k < m; ++k)
          if (sys.nu()(i, k) != 0) owner = k, ++count;
        if (count != 1) continue;
        const double c = sys.nu()(i, owner);
        if (c < 0) upper[owner] = std::min(upper[owner], Fb[i] / -c / Fscale);
        if (c > 0) lower[owner] = std::max(lower[owner], -Fb[i] / c / Fscale);
      }
      std::vector<double> Fw;
      Eigen::VectorXd xi(m);
      auto fn = [&](const Eigen::VectorXd& xs, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
        xi = xs * Fscale;
        sys.flows(xi, Fw);
        if (!sys.residual(Fw, f, J)) {
          f = Eigen::VectorXd::Constant(m, std::numeric_limits<double>::quiet_NaN());
          if (J) J->setZero(m, m);
          return;
        }
        if (J) *J *= Fscale;
      };
      const NewtonResult nr = solve_newton(fn, x, lower, upper, o.newton);
      st.iterations += nr.iterations;
      xi = x * Fscale;
      sys.flows(xi, F);
      const double res = max_abs_residual(sys, F);
      if (std::isfinite(res)) {
        for (int k = 0; k < m; ++k) st.extents[active[k]] += xi[k];
        Fb = F;
      } else {
        F = Fb;
      }
      st.max_ln_residual = std::min(res, best);
      if (nr.converged || res <= o.newton.residual_tolerance) break;
      if (!(res < 0.5 * best) || attempt >= 20)
        throw SolverError(
            fmt::format("equilibrium at {}: {} (max |ln Q - ln K| = {:.3g})", temperature_words(T),
                        nr.message.empty() ? "Newton failed" : nr.message, std::min(res, best)));
      best = res;
    }
  }
  for (double& f : F) f = std::max(f, 0.0);  // round-off at a limiting reactant
  st.stream = Stream{T, inlet.P, std::move(F)};
  st.X = basis.conversion(st.stream);
  return st;
}

EquilibriumState solve_equilibrium_impl(const Mechanism& mech, const Stream& inlet, double T,
                                        const ConversionBasis& basis,
                                        const std::vector<double>& fixed,
                                        const EquilibriumOptions& o) {
  check_inlet(mech, inlet, T);
  return solve_prepared(mech, inlet, T, basis, prepare_equilibrium(mech, inlet, fixed), o);
}

void check_options(const EquilibriumOptions& o) {
  const std::string bad = o.validate();
  if (!bad.empty()) throw std::invalid_argument("EquilibriumOptions: " + bad);
}

}  // namespace

// ---- options ---------------------------------------------------------------

std::string EquilibriumOptions::validate() const {
  if (!(ln_tolerance > 0)) return "ln_tolerance must be > 0";
  if (max_iterations < 1) return "max_iterations must be >= 1";
  if (!(T_min > 0) || !std::isfinite(T_min)) return "T_min must be > 0 K";
  if (!(T_max > T_min) || !std::isfinite(T_max)) return "T_max must be finite and > T_min";
  if (!(T_tolerance > 0) || !(T_tolerance < 1)) return "T_tolerance must lie in (0, 1)";
  if (!(bracket_step > 0) || !std::isfinite(bracket_step)) return "bracket_step must be > 0 K";
  if (!(approach_T_window > 0)) return "approach_T_window must be > 0 K";
  if (newton.max_iterations < 1) return "newton.max_iterations must be >= 1";
  if (!(newton.residual_tolerance > 0)) return "newton.residual_tolerance must be > 0";
  return {};
}

// ---- 1. thermochemistry table ---------------------------------------------------

ReactionThermoRow reaction_thermo(const Mechanism& mech, int j, double T) {
  if (j < 0 || j >= mech.n_reactions())
    throw std::invalid_argument("reaction_thermo: reaction index out of range");
  ReactionThermoRow row;
  row.T = T;
  row.dH = mech.dH(j, T);
  if (mech.reactions()[j].equilibrium.kind != EquilibriumSource::Kind::None) {
    const double lk = mech.ln_K(j, T);
    row.ln_K = lk;
    if (std::abs(lk) <= kMaxLnForExp) row.K = std::exp(lk);
    row.dG = -kGasConstant * T * lk;
  }
  return row;
}

std::vector<double> temperature_grid(const TemperatureRange& r) {
  const SourceLocation nowhere;
  if (!std::isfinite(r.first) || !(r.first > 0))
    throw InputError(nowhere, fmt::format("temperature range: the first temperature must be "
                                          "above 0 K (got {:g} K)",
                                          r.first));
  if (!std::isfinite(r.last) || r.last < r.first)
    throw InputError(nowhere, fmt::format("temperature range: the last temperature ({:g} K) "
                                          "must not be below the first ({:g} K)",
                                          r.last, r.first));
  if (!std::isfinite(r.step) || !(r.step > 0))
    throw InputError(nowhere, fmt::format("temperature range: the step must be above 0 K "
                                          "(got {:g} K)",
                                          r.step));
  const double count = std::floor((r.last - r.first) / r.step + 1e-9) + 1;
  if (count > kMaxTableRows)
    throw InputError(nowhere, fmt::format("temperature range: {:g} K to {:g} K in steps of "
                                          "{:g} K gives {:.0f} rows; at most {} are allowed",
                                          r.first, r.last, r.step, count, kMaxTableRows));
  std::vector<double> T;
  for (int k = 0; k < static_cast<int>(count); ++k) T.push_back(r.first + k * r.step);
  return T;
}

std::vector<ReactionThermoRow> reaction_thermo_table(const Mechanism& mech, int j,
                                                     const TemperatureRange& range) {
  std::vector<ReactionThermoRow> rows;
  for (double T : temperature_grid(range)) rows.push_back(reaction_thermo(mech, j, T));
  return rows;
}

// ---- 2. equilibrium at fixed T ---------------------------------------------------

bool has_reversible_reaction(const Mechanism& mech) {
  for (const auto& rx : mech.reactions())
    if (rx.reversible) return true;
  return false;
}

EquilibriumState solve_equilibrium(const Mechanism& mech, const Stream& inlet, double T,
                                   const ConversionBasis& basis,
                                   const std::vector<double>& fixed_extents,
                                   const EquilibriumOptions& options) {
  check_options(options);
  return solve_equilibrium_impl(mech, inlet, T, basis, fixed_extents, options);
}

double equilibrium_conversion(const Mechanism& mech, const Stream& inlet, double T,
                              const ConversionBasis& basis,
                              const std::vector<double>& fixed_extents,
                              const EquilibriumOptions& options) {
  return solve_equilibrium(mech, inlet, T, basis, fixed_extents, options).X;
}

std::vector<EquilibriumCurvePoint> equilibrium_curve(const Mechanism& mech, const Stream& inlet,
                                                     const ConversionBasis& basis,
                                                     const TemperatureRange& range,
                                                     const std::vector<double>& fixed_extents,
                                                     const EquilibriumOptions& options) {
  check_options(options);
  std::vector<EquilibriumCurvePoint> out;
  const std::vector<double> grid = temperature_grid(range);
  const PreparedEquilibrium prep = prepare_equilibrium(mech, inlet, fixed_extents);
  for (double T : grid) out.push_back({T, solve_prepared(mech, inlet, T, basis, prep, options).X});
  return out;
}

// ---- 3. T_eq(X) ---------------------------------------------------------------

std::optional<double> equilibrium_temperature(const Mechanism& mech, const Stream& inlet, double X,
                                              const ConversionBasis& basis,
                                              const std::vector<double>& fixed_extents,
                                              std::optional<double> T_start,
                                              const EquilibriumOptions& options) {
  check_options(options);
  if (!std::isfinite(X)) throw std::invalid_argument("equilibrium_temperature: X not finite");
  const PreparedEquilibrium prep = prepare_equilibrium(mech, inlet, fixed_extents);
  auto f = [&](double T) { return solve_prepared(mech, inlet, T, basis, prep, options).X - X; };
  return root_outward(f, T_start.value_or(inlet.T), options, "equilibrium temperature");
}

// ---- 4. adiabatic equilibrium point ----------------------------------------------

std::optional<EquilibriumState> adiabatic_equilibrium(const Mechanism& mech, const Stream& inlet,
                                                      HeatMode heat, const ConversionBasis& basis,
                                                      const std::vector<double>& fixed_extents,
                                                      const EquilibriumOptions& options) {
  check_options(options);
  if (!has_reversible_reaction(mech)) return std::nullopt;
  check_inlet(mech, inlet, inlet.T);
  if (heat == HeatMode::Isothermal)
    return solve_equilibrium_impl(mech, inlet, inlet.T, basis, fixed_extents, options);

  const PreparedEquilibrium prep = prepare_equilibrium(mech, inlet, fixed_extents);
  const double* Fin = inlet.F.data();
  const double H_in = mech.sensible_enthalpy_flow(inlet.T, Fin);
  // E(T) in units of the inlet's C_p T (order one).
  const double scale =
      std::max(mech.heat_capacity_flow(inlet.T, Fin) * inlet.T, std::numeric_limits<double>::min());
  auto energy = [&](double T) {
    const EquilibriumState st = solve_prepared(mech, inlet, T, basis, prep, options);
    double E = mech.sensible_enthalpy_flow(T, Fin) - H_in;
    for (int j = 0; j < mech.n_reactions(); ++j)
      if (st.extents[j] != 0) E += st.extents[j] * mech.dH(j, T);
    return E / scale;
  };
  const auto T = root_outward(energy, inlet.T, options, "adiabatic equilibrium");
  if (!T)
    throw SolverError(
        fmt::format("adiabatic equilibrium: the adiabatic line from {} meets equilibrium "
                    "nowhere between {} and {}",
                    temperature_words(inlet.T), temperature_words(options.T_min),
                    temperature_words(options.T_max)));
  return solve_prepared(mech, inlet, *T, basis, prep, options);
}

// ---- 5. adiabatic line ---------------------------------------------------------

int key_reaction(const Mechanism& mech, int key) {
  if (key < 0 || key >= mech.n_species()) return -1;
  int any = -1;
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const auto& rx = mech.reactions()[j];
    if (rx.nu[key] >= 0) continue;
    if (rx.reversible) return j;
    if (any < 0) any = j;
  }
  return any;
}

std::optional<std::vector<double>> flows_at_conversion(const Mechanism& mech, const Stream& inlet,
                                                       const ConversionBasis& basis, int j,
                                                       double X) {
  if (j < 0 || j >= mech.n_reactions()) return std::nullopt;
  const auto& nu = mech.reactions()[j].nu;
  const int key = basis.key;
  if (nu[key] == 0 || !std::isfinite(X)) return std::nullopt;
  const double xi = (basis.F_key_feed * (1 - X) - inlet.F[key]) / nu[key];
  std::vector<double> F = inlet.F;
  const double tiny = 1e-12 * inlet.total_flow();
  for (int i = 0; i < mech.n_species(); ++i) {
    F[i] += nu[i] * xi;
    if (F[i] < -tiny) return std::nullopt;
    F[i] = std::max(F[i], 0.0);
  }
  return F;
}

AdiabaticLine adiabatic_line(const Mechanism& mech, const Stream& inlet,
                             const ConversionBasis& basis, double X_first, double X_last,
                             int points, const EquilibriumOptions& options) {
  check_options(options);
  check_inlet(mech, inlet, inlet.T);
  if (points < 2) throw std::invalid_argument("adiabatic_line: need at least 2 points");
  AdiabaticLine line;
  line.reaction = key_reaction(mech, basis.key);
  if (line.reaction < 0)
    throw std::invalid_argument("adiabatic_line: no reaction consumes the key species " +
                                mech.species()[basis.key].id);
  const int j = line.reaction;
  const double nu_key = mech.reactions()[j].nu[basis.key];
  double T_guess = inlet.T;  // the last point's temperature: the next one is close
  for (int k = 0; k < points; ++k) {
    const double X = X_first + (X_last - X_first) * k / (points - 1);
    if (!flows_at_conversion(mech, inlet, basis, j, X)) {
      line.truncated = true;
      line.why =
          fmt::format("a reactant of {} runs out before X = {:.6g}", mech.reactions()[j].id, X);
      break;
    }
    const double xi = (basis.F_key_feed * (1 - X) - inlet.F[basis.key]) / nu_key;
    if (xi == 0) {
      line.points.push_back({X, inlet.T});
      continue;
    }
    // The energy balance's one implementation (energy_balance.hpp).
    std::optional<double> T;
    try {
      T = stream_after_extent(mech, inlet, HeatMode::Adiabatic, j, xi, T_guess).T;
    } catch (const SolverError&) {
    }
    if (!T || *T < options.T_min || *T > options.T_max) {
      line.truncated = true;
      line.why = fmt::format("the adiabatic temperature leaves [{:g} K, {:g} K] before X = {:.6g}",
                             options.T_min, options.T_max, X);
      break;
    }
    line.points.push_back({X, *T});
    T_guess = *T;
  }
  return line;
}

// ---- 6. approach to equilibrium ----------------------------------------------------

std::vector<double> stage_extents(const Mechanism& mech, const Stream& inlet,
                                  const Stream& outlet) {
  const int n = mech.n_species();
  const int nr = mech.n_reactions();
  if (static_cast<int>(inlet.F.size()) != n || static_cast<int>(outlet.F.size()) != n)
    throw std::invalid_argument("stage_extents: streams not sized to the species");
  if (nr == 0) return {};
  Eigen::MatrixXd N(n, nr);
  Eigen::VectorXd dF(n);
  for (int i = 0; i < n; ++i) {
    dF[i] = outlet.F[i] - inlet.F[i];
    for (int j = 0; j < nr; ++j) N(i, j) = mech.reactions()[j].nu[i];
  }
  const Eigen::VectorXd xi = N.completeOrthogonalDecomposition().solve(dF);
  const double misfit = (N * xi - dF).lpNorm<Eigen::Infinity>();
  const double Ft = std::max(inlet.total_flow(), outlet.total_flow());
  if (!(misfit <= 1e-6 * Ft))
    throw std::invalid_argument(
        "stage_extents: the outlet is not reachable from the inlet "
        "through the reactions");
  return std::vector<double>(xi.data(), xi.data() + nr);
}

std::optional<EquilibriumRecord> equilibrium_record(const Mechanism& mech, const Stream& inlet,
                                                    const Stream& outlet, HeatMode heat,
                                                    const ConversionBasis& basis,
                                                    const EquilibriumOptions& options) {
  check_options(options);
  if (!has_reversible_reaction(mech)) return std::nullopt;
  const std::vector<double> fixed = stage_extents(mech, inlet, outlet);
  const auto ad = adiabatic_equilibrium(mech, inlet, heat, basis, fixed, options);
  EquilibriumRecord rec;
  rec.X_ad_eq = ad->X;
  rec.T_ad_eq = ad->stream.T;
  rec.X_eq_out = solve_equilibrium_impl(mech, inlet, outlet.T, basis, fixed, options).X;
  const double X_out = basis.conversion(outlet);
  rec.approach_X = rec.X_eq_out - X_out;
  const auto T_eq = equilibrium_temperature(mech, inlet, X_out, basis, fixed, outlet.T, options);
  if (T_eq) rec.approach_T = *T_eq - outlet.T;
  rec.approach_T_window = options.approach_T_window;
  rec.approach_T_beyond_window =
      rec.approach_T && std::abs(*rec.approach_T) > options.approach_T_window;
  return rec;
}

// ---- 7. maximum-rate temperature ------------------------------------------------

std::optional<MaxRatePoint> max_rate_temperature(const Mechanism& mech, const Stream& inlet,
                                                 const ConversionBasis& basis, double X,
                                                 double T_lo, double T_hi,
                                                 const EquilibriumOptions& options) {
  check_options(options);
  if (!(T_lo > 0) || !(T_hi > T_lo) || !std::isfinite(T_hi))
    throw std::invalid_argument("max_rate_temperature: need 0 < T_lo < T_hi");
  const int j = key_reaction(mech, basis.key);
  if (j < 0 || !mech.reactions()[j].reversible) return std::nullopt;
  const auto F_opt = flows_at_conversion(mech, inlet, basis, j, X);
  if (!F_opt) return std::nullopt;
  const std::vector<double>& F = *F_opt;
  const double P = inlet.P;
  const double lq = ln_Q(mech, j, P, F);
  // Forward driving force ln K - ln Q: r_j > 0 exactly where it is > 0.
  auto drive = [&](double T) { return mech.ln_K(j, T) - lq; };
  double a = T_lo, b = T_hi;
  const double d_lo = drive(T_lo), d_hi = drive(T_hi);
  if (!(d_lo > 0) && !(d_hi > 0)) return std::nullopt;
  if (!(d_lo > 0) || !(d_hi > 0)) {
    const ScalarRoot r =
        brent_root(drive, T_lo, T_hi, d_lo, d_hi, options.T_tolerance, options.max_iterations);
    if (!r.converged) throw SolverError("maximum-rate temperature: T_eq(X) not found");
    (d_lo > 0 ? b : a) = r.x;
  }
  const int nr = mech.n_reactions();
  std::vector<double> rv(nr);
  auto rate = [&](double T) {
    mech.rates(T, P, F.data(), rv.data());
    return rv[j];
  };
  const double T_best = brent_minimize([&](double T) { return -rate(T); }, a, b,
                                       options.T_tolerance * b, options.max_iterations);
  MaxRatePoint pt;
  pt.X = X;
  pt.T = T_best;
  pt.rate = rate(T_best);
  // An end at least as fast means the maximum sits on the end.
  for (double end : {a, b}) {
    const double r_end = rate(end);
    if (r_end >= pt.rate) {
      pt.T = end;
      pt.rate = r_end;
      return pt;
    }
  }
  pt.interior = true;
  // Refine to the root of the analytic dr/dT: the value search alone
  // locates a flat maximum only to ~sqrt(eps) relative.
  Eigen::MatrixXd dr_dF(nr, mech.n_species());
  Eigen::VectorXd dr_dT(nr);
  Mechanism::Scratch scratch;  // one for every slope below
  auto slope = [&](double T) {
    mech.rates_and_jacobian(T, P, F.data(), rv.data(), dr_dF, dr_dT, scratch);
    return dr_dT[j];
  };
  const double h = 1e-6 * T_best;
  const double lo = std::max(a, T_best - h), hi = std::min(b, T_best + h);
  const double s_lo = slope(lo), s_hi = slope(hi);
  if (s_lo > 0 && s_hi < 0) {
    const ScalarRoot r =
        brent_root(slope, lo, hi, s_lo, s_hi, options.T_tolerance, options.max_iterations);
    if (r.converged) {
      pt.T = r.x;
      pt.rate = rate(r.x);
    }
  }
  return pt;
}

std::vector<MaxRatePoint> max_rate_locus(const Mechanism& mech, const Stream& inlet,
                                         const ConversionBasis& basis, double X_first,
                                         double X_last, int points, double T_lo, double T_hi,
                                         const EquilibriumOptions& options) {
  if (points < 2) throw std::invalid_argument("max_rate_locus: need at least 2 points");
  std::vector<MaxRatePoint> out;
  for (int k = 0; k < points; ++k) {
    const double X = X_first + (X_last - X_first) * k / (points - 1);
    if (auto p = max_rate_temperature(mech, inlet, basis, X, T_lo, T_hi, options))
      out.push_back(*p);
  }
  return out;
}

}  // namespace rxtrain
