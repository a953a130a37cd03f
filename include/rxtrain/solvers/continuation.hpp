// Pseudo-arclength continuation of a branch of solutions of H(u, p) = 0,
// u in R^m, p a scalar (Keller's method: a tangent predictor, then Newton
// on H = 0 together with t . (x - x_prev) = ds, x = [u, p]). Unlike a march
// in p it passes turning points (folds, where dp/ds = 0) and follows the
// branch back; each fold is then located by Brent on the arclength where
// the tangent's p-component vanishes, with the whole state corrected, so
// that u at the fold is as accurate as the corrector. No physics here: the
// caller scales x so that every component is of order one.
//
// Example:
//   // the circle u^2 + p^2 = 1 from (0, -1), p in [-2, 2]: folds at p = +-1
//   auto fn = [](const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J) {
//     H[0] = x[0] * x[0] + x[1] * x[1] - 1;
//     J(0, 0) = 2 * x[0]; J(0, 1) = 2 * x[1];
//   };
//   ContinuationResult r = continue_branch(fn, x0, +1, -2, 2, {});
#pragma once

#include <Eigen/Core>
#include <functional>
#include <string>
#include <vector>

namespace rxtrain {

struct ContinuationOptions {
  // First arclength step (in the scaled x); the step then grows by
  // `growth` after an easy corrector (<= 3 iterations) and halves after a
  // failed one.
  double ds = 0.01;
  double ds_min = 1e-9;  // below this the branch is given up (a singular point)
  // Largest step: keeps the points close enough to draw the curve and to
  // see every change of stability.
  double ds_max = 0.02;
  double growth = 1.5;
  // A corrected point farther than this times ds from its predictor is
  // taken for a jump to another branch and the step is retried shorter
  // (on a smooth branch the correction shrinks like ds^2).
  double max_correction = 0.5;
  int max_points = 5000;          // a branch longer than this is cut (and said so)
  int max_iterations = 12;        // corrector iterations per step
  double tolerance = 1e-11;       // corrector: max |H| and max |dx|
  double fold_tolerance = 1e-13;  // Brent on the arclength to a fold (absolute, scaled)
};

// H(x) (m entries) and its Jacobian dH/dx (m x (m + 1)) at x = [u, p]. May
// throw: the step is then retried shorter.
using BranchFunction =
    std::function<void(const Eigen::VectorXd& x, Eigen::VectorXd& H, Eigen::MatrixXd& J)>;

struct BranchPoint {
  Eigen::VectorXd x;        // [u, p]
  Eigen::VectorXd tangent;  // unit, in the direction of travel
};

struct ContinuationResult {
  std::vector<BranchPoint> points;  // in order along the branch
  // The folds met, each refined (tangent p-component zero), in order; each
  // lies between points[fold_after[k]] and the next.
  std::vector<BranchPoint> folds;
  std::vector<int> fold_after;
  // Why the branch ended: it left [p_lo, p_hi] (its last point is then on
  // the bound), or the reason it was given up.
  bool left_range = false;
  std::string message;
  int corrector_iterations = 0;
};

// Follows the branch through the solution x0 (H(x0) = 0 to the corrector's
// tolerance) in the direction where p first moves as `direction` (+1 or
// -1) says, until p leaves [p_lo, p_hi] or the branch is given up.
ContinuationResult continue_branch(const BranchFunction& fn, const Eigen::VectorXd& x0,
                                   int direction, double p_lo, double p_hi,
                                   const ContinuationOptions& options = {});

}  // namespace rxtrain
