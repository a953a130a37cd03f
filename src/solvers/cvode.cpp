#include "rxtrain/solvers/cvode.hpp"

#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunmatrix/sunmatrix_dense.h>

#include <cstdlib>
#include <cstring>
#include <memory>
#include <stdexcept>
#include <string>

#include "rxtrain/error.hpp"

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
  Roots roots;
  int n_roots = 0;
  std::exception_ptr pending;  // exception thrown inside a callback
  std::string last_error;      // CVODE's own message for the last failure
  NVectorPtr y;
  NVectorPtr atol;
  MatrixPtr A;
  LinSolPtr LS;
  CvodeMemPtr mem;
  CvodeOptions options;
  bool initialized = false;

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
  if (static_cast<int>(scale.size()) != n)
    throw std::invalid_argument("CvodeIntegrator: scale must have n entries");
  auto sctx = static_cast<SUNContext>(ctx.get());
  Impl& m = *impl_;
  m.n = n;
  m.rhs = std::move(rhs);
  m.jac = std::move(jac);
  m.options = options;
  m.y.reset(N_VNew_Serial(n, sctx));
  m.atol.reset(N_VNew_Serial(n, sctx));
  if (!m.y || !m.atol) throw SolverError("could not allocate CVODE vectors");
  double* a = N_VGetArrayPointer(m.atol.get());
  for (int i = 0; i < n; ++i) a[i] = options.atol * (scale[i] > 0 ? scale[i] : 1.0);
  m.A.reset(SUNDenseMatrix(n, n, sctx));
  if (!m.A) throw SolverError("could not allocate the CVODE matrix");
  m.LS.reset(SUNLinSol_Dense(m.y.get(), m.A.get(), sctx));
  if (!m.LS) throw SolverError("could not create the dense linear solver");
  m.mem.reset(CVodeCreate(CV_BDF, sctx));
  if (!m.mem) throw SolverError("could not create CVODE");
  m.check(CVodeSetErrHandlerFn(m.mem.get(), &Impl::err_fn, &m), "CVodeSetErrHandlerFn");
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
    if (m.jac) m.check(CVodeSetJacFn(mem, &Impl::jac_fn), "CVodeSetJacFn");
    m.check(CVodeSetMaxNumSteps(mem, m.options.max_steps), "CVodeSetMaxNumSteps");
    m.check(CVodeSetMaxOrd(mem, m.options.max_order), "CVodeSetMaxOrd");
    m.initialized = true;
  } else {
    m.check(CVodeReInit(mem, t0, m.y.get()), "CVodeReInit");
  }
}

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

SolverStats CvodeIntegrator::stats() const {
  SolverStats s;
  void* mem = impl_->mem.get();
  CVodeGetNumSteps(mem, &s.steps);
  CVodeGetNumRhsEvals(mem, &s.rhs_evals);
  CVodeGetNumJacEvals(mem, &s.jac_evals);
  CVodeGetNumNonlinSolvIters(mem, &s.newton_iters);
  CVodeGetNumErrTestFails(mem, &s.error_test_fails);
  return s;
}

}  // namespace rxtrain
