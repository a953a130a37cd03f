#include "rxtrain/solvers/continuation.hpp"

#include <Eigen/LU>
#include <algorithm>
#include <cmath>
#include <optional>

#include "rxtrain/solvers/scalar_root.hpp"

namespace rxtrain {

namespace {

class Tracer {
 public:
  Tracer(const BranchFunction& fn, int n, const ContinuationOptions& o)
      : fn_(fn), n_(n), o_(o), H_(n - 1), J_(n - 1, n), A_(n, n), rhs_(n) {}

  // Unit tangent at x: J t = 0, oriented so that t . along > 0.
  std::optional<Eigen::VectorXd> tangent(const Eigen::VectorXd& x, const Eigen::VectorXd& along) {
    if (!evaluate(x)) return std::nullopt;
    A_.topRows(n_ - 1) = J_;
    A_.row(n_ - 1) = along.transpose();
    rhs_.setZero();
    rhs_[n_ - 1] = 1;
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(A_);
    Eigen::VectorXd t = lu.solve(rhs_);
    if (!t.allFinite() || t.norm() == 0) return std::nullopt;
    t.normalize();
    if (t.dot(along) < 0) t = -t;
    return t;
  }

  // Newton on H(x) = 0 and t . (x - x_prev) = ds from the predictor.
  std::optional<Eigen::VectorXd> correct(const Eigen::VectorXd& x_prev, const Eigen::VectorXd& t,
                                         double ds, int& iterations) {
    Eigen::VectorXd x = x_prev + ds * t;
    for (int it = 0; it < o_.max_iterations; ++it) {
      if (!evaluate(x)) return std::nullopt;
      ++iterations;
      ++total_;
      A_.topRows(n_ - 1) = J_;
      A_.row(n_ - 1) = t.transpose();
      rhs_.head(n_ - 1) = -H_;
      rhs_[n_ - 1] = ds - t.dot(x - x_prev);
      Eigen::PartialPivLU<Eigen::MatrixXd> lu(A_);
      const Eigen::VectorXd dx = lu.solve(rhs_);
      if (!dx.allFinite()) return std::nullopt;
      x += dx;
      if (dx.lpNorm<Eigen::Infinity>() <= o_.tolerance &&
          H_.lpNorm<Eigen::Infinity>() <= 1e3 * o_.tolerance) {
        if (!evaluate(x) || H_.lpNorm<Eigen::Infinity>() > o_.tolerance) continue;
        return x;
      }
    }
    return std::nullopt;
  }

  // Newton on H(x) = 0 with p fixed at `p` (the end of the range).
  std::optional<Eigen::VectorXd> at_p(Eigen::VectorXd x, double p) {
    x[n_ - 1] = p;
    Eigen::VectorXd t = Eigen::VectorXd::Zero(n_);
    t[n_ - 1] = 1;
    for (int it = 0; it < o_.max_iterations; ++it) {
      if (!evaluate(x)) return std::nullopt;
      ++total_;
      A_.topRows(n_ - 1) = J_;
      A_.row(n_ - 1) = t.transpose();
      rhs_.head(n_ - 1) = -H_;
      rhs_[n_ - 1] = 0;
      Eigen::PartialPivLU<Eigen::MatrixXd> lu(A_);
      const Eigen::VectorXd dx = lu.solve(rhs_);
      if (!dx.allFinite()) return std::nullopt;
      x += dx;
      if (dx.lpNorm<Eigen::Infinity>() <= o_.tolerance) {
        if (!evaluate(x) || H_.lpNorm<Eigen::Infinity>() > o_.tolerance) continue;
        return x;
      }
    }
    return std::nullopt;
  }

  int total() const { return total_; }

 private:
  bool evaluate(const Eigen::VectorXd& x) {
    try {
      J_.setZero();
      fn_(x, H_, J_);
    } catch (const std::exception&) {
      return false;  // out of the model's domain: a shorter step
    }
    return H_.allFinite() && J_.allFinite();
  }

  const BranchFunction& fn_;
  int n_;
  const ContinuationOptions& o_;
  Eigen::VectorXd H_;
  Eigen::MatrixXd J_, A_;
  Eigen::VectorXd rhs_;
  int total_ = 0;
};

}  // namespace

ContinuationResult continue_branch(const BranchFunction& fn, const Eigen::VectorXd& x0,
                                   int direction, double p_lo, double p_hi,
                                   const ContinuationOptions& o) {
  const int n = static_cast<int>(x0.size());
  const int ip = n - 1;
  ContinuationResult out;
  Tracer tr(fn, n, o);
  Eigen::VectorXd along = Eigen::VectorXd::Zero(n);
  along[ip] = direction >= 0 ? 1.0 : -1.0;
  auto t0 = tr.tangent(x0, along);
  if (!t0) {
    out.message = "no tangent at the start (the balances could not be evaluated there)";
    return out;
  }
  out.points.push_back({x0, *t0});
  double ds = o.ds;
  while (static_cast<int>(out.points.size()) < o.max_points) {
    const BranchPoint& prev = out.points.back();
    int iterations = 0;
    auto x = tr.correct(prev.x, prev.tangent, ds, iterations);
    std::optional<Eigen::VectorXd> t;
    if (x) t = tr.tangent(*x, prev.tangent);
    // A step that turns the tangent by more than ~30 degrees, or whose
    // corrector moved the point far from the predictor (Newton found a
    // solution of another branch on the same hyperplane), may have jumped
    // to another branch: shorter.
    const bool far = x && (*x - (prev.x + ds * prev.tangent)).norm() > o.max_correction * ds;
    if (!x || !t || far || t->dot(prev.tangent) < 0.85) {
      ds *= 0.5;
      if (ds < o.ds_min) {
        out.message = "the continuation step fell below its least size (a singular point?)";
        break;
      }
      continue;
    }
    const double p = (*x)[ip];
    if (p < p_lo || p > p_hi) {
      // The last point on the bound itself.
      const double bound = p < p_lo ? p_lo : p_hi;
      const double f = (bound - prev.x[ip]) / (p - prev.x[ip]);
      if (auto xb = tr.at_p(prev.x + f * (*x - prev.x), bound)) {
        if (auto tb = tr.tangent(*xb, prev.tangent)) out.points.push_back({*xb, *tb});
      }
      out.left_range = true;
      break;
    }
    // A fold between prev and x: the tangent's p-component changed sign.
    if ((prev.tangent[ip] > 0) != ((*t)[ip] > 0) && prev.tangent[ip] != 0) {
      const Eigen::VectorXd x_prev = prev.x, t_prev = prev.tangent;
      std::optional<BranchPoint> fold;
      auto tp = [&](double s) {
        int it = 0;
        auto xs = tr.correct(x_prev, t_prev, s, it);
        if (!xs) throw std::runtime_error("corrector failed");
        auto ts = tr.tangent(*xs, t_prev);
        if (!ts) throw std::runtime_error("tangent failed");
        fold = BranchPoint{*xs, *ts};
        return (*ts)[ip];
      };
      try {
        const ScalarRoot r = brent_root(tp, 0.0, ds, t_prev[ip], (*t)[ip], o.fold_tolerance, 200);
        tp(r.x);
        if (fold) {
          out.folds.push_back(*fold);
          out.fold_after.push_back(static_cast<int>(out.points.size()) - 1);
        }
      } catch (const std::exception&) {
        // Left unrefined: the fold is between the two points.
        out.folds.push_back({0.5 * (x_prev + *x), *t});
        out.fold_after.push_back(static_cast<int>(out.points.size()) - 1);
      }
    }
    out.points.push_back({*x, *t});
    if (iterations <= 3) ds = std::min(o.ds_max, ds * o.growth);
  }
  if (!out.left_range && out.message.empty())
    out.message = "the branch was cut at its largest number of points";
  out.corrector_iterations = tr.total();
  return out;
}

}  // namespace rxtrain
