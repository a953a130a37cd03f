// RAII wrapper of SUNDIALS CVODE (BDF, analytic Jacobian, dense or sparse
// direct linear solver). The only user of CVODE. One SunContext per thread,
// passed down; an integrator is reused across runs by calling init() again
// (CVodeReInit: no new CVODE objects; KLU repeats its symbolic analysis
// and first factorization, under 1 % of a 200-species run, so a rerun
// never depends on the last run's pivots).
//
// Example:
//   SunContext ctx;
//   CvodeIntegrator ode(ctx, 2, rhs, jac, CvodeOptions{}, {1.0, 1.0});
//   ode.init(0.0, y0);
//   while (ode.step(t_end, t, y) == CvodeIntegrator::Event::Step) record(t, y);
#pragma once

#include <exception>
#include <functional>
#include <memory>
#include <string>
#include <vector>

namespace rxtrain {

// Most states per block of a block-diagonal integrator (the block
// constructor of CvodeIntegrator).
inline constexpr int kMaxBlockSize = 64;

struct CvodeOptions {
  // Relative tolerance on every state. 1e-8 keeps profile points good to
  // ~1e-7 in T and X, well past what kinetic data justify.
  double rtol = 1e-8;
  // Absolute tolerance, multiplied by each state's scale (see the
  // constructor), so it means "relative to the inlet magnitude".
  double atol = 1e-12;
  // Internal steps allowed per integration before giving up.
  long max_steps = 200000;
  // Largest BDF order (1..5); 5 is CVODE's default.
  int max_order = 5;

  // Empty when valid, else a message naming the bad field.
  std::string validate() const;
};

struct SolverStats {
  long steps = 0;
  long rhs_evals = 0;
  long jac_evals = 0;
  long newton_iters = 0;
  long error_test_fails = 0;
  long root_evals = 0;  // evaluations of the root functions (CVODE's g)
  std::string message;
};

// Fixed nonzero pattern of an n x n sparse Jacobian, compressed by columns:
// the rows of column k are row[col_start[k] .. col_start[k+1]), ascending.
// Every diagonal entry must be in the pattern (CVODE adds the identity to
// the matrix in place).
struct SparsePattern {
  int n = 0;
  std::vector<int> col_start;  // n + 1 entries
  std::vector<int> row;
  int nonzeros() const { return static_cast<int>(row.size()); }
  // Empty when valid, else what is wrong.
  std::string validate() const;
};

// Owner of a SUNContext. Move-only. Not thread-safe: one per thread.
class SunContext {
 public:
  SunContext();  // throws SolverError when SUNContext_Create fails
  ~SunContext();
  SunContext(SunContext&& o) noexcept;
  SunContext& operator=(SunContext&& o) noexcept;
  SunContext(const SunContext&) = delete;
  SunContext& operator=(const SunContext&) = delete;
  void* get() const { return ctx_; }  // SUNContext (opaque here)

 private:
  void* ctx_ = nullptr;
};

class CvodeIntegrator {
 public:
  // Return 0 on success, > 0 for a recoverable failure (CVODE retries with a
  // smaller step), < 0 to stop. Exceptions thrown inside are caught at the C
  // boundary and rethrown from step().
  using Rhs = std::function<int(double t, const double* y, double* ydot)>;
  // J is column-major n x n: J[i + n*k] = d ydot_i / d y_k.
  using Jacobian = std::function<int(double t, const double* y, const double* ydot, double* J)>;
  using Roots = std::function<int(double t, const double* y, double* g)>;
  // Sparse Jacobian J = S + u w^T: S holds values[p] at the pattern's
  // p-th entry; u and w (n each, zeroed before the call) carry one dense
  // rank-one term that stays out of the pattern, e.g. the dependence of
  // every concentration on the total flow. The rank-one term is solved
  // exactly (Sherman-Morrison on top of KLU's factorization of I - gamma S),
  // so Newton sees the whole Jacobian.
  using SparseJacobian = std::function<int(double t, const double* y, const double* ydot,
                                           double* values, double* u, double* w)>;

  // Blocks of a block-diagonal Jacobian: `blocks` column-major N x N
  // blocks one after the other (zeroed before the call), block b holding
  // d ydot_{bN+i} / d y_{bN+k} at [b N^2 + i + N k].
  using BlockJacobian = std::function<int(double t, const double* y, double* blocks)>;

  // Dense direct solver (SUNDIALS' LU). `scale` multiplies atol per state.
  CvodeIntegrator(const SunContext& ctx, int n, Rhs rhs, Jacobian jac, const CvodeOptions& options,
                  const std::vector<double>& scale);
  // Sparse direct solver (SUNDIALS' KLU, AMD ordering) on a fixed pattern.
  // Its cost follows the fill-in of the LU factors: leave structurally zero
  // entries out of the pattern.
  CvodeIntegrator(const SunContext& ctx, int n, Rhs rhs, SparsePattern pattern, SparseJacobian jac,
                  const CvodeOptions& options, const std::vector<double>& scale);
  // Independent systems integrated together: `blocks` systems of
  // block_size states each (1..kMaxBlockSize), stacked in y, with a block-diagonal
  // Jacobian, each block factored by dense LU. CVODE's own work per step is
  // shared by all blocks. The error test and the Newton convergence test
  // use the largest WRMS norm of any one block, so every system is held to
  // the tolerances as if it ran alone (on the step sizes all share).
  CvodeIntegrator(const SunContext& ctx, int blocks, int block_size, Rhs rhs, BlockJacobian jac,
                  const CvodeOptions& options, const std::vector<double>& scale);
  ~CvodeIntegrator();
  CvodeIntegrator(CvodeIntegrator&&) noexcept;
  CvodeIntegrator& operator=(CvodeIntegrator&&) noexcept;
  CvodeIntegrator(const CvodeIntegrator&) = delete;
  CvodeIntegrator& operator=(const CvodeIntegrator&) = delete;

  // Starts (first call) or restarts (CVodeReInit) the integration at t0.
  // A restart keeps every allocation; statistics start again from zero.
  void init(double t0, const std::vector<double>& y0);
  // New per-state scales of atol, taking effect at the next init().
  void set_scale(const std::vector<double>& scale);
  int size() const;
  bool sparse() const;
  int blocks() const;  // 1 unless made by the block constructor
  const CvodeOptions& options() const;
  // Root functions g_k(t, y); direction +1, -1 or 0 (both) per function.
  void set_roots(int count, Roots g, const std::vector<int>& direction);
  void set_stop_time(double t_stop);

  enum class Event { Step, Root, Stop };
  // One internal step towards t_out (never past the stop time). On return
  // t, y hold the new point. Throws SolverError on failure.
  Event step(double t_out, double& t, std::vector<double>& y);
  // Integrates towards t_out without returning after every step: stops at
  // a root (Event::Root), or at t_out or the stop time, whichever comes
  // first (Event::Stop). Same steps, same results as calling step() until
  // there; less overhead when the intermediate points are not wanted.
  Event advance(double t_out, double& t, std::vector<double>& y);
  // Which roots fired at the last Root event (+1/-1 rising/falling, 0 none).
  std::vector<int> roots_found() const;
  // Interpolated solution at t inside the last step.
  std::vector<double> interpolate(double t) const;
  // The k-th derivative (k = 0: the solution itself) of the interpolating
  // polynomial at t inside the last step, into out (n entries). Costs no
  // right-hand-side evaluation and allocates nothing.
  void interpolate(double t, int k, double* out) const;

  SolverStats stats() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace rxtrain
