#include "rxtrain/stages/levenspiel.hpp"

#include <algorithm>
#include <array>
#include <cmath>

#include "pfr_shared.hpp"
#include "rxtrain/models/tubular_balances.hpp"

namespace rxtrain {

namespace {

// Volumetric multiplier of each rate, as rate_multipliers gives it to the
// stage: the activity, times the bulk density for per-catalyst rates (a
// stage with per-catalyst rates always has one once it ran).
std::vector<double> volume_multipliers(const Mechanism& mech, const StageResult& s) {
  std::vector<double> beta(mech.n_reactions(), s.activity);
  for (int j = 0; j < mech.n_reactions(); ++j)
    if (mech.reactions()[j].rate.basis == RateBasis::Catalyst)
      beta[j] = s.activity * s.bulk_density.value_or(0);
  return beta;
}

// Evaluates states, rates and the curve of one stage.
class StageCurve {
 public:
  StageCurve(const Mechanism& mech, int key, double F_key_feed, const StageResult& s,
             bool catalyst_basis)
      : mech_(mech),
        key_(key),
        F0_(F_key_feed),
        s_(s),
        n_(mech.n_species()),
        beta_(volume_multipliers(mech, s)),
        r_(mech.n_reactions()) {
    // The stage's pellets: the curve is of the rates the stage ran with.
    pellet_spec_.id = s.id;
    pellet_spec_.activity = s.activity;
    pellet_spec_.pellet = s.pellet;
    pellet_ = detail::pellet_binding(mech, pellet_spec_, 1e-6);
    // A cooled stage: the wall's heat (Ua from the wall area per volume),
    // at each point's coolant temperature (slope_in_X sets it).
    if (s.coolant && s.volume && *s.volume > 0)
      cooling_ = detail::CoolingBinding{s.coolant->U * s.coolant->area / *s.volume, s.coolant->T_in,
                                        0.0, 1.0};
    balances_.reset(
        mech, beta_, s.heat == HeatMode::Adiabatic ? HeatMode::Adiabatic : HeatMode::Isothermal,
        s.inlet.P, pellet_ ? &*pellet_ : nullptr, nullptr, cooling_ ? &*cooling_ : nullptr);
    // Per unit of the curve's basis: a catalyst basis divides the
    // volumetric rates by the bulk density.
    basis_scale_ = catalyst_basis ? 1.0 / *s.bulk_density : 1.0;
  }

  // -r_key per unit of the curve's basis (m3 or kg).
  double key_consumption(double T, const double* F) {
    mech_.rates(T, s_.inlet.P, F, r_.data());
    if (pellet_ && balances_.update_eta(T, F) != 0) return 0;
    double c = 0;
    for (int j = 0; j < mech_.n_reactions(); ++j)
      c -= mech_.reactions()[j].nu[key_] * beta_[j] * r_[j] * balances_.eta()[j];
    return c * basis_scale_;
  }

  // F_key,feed / (-r_key); not finite where the key is not consumed.
  double inverse_rate(double T, const double* F) {
    const double c = key_consumption(T, F);
    return c > 0 ? F0_ / c : std::nan("");
  }

  // d[F_1..F_n, T]/dX along the tubular stage's path at one state: the
  // tube's balances in V (models/tubular_balances.hpp) over
  // dX/dV = -r_key / F0. False where the key is not consumed (X does not
  // advance) or the balances cannot be evaluated.
  bool slope_in_X(double T, const double* F, double* dy, std::optional<double> T_c = {}) {
    if (cooling_ && T_c) cooling_->T_c = *T_c;
    y_.assign(F, F + n_);
    y_.push_back(T);
    y_.push_back(0.0);
    ydot_.resize(y_.size());
    if (balances_.rhs(y_.data(), ydot_.data()) != 0) return false;
    const double dX_dV = -ydot_[key_] / F0_;
    if (!(dX_dV > 0) || !std::isfinite(dX_dV)) return false;
    for (int i = 0; i <= n_; ++i) dy[i] = ydot_[i] / dX_dV;
    return true;
  }

  int n() const { return n_; }

 private:
  const Mechanism& mech_;
  int key_;
  double F0_;
  const StageResult& s_;
  int n_;
  std::vector<double> beta_;
  std::vector<double> r_;
  double basis_scale_ = 1.0;
  ReactorSpec pellet_spec_;                        // the stage's pellets, for pellet_
  std::optional<detail::PelletBinding> pellet_;    // effectiveness factors, if any
  std::optional<detail::CoolingBinding> cooling_;  // a cooled stage's wall
  detail::PfrSystem balances_;
  std::vector<double> y_, ydot_;  // [F, T, Q] and its slope in V
};

// One profile point in X with its state [F, T] and slope d[F, T]/dX.
struct Node {
  double X = 0;
  std::vector<double> y;
  std::vector<double> dy;
};

// The 7-point Kronrod rule on [a, b] and the 3-point Gauss rule it
// extends (Kronrod's nodes added to Gauss's; exact for polynomials of
// degree 11 and 5). Sets the Kronrod sum and returns |K7 - G3|, the error
// of the Gauss sum, which bounds that of the Kronrod sum many times over.
// Nodes and weights from memory, confirmed when written by the rule's
// exactness: it integrates x^k on [-1, 1] to 2/(k+1) within 1.2e-16 for
// every even k up to 10 and misses at k = 12 (degree 11, as a 7-point
// Kronrod extension of 3-point Gauss must be). The closed-form areas of
// tests/levenspiel_test.cpp check them in use.
template <class G>
double kronrod7(G& g, double a, double b, double& k7) {
  static constexpr std::array<double, 4> x = {0.0, 0.4342437493468025580, 0.7745966692414833770,
                                              0.9604912687080202834};
  static constexpr std::array<double, 4> wk = {0.4509165386584741424, 0.4013974147759622229,
                                               0.2684880898683334407, 0.1046562260264672652};
  static constexpr double wg0 = 8.0 / 9.0, wg2 = 5.0 / 9.0;  // Gauss at 0 and +-x[2]
  const double m = 0.5 * (a + b), h = 0.5 * (b - a);
  const double f0 = g(m);
  double k = wk[0] * f0;
  double gauss = wg0 * f0;
  for (int i = 1; i < 4; ++i) {
    const double pair = g(m - h * x[i]) + g(m + h * x[i]);
    k += wk[i] * pair;
    if (i == 2) gauss += wg2 * pair;
  }
  k7 = k * h;
  return std::abs(k - gauss) * h;
}

// Five-point Gauss-Legendre rule on [a, b].
template <class G>
double gauss5(G& g, double a, double b) {
  static constexpr std::array<double, 5> x = {0.0, 0.5384693101056831, -0.5384693101056831,
                                              0.9061798459386640, -0.9061798459386640};
  static constexpr std::array<double, 5> w = {0.5688888888888889, 0.4786286704993665,
                                              0.4786286704993665, 0.2369268850561891,
                                              0.2369268850561891};
  const double m = 0.5 * (a + b), h = 0.5 * (b - a);
  double s = 0;
  for (int i = 0; i < 5; ++i) s += w[i] * g(m + h * x[i]);
  return s * h;
}

// Adaptive: halves until the two-half sum agrees with the whole to a
// relative 1e-10, or after 6 halvings. Gauss-Legendre of order 5 on a
// smooth interval meets the tolerance at once; the depth cap bounds the
// work where 1/r is unbounded (a bed that runs onto equilibrium), where no
// tolerance can be met anyway.
template <class G>
double adaptive(G& g, double a, double b, double whole, int depth) {
  const double m = 0.5 * (a + b);
  const double left = gauss5(g, a, m), right = gauss5(g, m, b);
  const double both = left + right;
  if (depth >= 6 || std::abs(both - whole) <= 1e-10 * std::abs(both)) return both;
  return adaptive(g, a, m, left, depth + 1) + adaptive(g, m, b, right, depth + 1);
}

// Area under a tubular stage's curve: between consecutive profile points
// the state is a cubic Hermite interpolant in X (values and slopes from
// the balances), and 1/r is integrated over X step by step. Trapezoids
// over the solver's steps would be only second order. The 7-point Kronrod
// rule takes 7 evaluations of 1/r where the 5-point Gauss-Legendre rule
// and its first halving take 15 to meet the same tolerance (1e-10
// relative); it meets it on most steps of a bed at the default rtol, since
// a step of CVODE is short next to the scale on which the state bends.
double tubular_area(StageCurve& sc, const std::vector<Node>& nodes) {
  const int m = sc.n() + 1;
  std::vector<double> y(m);
  double area = 0;
  for (std::size_t k = 1; k < nodes.size(); ++k) {
    const Node& a = nodes[k - 1];
    const Node& b = nodes[k];
    const double h = b.X - a.X;
    if (!(h > 0)) continue;
    auto g = [&](double X) {
      const double t = (X - a.X) / h, t2 = t * t, t3 = t2 * t;
      const double h00 = 2 * t3 - 3 * t2 + 1, h10 = t3 - 2 * t2 + t;
      const double h01 = -2 * t3 + 3 * t2, h11 = t3 - t2;
      for (int i = 0; i < m; ++i)
        y[i] = h00 * a.y[i] + h10 * h * a.dy[i] + h01 * b.y[i] + h11 * h * b.dy[i];
      const double v = sc.inverse_rate(y[m - 1], y.data());
      return std::isfinite(v) ? v : 0.0;
    };
    // The 7-point rule where it meets the tolerance by its own estimate,
    // else (near equilibrium, where 1/r is steep) the adaptive rule.
    double k7 = 0;
    const double err = kronrod7(g, a.X, b.X, k7);
    area += err <= 1e-10 * std::abs(k7) ? k7 : adaptive(g, a.X, b.X, gauss5(g, a.X, b.X), 0);
  }
  return area;
}

}  // namespace

std::vector<LevenspielCurve> levenspiel_curves(const Mechanism& mech, int key, double F_key_feed,
                                               const std::vector<StageResult>& stages) {
  bool all_catalyst = mech.n_reactions() > 0;
  for (const auto& rx : mech.reactions())
    all_catalyst = all_catalyst && rx.rate.basis == RateBasis::Catalyst;
  std::vector<LevenspielCurve> out;
  for (const auto& s : stages) {
    if (!is_reactor(s.kind)) continue;
    // The stage's own basis where the train set it (the key fed so far,
    // side streams included), so the curve's X is the stage's.
    const double F0 = s.F_key_fed > 0 ? s.F_key_fed : F_key_feed;
    const ConversionBasis basis{key, F0};
    LevenspielCurve c;
    c.stage = s.id;
    c.catalyst_basis = all_catalyst && s.bulk_density.has_value();
    c.rectangle = s.kind == StageKind::Cstr;
    c.X_in = basis.conversion(s.inlet);
    c.X_out = s.conversion;
    StageCurve sc(mech, key, F0, s, c.catalyst_basis);
    if (c.rectangle) {
      const double g = sc.inverse_rate(s.outlet.T, s.outlet.F.data());
      if (std::isfinite(g)) {
        c.points.push_back({s.conversion, g});
        c.area = g * (c.X_out - c.X_in);
      }
    } else {
      std::vector<Node> nodes;
      const int n = mech.n_species();
      for (const auto& p : s.profile) {
        Node node{p.X, p.F, std::vector<double>(n + 1)};
        node.y.push_back(p.T);
        if (!sc.slope_in_X(p.T, p.F.data(), node.dy.data(), p.T_coolant)) continue;
        c.points.push_back({p.X, sc.inverse_rate(p.T, p.F.data())});
        nodes.push_back(std::move(node));
      }
      c.area = tubular_area(sc, nodes);
    }
    out.push_back(std::move(c));
  }
  return out;
}

}  // namespace rxtrain
