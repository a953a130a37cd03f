#include "fast_serial_ops.hpp"

#include <nvector/nvector_serial.h>
#include <sunmatrix/sunmatrix_dense.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <type_traits>
#include <utility>
#include <vector>

namespace rxtrain::detail {

namespace {

// ---- serial vector operations (same definitions as nvector_serial.c) ----

inline sunindextype len(N_Vector v) { return NV_LENGTH_S(v); }
inline double* data(N_Vector v) { return NV_DATA_S(v); }

// Calls body(n) with n a compile-time constant for the sizes of a lone
// tube's state (4 to 9: species, T and Q, perhaps P and a coolant's T),
// else with n itself. CVODE calls the hottest operations below some 20
// times a step on vectors of 6 or 7; with the length known the compiler
// unrolls the loops, whose own bookkeeping was much of their cost. The
// operations and their order are the same either way.
template <class Body>
void with_length(sunindextype n, Body&& body) {
  switch (n) {
    case 4:
      return body(std::integral_constant<sunindextype, 4>{});
    case 5:
      return body(std::integral_constant<sunindextype, 5>{});
    case 6:
      return body(std::integral_constant<sunindextype, 6>{});
    case 7:
      return body(std::integral_constant<sunindextype, 7>{});
    case 8:
      return body(std::integral_constant<sunindextype, 8>{});
    case 9:
      return body(std::integral_constant<sunindextype, 9>{});
    default:
      return body(n);
  }
}

void linear_sum(double a, N_Vector x, double b, N_Vector y, N_Vector z) {
  const double *xd = data(x), *yd = data(y);
  double* zd = data(z);
  with_length(len(x), [&](auto n) {
    for (sunindextype i = 0; i < n; ++i) zd[i] = a * xd[i] + b * yd[i];
  });
}
void constant(double c, N_Vector z) {
  double* zd = data(z);
  const sunindextype n = len(z);
  for (sunindextype i = 0; i < n; ++i) zd[i] = c;
}
void prod(N_Vector x, N_Vector y, N_Vector z) {
  const double *xd = data(x), *yd = data(y);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = xd[i] * yd[i];
}
void div(N_Vector x, N_Vector y, N_Vector z) {
  const double *xd = data(x), *yd = data(y);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = xd[i] / yd[i];
}
void scale(double c, N_Vector x, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  with_length(len(x), [&](auto n) {
    for (sunindextype i = 0; i < n; ++i) zd[i] = c * xd[i];
  });
}
void abs_value(N_Vector x, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = std::abs(xd[i]);
}
void inv(N_Vector x, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = 1.0 / xd[i];
}
void add_const(N_Vector x, double b, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = xd[i] + b;
}
double dot(N_Vector x, N_Vector y) {
  const double *xd = data(x), *yd = data(y);
  const sunindextype n = len(x);
  double s = 0;
  for (sunindextype i = 0; i < n; ++i) s += xd[i] * yd[i];
  return s;
}
double max_norm(N_Vector x) {
  const double* xd = data(x);
  const sunindextype n = len(x);
  double m = 0;
  for (sunindextype i = 0; i < n; ++i) m = std::abs(xd[i]) > m ? std::abs(xd[i]) : m;
  return m;
}
double wsqr_sum(N_Vector x, N_Vector w) {
  const double *xd = data(x), *wd = data(w);
  double s = 0;
  with_length(len(x), [&](auto n) {
    for (sunindextype i = 0; i < n; ++i) {
      const double p = xd[i] * wd[i];
      s += p * p;
    }
  });
  return s;
}
double wrms_norm(N_Vector x, N_Vector w) {
  return std::sqrt(wsqr_sum(x, w) / static_cast<double>(len(x)));
}
double wrms_norm_mask(N_Vector x, N_Vector w, N_Vector id) {
  const double *xd = data(x), *wd = data(w), *idd = data(id);
  const sunindextype n = len(x);
  double s = 0;
  for (sunindextype i = 0; i < n; ++i)
    if (idd[i] > 0) {
      const double p = xd[i] * wd[i];
      s += p * p;
    }
  return std::sqrt(s / static_cast<double>(n));
}
double min_value(N_Vector x) {
  const double* xd = data(x);
  const sunindextype n = len(x);
  double m = xd[0];
  for (sunindextype i = 1; i < n; ++i) m = xd[i] < m ? xd[i] : m;
  return m;
}
void compare(double c, N_Vector x, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  const sunindextype n = len(x);
  for (sunindextype i = 0; i < n; ++i) zd[i] = std::abs(xd[i]) >= c ? 1.0 : 0.0;
}
sunbooleantype inv_test(N_Vector x, N_Vector z) {
  const double* xd = data(x);
  double* zd = data(z);
  const sunindextype n = len(x);
  sunbooleantype ok = SUNTRUE;
  for (sunindextype i = 0; i < n; ++i) {
    if (xd[i] == 0)
      ok = SUNFALSE;
    else
      zd[i] = 1.0 / xd[i];
  }
  return ok;
}

// Fused operations. Element by element, so an output that is also an
// input (z == X[0], as CVODE passes) is read before it is written.
int linear_combination(int nv, double* c, N_Vector* X, N_Vector z) {
  double* zd = data(z);
  with_length(len(z), [&](auto n) {
    for (sunindextype i = 0; i < n; ++i) {
      double s = c[0] * data(X[0])[i];
      for (int k = 1; k < nv; ++k) s += c[k] * data(X[k])[i];
      zd[i] = s;
    }
  });
  return 0;
}
int scale_add_multi(int nv, double* a, N_Vector x, N_Vector* Y, N_Vector* Z) {
  const double* xd = data(x);
  with_length(len(x), [&](auto n) {
    for (int k = 0; k < nv; ++k) {
      const double* yd = data(Y[k]);
      double* zd = data(Z[k]);
      for (sunindextype i = 0; i < n; ++i) zd[i] = a[k] * xd[i] + yd[i];
    }
  });
  return 0;
}
int dot_prod_multi(int nv, N_Vector x, N_Vector* Y, double* d) {
  for (int k = 0; k < nv; ++k) d[k] = dot(x, Y[k]);
  return 0;
}

// ---- dense matrix (column-major, SM_COLS_D) --------------------------------

int mat_zero(SUNMatrix A) {
  double* a = SM_DATA_D(A);
  const sunindextype n = SM_LDATA_D(A);
  for (sunindextype i = 0; i < n; ++i) a[i] = 0;
  return 0;
}
int mat_copy(SUNMatrix A, SUNMatrix B) {
  const double* a = SM_DATA_D(A);
  double* b = SM_DATA_D(B);
  const sunindextype n = SM_LDATA_D(A);
  for (sunindextype i = 0; i < n; ++i) b[i] = a[i];
  return 0;
}
// A = c A + I
int mat_scale_add_identity(double c, SUNMatrix A) {
  double* a = SM_DATA_D(A);
  const sunindextype rows = SM_ROWS_D(A), cols = SM_COLUMNS_D(A);
  for (sunindextype j = 0; j < cols; ++j)
    for (sunindextype i = 0; i < rows; ++i) {
      double& v = a[i + j * rows];
      v = c * v + (i == j ? 1.0 : 0.0);
    }
  return 0;
}

SUNMatrix mat_clone(SUNMatrix A) {
  SUNMatrix B = SUNDenseMatrix(SM_ROWS_D(A), SM_COLUMNS_D(A), A->sunctx);
  if (B != nullptr) use_fast_dense_ops(B);
  return B;
}

// ---- dense LU linear solver --------------------------------------------------

struct DenseLu {
  std::vector<sunindextype> pivots;
  sunindextype last_flag = 0;
};
DenseLu& lu_of(SUNLinearSolver S) { return *static_cast<DenseLu*>(S->content); }

SUNLinearSolver_Type lu_type(SUNLinearSolver) { return SUNLINEARSOLVER_DIRECT; }
SUNLinearSolver_ID lu_id(SUNLinearSolver) { return SUNLINEARSOLVER_CUSTOM; }
int lu_initialize(SUNLinearSolver S) {
  lu_of(S).last_flag = 0;
  return SUNLS_SUCCESS;
}

// In-place LU with partial pivoting of the n x n column-major matrix a
// (row interchanges recorded in p), the method of the library's dense
// solver. Returns 0, or k + 1 when the k-th pivot is exactly zero (a
// singular iteration matrix: CVODE retries with a smaller step).
sunindextype lu_factor(double* a, sunindextype size, sunindextype* piv) {
  sunindextype flag = 0;
  with_length(size, [&](auto n) {
    auto at = [a, n](sunindextype i, sunindextype j) -> double& { return a[i + j * n]; };
    for (sunindextype k = 0; k < n; ++k) {
      sunindextype p = k;
      for (sunindextype i = k + 1; i < n; ++i)
        if (std::abs(at(i, k)) > std::abs(at(p, k))) p = i;
      piv[k] = p;
      if (at(p, k) == 0) {
        flag = k + 1;
        return;
      }
      if (p != k)
        for (sunindextype j = 0; j < n; ++j) std::swap(at(k, j), at(p, j));
      const double inv_pivot = 1.0 / at(k, k);
      for (sunindextype i = k + 1; i < n; ++i) at(i, k) *= inv_pivot;
      for (sunindextype j = k + 1; j < n; ++j) {
        const double akj = at(k, j);
        if (akj == 0) continue;
        for (sunindextype i = k + 1; i < n; ++i) at(i, j) -= at(i, k) * akj;
      }
    }
  });
  return flag;
}

// Solves (LU) x = P b in place in x with the factors of lu_factor().
// Runs once per Newton iteration of every step (see with_length). The
// division by each pivot in turn (a chain: each waits for the last) is
// much of its cost; a product by reciprocal pivots was tried: it moves
// the last bit, and through CVODE's step choices the demo outputs by up
// to 1e-7 relative (docs/performance.md), so it stays a division.
void lu_substitute(const double* a, sunindextype n, const sunindextype* piv, double* xd) {
  with_length(n, [&](auto m) {
    for (sunindextype k = 0; k < m; ++k)
      if (piv[k] != k) std::swap(xd[k], xd[piv[k]]);
    for (sunindextype j = 0; j < m; ++j) {  // L y = P b (unit diagonal)
      const double v = xd[j];
      if (v != 0)
        for (sunindextype i = j + 1; i < m; ++i) xd[i] -= a[i + j * m] * v;
    }
    for (sunindextype j = m - 1; j >= 0; --j) {  // U x = y
      xd[j] /= a[j + j * m];
      const double v = xd[j];
      if (v != 0)
        for (sunindextype i = 0; i < j; ++i) xd[i] -= a[i + j * m] * v;
    }
  });
}

int lu_setup(SUNLinearSolver S, SUNMatrix A) {
  DenseLu& lu = lu_of(S);
  lu.last_flag = lu_factor(SM_DATA_D(A), SM_COLUMNS_D(A), lu.pivots.data());
  return lu.last_flag == 0 ? SUNLS_SUCCESS : SUNLS_LUFACT_FAIL;
}

int lu_solve(SUNLinearSolver S, SUNMatrix A, N_Vector x, N_Vector b, double) {
  DenseLu& lu = lu_of(S);
  const sunindextype n = SM_COLUMNS_D(A);
  double* xd = data(x);
  if (x != b) {
    const double* bd = data(b);
    for (sunindextype i = 0; i < n; ++i) xd[i] = bd[i];
  }
  lu_substitute(SM_DATA_D(A), n, lu.pivots.data(), xd);
  lu.last_flag = 0;
  return SUNLS_SUCCESS;
}

sunindextype lu_last_flag(SUNLinearSolver S) { return lu_of(S).last_flag; }

int lu_free(SUNLinearSolver S) {
  if (S == nullptr) return SUNLS_SUCCESS;
  delete static_cast<DenseLu*>(S->content);
  S->content = nullptr;
  SUNLinSolFreeEmpty(S);
  return SUNLS_SUCCESS;
}

// ---- block-diagonal systems (independent runs solved together) -------------

// The WRMS norm of the block (of N states) with the largest one: each run's
// error is held to the tolerance as if it were integrated alone, instead
// of the whole vector's RMS, in which one run's error would count
// 1/sqrt(blocks) as much.
template <int N>
double block_max_wrms_norm(N_Vector x, N_Vector w) {
  const double *xd = data(x), *wd = data(w);
  const sunindextype n = len(x);
  double worst = 0;
  for (sunindextype b = 0; b + N <= n; b += N) {
    double s = 0;
    for (int i = 0; i < N; ++i) {
      const double p = xd[b + i] * wd[b + i];
      s += p * p;
    }
    worst = s > worst ? s : worst;
  }
  return std::sqrt(worst / N);
}
using NormFn = double (*)(N_Vector, N_Vector);
template <std::size_t... I>
constexpr std::array<NormFn, sizeof...(I)> block_norms(std::index_sequence<I...>) {
  return {&block_max_wrms_norm<static_cast<int>(I) + 1>...};
}
constexpr auto kBlockNorms = block_norms(std::make_index_sequence<kMaxBlockSize>{});

// A block-diagonal matrix: `blocks` column-major N x N blocks, one after
// the other. CVODE only zeroes, copies, clones and shifts its matrix.
struct BlockMatrix {
  sunindextype blocks = 0, N = 0;
  std::vector<double> data;
};
BlockMatrix& blocks_of(SUNMatrix A) { return *static_cast<BlockMatrix*>(A->content); }

SUNMatrix_ID block_id(SUNMatrix) { return SUNMATRIX_CUSTOM; }
int block_zero(SUNMatrix A) {
  auto& d = blocks_of(A).data;
  std::fill(d.begin(), d.end(), 0.0);
  return 0;
}
int block_copy(SUNMatrix A, SUNMatrix B) {
  blocks_of(B).data = blocks_of(A).data;  // same sizes: no allocation
  return 0;
}
// A = c A + I
int block_scale_add_identity(double c, SUNMatrix A) {
  BlockMatrix& m = blocks_of(A);
  const sunindextype N = m.N;
  for (sunindextype b = 0; b < m.blocks; ++b) {
    double* a = m.data.data() + b * N * N;
    for (sunindextype k = 0; k < N * N; ++k) a[k] *= c;
    for (sunindextype i = 0; i < N; ++i) a[i + i * N] += 1.0;
  }
  return 0;
}
void block_destroy(SUNMatrix A) {
  if (A == nullptr) return;
  delete static_cast<BlockMatrix*>(A->content);
  A->content = nullptr;
  SUNMatFreeEmpty(A);
}
SUNMatrix block_clone(SUNMatrix A) {
  const BlockMatrix& m = blocks_of(A);
  return make_block_diagonal_matrix(static_cast<int>(m.blocks), static_cast<int>(m.N), A->sunctx);
}

struct BlockLu {
  std::vector<sunindextype> pivots;  // N per block
  sunindextype last_flag = 0;
};
BlockLu& block_lu_of(SUNLinearSolver S) { return *static_cast<BlockLu*>(S->content); }
int block_lu_initialize(SUNLinearSolver S) {
  block_lu_of(S).last_flag = 0;
  return SUNLS_SUCCESS;
}
int block_lu_setup(SUNLinearSolver S, SUNMatrix A) {
  BlockLu& lu = block_lu_of(S);
  BlockMatrix& m = blocks_of(A);
  const sunindextype N = m.N;
  for (sunindextype b = 0; b < m.blocks; ++b) {
    const sunindextype f = lu_factor(m.data.data() + b * N * N, N, lu.pivots.data() + b * N);
    if (f != 0) {
      lu.last_flag = b * N + f;
      return SUNLS_LUFACT_FAIL;
    }
  }
  lu.last_flag = 0;
  return SUNLS_SUCCESS;
}
int block_lu_solve(SUNLinearSolver S, SUNMatrix A, N_Vector x, N_Vector b, double) {
  BlockLu& lu = block_lu_of(S);
  const BlockMatrix& m = blocks_of(A);
  const sunindextype N = m.N;
  double* xd = data(x);
  if (x != b) {
    const double* bd = data(b);
    for (sunindextype i = 0; i < len(x); ++i) xd[i] = bd[i];
  }
  for (sunindextype k = 0; k < m.blocks; ++k)
    lu_substitute(m.data.data() + k * N * N, N, lu.pivots.data() + k * N, xd + k * N);
  lu.last_flag = 0;
  return SUNLS_SUCCESS;
}
sunindextype block_lu_last_flag(SUNLinearSolver S) { return block_lu_of(S).last_flag; }
int block_lu_free(SUNLinearSolver S) {
  if (S == nullptr) return SUNLS_SUCCESS;
  delete static_cast<BlockLu*>(S->content);
  S->content = nullptr;
  SUNLinSolFreeEmpty(S);
  return SUNLS_SUCCESS;
}

}  // namespace

void use_fast_serial_ops(N_Vector v) {
  N_Vector_Ops o = v->ops;
  o->nvlinearsum = &linear_sum;
  o->nvconst = &constant;
  o->nvprod = &prod;
  o->nvdiv = &div;
  o->nvscale = &scale;
  o->nvabs = &abs_value;
  o->nvinv = &inv;
  o->nvaddconst = &add_const;
  o->nvdotprod = &dot;
  o->nvmaxnorm = &max_norm;
  o->nvwrmsnorm = &wrms_norm;
  o->nvwrmsnormmask = &wrms_norm_mask;
  o->nvmin = &min_value;
  o->nvcompare = &compare;
  o->nvinvtest = &inv_test;
  o->nvlinearcombination = &linear_combination;
  o->nvscaleaddmulti = &scale_add_multi;
  o->nvdotprodmulti = &dot_prod_multi;
  // The same operations where the library calls them "local" (the serial
  // vector's global and local values coincide).
  o->nvdotprodlocal = &dot;
  o->nvmaxnormlocal = &max_norm;
  o->nvminlocal = &min_value;
  o->nvinvtestlocal = &inv_test;
  o->nvwsqrsumlocal = &wsqr_sum;
}

void use_fast_dense_ops(SUNMatrix A) {
  // CVODE keeps its saved Jacobian in a clone of A and copies it back at
  // most setups: the clone gets these operations too.
  A->ops->clone = &mat_clone;
  A->ops->zero = &mat_zero;
  A->ops->copy = &mat_copy;
  A->ops->scaleaddi = &mat_scale_add_identity;
}

SUNLinearSolver make_fast_dense_solver(int n, SUNContext ctx) {
  auto lu = std::make_unique<DenseLu>();
  lu->pivots.assign(static_cast<std::size_t>(n), 0);
  SUNLinearSolver S = SUNLinSolNewEmpty(ctx);
  if (S == nullptr) return nullptr;
  S->content = lu.release();
  S->ops->gettype = &lu_type;
  S->ops->getid = &lu_id;
  S->ops->initialize = &lu_initialize;
  S->ops->setup = &lu_setup;
  S->ops->solve = &lu_solve;
  S->ops->lastflag = &lu_last_flag;
  S->ops->free = &lu_free;
  return S;
}

}  // namespace rxtrain::detail

namespace rxtrain::detail {

void use_block_max_norm(N_Vector v, int block_size) {
  v->ops->nvwrmsnorm = kBlockNorms.at(static_cast<std::size_t>(block_size) - 1);
}

SUNMatrix make_block_diagonal_matrix(int blocks, int block_size, SUNContext ctx) {
  auto m = std::make_unique<BlockMatrix>();
  m->blocks = blocks;
  m->N = block_size;
  m->data.assign(static_cast<std::size_t>(blocks) * block_size * block_size, 0.0);
  SUNMatrix A = SUNMatNewEmpty(ctx);
  if (A == nullptr) return nullptr;
  A->content = m.release();
  A->ops->getid = &block_id;
  A->ops->clone = &block_clone;
  A->ops->destroy = &block_destroy;
  A->ops->zero = &block_zero;
  A->ops->copy = &block_copy;
  A->ops->scaleaddi = &block_scale_add_identity;
  return A;
}

double* block_diagonal_data(SUNMatrix A) { return blocks_of(A).data.data(); }

SUNLinearSolver make_block_lu_solver(int blocks, int block_size, SUNContext ctx) {
  auto lu = std::make_unique<BlockLu>();
  lu->pivots.assign(static_cast<std::size_t>(blocks) * block_size, 0);
  SUNLinearSolver S = SUNLinSolNewEmpty(ctx);
  if (S == nullptr) return nullptr;
  S->content = lu.release();
  S->ops->gettype = &lu_type;
  S->ops->getid = &lu_id;
  S->ops->initialize = &block_lu_initialize;
  S->ops->setup = &block_lu_setup;
  S->ops->solve = &block_lu_solve;
  S->ops->lastflag = &block_lu_last_flag;
  S->ops->free = &block_lu_free;
  return S;
}

}  // namespace rxtrain::detail
