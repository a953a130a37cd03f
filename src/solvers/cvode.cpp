#include "rxtrain/solvers/cvode.hpp"

#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sunlinsol/sunlinsol_klu.h>
#include <sunmatrix/sunmatrix_dense.h>
#include <sunmatrix/sunmatrix_sparse.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <memory>
#include <stdexcept>
#include <string>

#include "fast_serial_ops.hpp"
#include "rxtrain/base/error.hpp"

namespace rxtrain {

namespace {

struct NVectorDeleter {
  void operator()(N_Vector v) const noexcept { N_VDestroy(v); }
};
struct MatrixDeleter {
  void operator()(SUNMatrix m) const noexcept { SUNMatDestroy(m); }
};
struct LinSolDeleter {
  void operator()(SUNLinearSolver s) const noexcept { SUNLinSolFree(s); }
};
struct CvodeMemDeleter {
  void operator()(void* mem) const noexcept { CVodeFree(&mem); }
};

using NVectorPtr = std::unique_ptr<std::remove_pointer_t<N_Vector>, NVectorDeleter>;
using MatrixPtr = std::unique_ptr<std::remove_pointer_t<SUNMatrix>, MatrixDeleter>;
using LinSolPtr = std::unique_ptr<std::remove_pointer_t<SUNLinearSolver>, LinSolDeleter>;
using CvodeMemPtr = std::unique_ptr<void, CvodeMemDeleter>;

}  // namespace

std::string CvodeOptions::validate() const {
  if (!(rtol > 0 && rtol < 1)) return "rtol must lie in (0, 1)";
  if (!(atol > 0)) return "atol must be positive";
  if (max_steps <= 0) return "max_steps must be positive";
  if (max_order < 1 || max_order > 5) return "max_order must lie in 1..5";
  return {};
}

std::string SparsePattern::validate() const {
  if (n <= 0) return "n must be positive";
  if (static_cast<int>(col_start.size()) != n + 1 || col_start[0] != 0 ||
      col_start[n] != nonzeros())
    return "col_start must have n + 1 entries from 0 to the number of nonzeros";
  for (int k = 0; k < n; ++k) {
    bool diagonal = false;
    for (int p = col_start[k]; p < col_start[k + 1]; ++p) {
      if (row[p] < 0 || row[p] >= n) return "row index out of range";
      if (p > col_start[k] && row[p] <= row[p - 1]) return "rows of a column must ascend";
      diagonal = diagonal || row[p] == k;
    }
    if (!diagonal) return "every diagonal entry must be in the pattern";
  }
  return {};
}

SunContext::SunContext() {
  SUNContext ctx = nullptr;
  if (SUNContext_Create(nullptr, &ctx) != 0 || ctx == nullptr)
    throw SolverError("could not create a SUNDIALS context");
  ctx_ = ctx;
}

SunContext::~SunContext() {
  if (ctx_ != nullptr) {
    SUNContext ctx = static_cast<SUNContext>(ctx_);
    SUNContext_Free(&ctx);
  }
}

SunContext::SunContext(SunContext&& o) noexcept : ctx_(o.ctx_) { o.ctx_ = nullptr; }

SunContext& SunContext::operator=(SunContext&& o) noexcept {
  if (this != &o) {
    this->~SunContext();
    ctx_ = o.ctx_;
    o.ctx_ = nullptr;
  }
  return *this;
}

struct CvodeIntegrator::Impl {
  int n = 0;
  Rhs rhs;
  Jacobian jac;
  SparseJacobian sparse_jac;
  BlockJacobian block_jac;
  int blocks = 1;
  SparsePattern pattern;
  Roots roots;
  int n_roots = 0;
  std::exception_ptr pending;  // exception thrown inside a callback
  std::string last_error;      // CVODE's own message for the last failure
  NVectorPtr y;
  NVectorPtr atol;
  NVectorPtr dky;  // interpolate()'s output, made on first use
  MatrixPtr A;
  // Sparse only: KLU, and the rank-one term J = S + u w^T with
  // z = (I - gamma S)^-1 u from the last setup.
  LinSolPtr klu;
  NVectorPtr u, w, z;
  double gamma = 0;     // gamma of the last setup
  double sm_denom = 1;  // 1 - gamma w^T z
  bool rank_one = false;
  LinSolPtr LS;  // what CVODE calls: the dense LU, or the KLU wrapper
  CvodeMemPtr mem;
  CvodeOptions options;
  bool initialized = false;

  void allocate_vectors(SUNContext sctx, const std::vector<double>& scale) {
    y.reset(N_VNew_Serial(n, sctx));
    atol.reset(N_VNew_Serial(n, sctx));
    if (!y || !atol) throw SolverError("could not allocate CVODE vectors");
    // Fused vector operations (one call for a linear combination of many
    // vectors instead of one call per pair): CVODE clones its work vectors
    // from y, so they inherit them. Off by default for serial vectors.
    if (N_VEnableFusedOps_Serial(y.get(), SUNTRUE) != 0)
      throw SolverError("could not enable fused vector operations");
    detail::use_fast_serial_ops(y.get());
    detail::use_fast_serial_ops(atol.get());
    set_scale(scale);
  }
  void set_scale(const std::vector<double>& scale) {
    if (static_cast<int>(scale.size()) != n)
      throw std::invalid_argument("CvodeIntegrator: scale must have n entries");
    double* a = N_VGetArrayPointer(atol.get());
    for (int i = 0; i < n; ++i) a[i] = options.atol * (scale[i] > 0 ? scale[i] : 1.0);
  }
  void create_cvode(SUNContext sctx) {
    mem.reset(CVodeCreate(CV_BDF, sctx));
    if (!mem) throw SolverError("could not create CVODE");
    check(CVodeSetErrHandlerFn(mem.get(), &Impl::err_fn, this), "CVodeSetErrHandlerFn");
  }

  // C trampolines: no exception may cross into CVODE.
  static int rhs_fn(sunrealtype t, N_Vector y, N_Vector ydot, void* data) {
    auto* self = static_cast<Impl*>(data);
    try {
      return self->rhs(t, N_VGetArrayPointer(y), N_VGetArrayPointer(ydot));
    } catch (...) {
      self->pending = std::current_exception();
      return -1;
    }
  }
  static int jac_fn(sunrealtype t, N_Vector y, N_Vector fy, SUNMatrix J, void* data, N_Vector,
                    N_Vector, N_Vector) {
    auto* self = static_cast<Impl*>(data);
    try {
      return self->jac(t, N_VGetArrayPointer(y), N_VGetArrayPointer(fy), SUNDenseMatrix_Data(J));
    } catch (...) {
      self->pending = std::current_exception();
      return -1;
    }
  }
  static int block_jac_fn(sunrealtype t, N_Vector y, N_Vector, SUNMatrix J, void* data, N_Vector,
                          N_Vector, N_Vector) {
    auto* self = static_cast<Impl*>(data);
    try {
      return self->block_jac(t, N_VGetArrayPointer(y), detail::block_diagonal_data(J));
    } catch (...) {
      self->pending = std::current_exception();
      return -1;
    }
  }
  static int sparse_jac_fn(sunrealtype t, N_Vector y, N_Vector fy, SUNMatrix J, void* data,
                           N_Vector, N_Vector, N_Vector) {
    auto* self = static_cast<Impl*>(data);
    try {
      // SUNMatZero clears the index arrays too: restore the fixed pattern.
      sunindextype* cp = SUNSparseMatrix_IndexPointers(J);
      sunindextype* ri = SUNSparseMatrix_IndexValues(J);
      const SparsePattern& pat = self->pattern;
      std::copy(pat.col_start.begin(), pat.col_start.end(), cp);
      std::copy(pat.row.begin(), pat.row.end(), ri);
      double* u = N_VGetArrayPointer(self->u.get());
      double* w = N_VGetArrayPointer(self->w.get());
      std::fill(u, u + self->n, 0.0);
      std::fill(w, w + self->n, 0.0);
      return self->sparse_jac(t, N_VGetArrayPointer(y), N_VGetArrayPointer(fy),
                              SUNSparseMatrix_Data(J), u, w);
    } catch (...) {
      self->pending = std::current_exception();
      return -1;
    }
  }
  static int root_fn(sunrealtype t, N_Vector y, sunrealtype* g, void* data) {
    auto* self = static_cast<Impl*>(data);
    try {
      return self->roots(t, N_VGetArrayPointer(y), g);
    } catch (...) {
      self->pending = std::current_exception();
      return -1;
    }
  }
  static void err_fn(int, const char*, const char*, char* msg, void* data) {
    // Keep CVODE quiet on stderr; its message goes into the SolverError.
    static_cast<Impl*>(data)->last_error = msg != nullptr ? msg : "";
  }

  // The linear solver CVODE sees in the sparse case: KLU for S, plus the
  // rank-one correction by Sherman-Morrison:
  //   (M_s - gamma u w^T)^-1 b = x0 + gamma z (w^T x0) / (1 - gamma w^T z),
  //   M_s = I - gamma S, x0 = M_s^-1 b, z = M_s^-1 u.
  static Impl& of(SUNLinearSolver S) { return *static_cast<Impl*>(S->content); }
  static SUNLinearSolver_Type ls_type(SUNLinearSolver) { return SUNLINEARSOLVER_DIRECT; }
  static SUNLinearSolver_ID ls_id(SUNLinearSolver) { return SUNLINEARSOLVER_CUSTOM; }
  static int ls_initialize(SUNLinearSolver S) { return SUNLinSolInitialize(of(S).klu.get()); }
  static int ls_setup(SUNLinearSolver S, SUNMatrix A) {
    Impl& m = of(S);
    const int flag = SUNLinSolSetup(m.klu.get(), A);
    if (flag != 0) return flag;
    const double* u = N_VGetArrayPointer(m.u.get());
    m.rank_one = std::any_of(u, u + m.n, [](double v) { return v != 0; });
    if (!m.rank_one) return 0;
    if (CVodeGetCurrentGamma(m.mem.get(), &m.gamma) != CV_SUCCESS) return SUNLS_PACKAGE_FAIL_UNREC;
    const int sflag = SUNLinSolSolve(m.klu.get(), A, m.z.get(), m.u.get(), 0.0);
    if (sflag != 0) return sflag;
    m.sm_denom = 1.0 - m.gamma * N_VDotProd(m.w.get(), m.z.get());
    // A (near-)singular update: let CVODE retry with a smaller step.
    if (!std::isfinite(m.sm_denom) || std::abs(m.sm_denom) < 1e-12) return SUNLS_PACKAGE_FAIL_REC;
    return 0;
  }
  static int ls_solve(SUNLinearSolver S, SUNMatrix A, N_Vector x, N_Vector b, sunrealtype tol) {
    Impl& m = of(S);
    const int flag = SUNLinSolSolve(m.klu.get(), A, x, b, tol);
    if (flag != 0 || !m.rank_one) return flag;
    const double c = m.gamma * N_VDotProd(m.w.get(), x) / m.sm_denom;
    N_VLinearSum(1.0, x, c, m.z.get(), x);
    return 0;
  }
  static sunindextype ls_last_flag(SUNLinearSolver S) { return SUNLinSolLastFlag(of(S).klu.get()); }
  static int ls_free(SUNLinearSolver S) {
    S->content = nullptr;  // the Impl owns itself
    SUNLinSolFreeEmpty(S);
    return 0;
  }

  void check(int flag, const char* what) {
    if (pending) {
      auto e = pending;
      pending = nullptr;
      std::rethrow_exception(e);
    }
    if (flag < 0) {
      // CVodeGetReturnFlagName hands over a malloc'ed string.
      const std::unique_ptr<char, decltype(&std::free)> name(CVodeGetReturnFlagName(flag),
                                                             &std::free);
      std::string msg = std::string(what) + " failed (" + (name ? name.get() : "?") + ")";
      if (!last_error.empty()) msg += ": " + last_error;
      throw SolverError(msg);
    }
  }
};

CvodeIntegrator::CvodeIntegrator(const SunContext& ctx, int n, Rhs rhs, Jacobian jac,
                                 const CvodeOptions& options, const std::vector<double>& scale)
    : impl_(std::make_unique<Impl>()) {
  if (auto msg = options.validate(); !msg.empty())
    throw std::invalid_argument("CvodeOptions: " + msg);
  auto sctx = static_cast<SUNContext>(ctx.get());
  Impl& m = *impl_;
  m.n = n;
  m.rhs = std::move(rhs);
  m.jac = std::move(jac);
  m.options = options;
  m.allocate_vectors(sctx, scale);
  m.A.reset(SUNDenseMatrix(n, n, sctx));
  if (!m.A) throw SolverError("could not allocate the CVODE matrix");
  detail::use_fast_dense_ops(m.A.get());
  m.LS.reset(detail::make_fast_dense_solver(n, sctx));
  if (!m.LS) throw SolverError("could not create the dense linear solver");
  m.create_cvode(sctx);
}

CvodeIntegrator::CvodeIntegrator(const SunContext& ctx, int n, Rhs rhs, SparsePattern pattern,
                                 SparseJacobian jac, const CvodeOptions& options,
                                 const std::vector<double>& scale)
    : impl_(std::make_unique<Impl>()) {
  if (auto msg = options.validate(); !msg.empty())
    throw std::invalid_argument("CvodeOptions: " + msg);
  if (pattern.n != n) throw std::invalid_argument("CvodeIntegrator: pattern must be n x n");
  if (auto msg = pattern.validate(); !msg.empty())
    throw std::invalid_argument("SparsePattern: " + msg);
  if (!jac) throw std::invalid_argument("CvodeIntegrator: a sparse solver needs its Jacobian");
  auto sctx = static_cast<SUNContext>(ctx.get());
  Impl& m = *impl_;
  m.n = n;
  m.rhs = std::move(rhs);
  m.sparse_jac = std::move(jac);
  m.pattern = std::move(pattern);
  m.options = options;
  m.allocate_vectors(sctx, scale);
  m.A.reset(SUNSparseMatrix(n, n, m.pattern.nonzeros(), CSC_MAT, sctx));
  if (!m.A) throw SolverError("could not allocate the sparse CVODE matrix");
  std::copy(m.pattern.col_start.begin(), m.pattern.col_start.end(),
            SUNSparseMatrix_IndexPointers(m.A.get()));
  std::copy(m.pattern.row.begin(), m.pattern.row.end(), SUNSparseMatrix_IndexValues(m.A.get()));
  m.klu.reset(SUNLinSol_KLU(m.y.get(), m.A.get(), sctx));
  if (!m.klu) throw SolverError("could not create the KLU sparse linear solver");
  // AMD, not SUNDIALS' default COLAMD: it leaves less fill-in on reaction
  // networks, whose species couple nearly symmetrically (reactants with
  // each other, products with reactants). Measured on the synthetic
  // 200-species stage (tools/bench): nnz(L+U) 9566 -> 5929, factorization
  // flops 328k -> 91k (15848 -> 11048 with the structurally zero entries
  // of irreversible reactions' products kept in the pattern).
  if (SUNLinSol_KLUSetOrdering(m.klu.get(), 0) != SUNLS_SUCCESS)
    throw SolverError("could not set the KLU ordering");
  m.u.reset(N_VNew_Serial(n, sctx));
  m.w.reset(N_VNew_Serial(n, sctx));
  m.z.reset(N_VNew_Serial(n, sctx));
  if (!m.u || !m.w || !m.z) throw SolverError("could not allocate CVODE vectors");
  for (N_Vector v : {m.u.get(), m.w.get(), m.z.get()}) detail::use_fast_serial_ops(v);
  N_VConst(0.0, m.u.get());
  N_VConst(0.0, m.w.get());
  SUNLinearSolver S = SUNLinSolNewEmpty(sctx);
  if (S == nullptr) throw SolverError("could not create the sparse linear solver");
  S->content = &m;
  S->ops->gettype = &Impl::ls_type;
  S->ops->getid = &Impl::ls_id;
  S->ops->initialize = &Impl::ls_initialize;
  S->ops->setup = &Impl::ls_setup;
  S->ops->solve = &Impl::ls_solve;
  S->ops->lastflag = &Impl::ls_last_flag;
  S->ops->free = &Impl::ls_free;
  m.LS.reset(S);
  m.create_cvode(sctx);
}

CvodeIntegrator::CvodeIntegrator(const SunContext& ctx, int blocks, int block_size, Rhs rhs,
                                 BlockJacobian jac, const CvodeOptions& options,
                                 const std::vector<double>& scale)
    : impl_(std::make_unique<Impl>()) {
  if (auto msg = options.validate(); !msg.empty())
    throw std::invalid_argument("CvodeOptions: " + msg);
  if (blocks < 1 || block_size < 1 || block_size > kMaxBlockSize)
    throw std::invalid_argument("CvodeIntegrator: blocks >= 1 of 1..64 states each");
  if (!jac) throw std::invalid_argument("CvodeIntegrator: a block solver needs its Jacobian");
  auto sctx = static_cast<SUNContext>(ctx.get());
  Impl& m = *impl_;
  m.n = blocks * block_size;
  m.blocks = blocks;
  m.rhs = std::move(rhs);
  m.block_jac = std::move(jac);
  m.options = options;
  m.allocate_vectors(sctx, scale);
  // Before CVODE clones its work vectors from y.
  detail::use_block_max_norm(m.y.get(), block_size);
  m.A.reset(detail::make_block_diagonal_matrix(blocks, block_size, sctx));
  if (!m.A) throw SolverError("could not allocate the block-diagonal CVODE matrix");
  m.LS.reset(detail::make_block_lu_solver(blocks, block_size, sctx));
  if (!m.LS) throw SolverError("could not create the block linear solver");
  m.create_cvode(sctx);
}

CvodeIntegrator::~CvodeIntegrator() = default;
CvodeIntegrator::CvodeIntegrator(CvodeIntegrator&&) noexcept = default;
CvodeIntegrator& CvodeIntegrator::operator=(CvodeIntegrator&&) noexcept = default;

void CvodeIntegrator::init(double t0, const std::vector<double>& y0) {
  Impl& m = *impl_;
  if (static_cast<int>(y0.size()) != m.n) throw std::invalid_argument("init: y0 size");
  std::memcpy(N_VGetArrayPointer(m.y.get()), y0.data(), sizeof(double) * m.n);
  void* mem = m.mem.get();
  if (!m.initialized) {
    m.check(CVodeInit(mem, &Impl::rhs_fn, t0, m.y.get()), "CVodeInit");
    m.check(CVodeSetUserData(mem, &m), "CVodeSetUserData");
    m.check(CVodeSVtolerances(mem, m.options.rtol, m.atol.get()), "CVodeSVtolerances");
    m.check(CVodeSetLinearSolver(mem, m.LS.get(), m.A.get()), "CVodeSetLinearSolver");
    if (m.sparse_jac)
      m.check(CVodeSetJacFn(mem, &Impl::sparse_jac_fn), "CVodeSetJacFn");
    else if (m.block_jac)
      m.check(CVodeSetJacFn(mem, &Impl::block_jac_fn), "CVodeSetJacFn");
    else if (m.jac)
      m.check(CVodeSetJacFn(mem, &Impl::jac_fn), "CVodeSetJacFn");
    m.check(CVodeSetMaxNumSteps(mem, m.options.max_steps), "CVodeSetMaxNumSteps");
    m.check(CVodeSetMaxOrd(mem, m.options.max_order), "CVodeSetMaxOrd");
    m.initialized = true;
  } else {
    m.check(CVodeReInit(mem, t0, m.y.get()), "CVodeReInit");
    // The scales may have changed since the first init (set_scale).
    m.check(CVodeSVtolerances(mem, m.options.rtol, m.atol.get()), "CVodeSVtolerances");
  }
}

void CvodeIntegrator::set_scale(const std::vector<double>& scale) { impl_->set_scale(scale); }
int CvodeIntegrator::size() const { return impl_->n; }
bool CvodeIntegrator::sparse() const { return static_cast<bool>(impl_->sparse_jac); }
int CvodeIntegrator::blocks() const { return impl_->blocks; }
const CvodeOptions& CvodeIntegrator::options() const { return impl_->options; }

void CvodeIntegrator::set_roots(int count, Roots g, const std::vector<int>& direction) {
  Impl& m = *impl_;
  m.roots = std::move(g);
  m.n_roots = count;
  m.check(CVodeRootInit(m.mem.get(), count, count > 0 ? &Impl::root_fn : nullptr), "CVodeRootInit");
  if (count > 0) {
    std::vector<int> dir = direction;
    dir.resize(count, 0);
    m.check(CVodeSetRootDirection(m.mem.get(), dir.data()), "CVodeSetRootDirection");
    m.check(CVodeSetNoInactiveRootWarn(m.mem.get()), "CVodeSetNoInactiveRootWarn");
  }
}

void CvodeIntegrator::set_stop_time(double t_stop) {
  impl_->check(CVodeSetStopTime(impl_->mem.get(), t_stop), "CVodeSetStopTime");
}

CvodeIntegrator::Event CvodeIntegrator::step(double t_out, double& t, std::vector<double>& y) {
  Impl& m = *impl_;
  m.last_error.clear();
  // In one-step mode CVODE's own step limit counts per call, i.e. never
  // trips; count the steps since init() here instead.
  long steps = 0;
  m.check(CVodeGetNumSteps(m.mem.get(), &steps), "CVodeGetNumSteps");
  if (steps >= m.options.max_steps)
    throw SolverError("CVODE took max_steps = " + std::to_string(m.options.max_steps) +
                      " steps without reaching the end");
  sunrealtype tret = 0;
  const int flag = CVode(m.mem.get(), t_out, m.y.get(), &tret, CV_ONE_STEP);
  m.check(flag, "CVODE");
  t = tret;
  y.assign(N_VGetArrayPointer(m.y.get()), N_VGetArrayPointer(m.y.get()) + m.n);
  if (flag == CV_ROOT_RETURN) return Event::Root;
  if (flag == CV_TSTOP_RETURN) return Event::Stop;
  return Event::Step;
}

CvodeIntegrator::Event CvodeIntegrator::advance(double t_out, double& t, std::vector<double>& y) {
  Impl& m = *impl_;
  m.last_error.clear();
  // CVODE's own step limit (CVodeSetMaxNumSteps) counts per call here.
  sunrealtype tret = 0;
  const int flag = CVode(m.mem.get(), t_out, m.y.get(), &tret, CV_NORMAL);
  if (flag == CV_TOO_MUCH_WORK)
    throw SolverError("CVODE took max_steps = " + std::to_string(m.options.max_steps) +
                      " steps without reaching the end");
  m.check(flag, "CVODE");
  t = tret;
  y.assign(N_VGetArrayPointer(m.y.get()), N_VGetArrayPointer(m.y.get()) + m.n);
  // CV_SUCCESS here means t_out was reached (CVODE reports t_out before
  // the stop time when the two coincide).
  return flag == CV_ROOT_RETURN ? Event::Root : Event::Stop;
}

std::vector<int> CvodeIntegrator::roots_found() const {
  std::vector<int> info(impl_->n_roots, 0);
  if (impl_->n_roots > 0)
    impl_->check(CVodeGetRootInfo(impl_->mem.get(), info.data()), "CVodeGetRootInfo");
  return info;
}

std::vector<double> CvodeIntegrator::interpolate(double t) const {
  Impl& m = *impl_;
  NVectorPtr out(N_VClone(m.y.get()));
  m.check(CVodeGetDky(m.mem.get(), t, 0, out.get()), "CVodeGetDky");
  const double* p = N_VGetArrayPointer(out.get());
  return {p, p + m.n};
}

void CvodeIntegrator::interpolate(double t, int k, double* out) const {
  Impl& m = *impl_;
  if (!m.dky) m.dky.reset(N_VClone(m.y.get()));
  m.check(CVodeGetDky(m.mem.get(), t, k, m.dky.get()), "CVodeGetDky");
  std::memcpy(out, N_VGetArrayPointer(m.dky.get()), sizeof(double) * m.n);
}

SolverStats CvodeIntegrator::stats() const {
  SolverStats s;
  void* mem = impl_->mem.get();
  CVodeGetNumSteps(mem, &s.steps);
  CVodeGetNumRhsEvals(mem, &s.rhs_evals);
  CVodeGetNumJacEvals(mem, &s.jac_evals);
  CVodeGetNumNonlinSolvIters(mem, &s.newton_iters);
  CVodeGetNumErrTestFails(mem, &s.error_test_fails);
  CVodeGetNumGEvals(mem, &s.root_evals);
  return s;
}

}  // namespace rxtrain
