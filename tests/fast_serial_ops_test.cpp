// The compiled-in vector, dense-matrix and LU operations CVODE runs on
// (src/solvers/fast_serial_ops.*) against the SUNDIALS library's own serial
// and dense implementations, and the LU solve against GSL's.
#include "solvers/fast_serial_ops.hpp"

#include <gsl/gsl_linalg.h>
#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunmatrix/sunmatrix_dense.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <memory>
#include <random>
#include <vector>

using namespace rxtrain;

namespace {

struct Ctx {
  SUNContext ctx = nullptr;
  Ctx() { SUNContext_Create(nullptr, &ctx); }
  ~Ctx() { SUNContext_Free(&ctx); }
};
struct Vec {
  N_Vector v;
  Vec(int n, SUNContext ctx, bool fast) : v(N_VNew_Serial(n, ctx)) {
    N_VEnableFusedOps_Serial(v, SUNTRUE);
    if (fast) detail::use_fast_serial_ops(v);
  }
  ~Vec() { N_VDestroy(v); }
  double* d() const { return N_VGetArrayPointer(v); }
};

void fill(const Vec& a, const Vec& b, std::mt19937& rng, double lo, double hi) {
  std::uniform_real_distribution<double> u(lo, hi);
  for (sunindextype i = 0; i < N_VGetLength(a.v); ++i) a.d()[i] = b.d()[i] = u(rng);
}
void same(const Vec& a, const Vec& b) {
  for (sunindextype i = 0; i < N_VGetLength(a.v); ++i)
    CHECK(a.d()[i] == Approx(b.d()[i]).epsilon(1e-15).margin(1e-300));
}

}  // namespace

TEST_CASE("fast serial vector operations equal the SUNDIALS serial ones", "[solver][fastops]") {
  Ctx c;
  std::mt19937 rng(7);
  const int n = 7;
  // Two sets of vectors with the same values: library (L) and fast (F).
  Vec xl(n, c.ctx, false), yl(n, c.ctx, false), zl(n, c.ctx, false), wl(n, c.ctx, false);
  Vec xf(n, c.ctx, true), yf(n, c.ctx, true), zf(n, c.ctx, true), wf(n, c.ctx, true);
  fill(xl, xf, rng, -2, 2);
  fill(yl, yf, rng, 0.5, 3);
  fill(wl, wf, rng, 0.1, 10);
  N_VLinearSum(0.3, xl.v, -1.7, yl.v, zl.v);
  N_VLinearSum(0.3, xf.v, -1.7, yf.v, zf.v);
  same(zl, zf);
  N_VProd(xl.v, yl.v, zl.v), N_VProd(xf.v, yf.v, zf.v), same(zl, zf);
  N_VDiv(xl.v, yl.v, zl.v), N_VDiv(xf.v, yf.v, zf.v), same(zl, zf);
  N_VScale(-2.5, xl.v, zl.v), N_VScale(-2.5, xf.v, zf.v), same(zl, zf);
  N_VAbs(xl.v, zl.v), N_VAbs(xf.v, zf.v), same(zl, zf);
  N_VInv(yl.v, zl.v), N_VInv(yf.v, zf.v), same(zl, zf);
  N_VAddConst(xl.v, 4.25, zl.v), N_VAddConst(xf.v, 4.25, zf.v), same(zl, zf);
  N_VCompare(1.0, xl.v, zl.v), N_VCompare(1.0, xf.v, zf.v), same(zl, zf);
  N_VConst(3.5, zl.v), N_VConst(3.5, zf.v), same(zl, zf);
  CHECK(N_VDotProd(xf.v, yf.v) == Approx(N_VDotProd(xl.v, yl.v)).epsilon(1e-15));
  CHECK(N_VMaxNorm(xf.v) == N_VMaxNorm(xl.v));
  CHECK(N_VMin(xf.v) == N_VMin(xl.v));
  CHECK(N_VWrmsNorm(xf.v, wf.v) == Approx(N_VWrmsNorm(xl.v, wl.v)).epsilon(1e-15));
  // A mask of ones and zeros.
  for (int i = 0; i < n; ++i) zl.d()[i] = zf.d()[i] = i % 2 == 0 ? 1.0 : 0.0;
  CHECK(N_VWrmsNormMask(xf.v, wf.v, zf.v) ==
        Approx(N_VWrmsNormMask(xl.v, wl.v, zl.v)).epsilon(1e-15));
  xl.d()[2] = xf.d()[2] = 0.0;
  CHECK(N_VInvTest(xf.v, zf.v) == N_VInvTest(xl.v, zl.v));

  // Fused: z = sum c_k X_k with z aliasing X_0, as CVODE calls it.
  double coef[3] = {0.5, -1.25, 2.0};
  N_VLinearSum(1.0, yl.v, 0.0, yl.v, zl.v);
  N_VLinearSum(1.0, yf.v, 0.0, yf.v, zf.v);
  N_Vector Xl[3] = {zl.v, xl.v, wl.v}, Xf[3] = {zf.v, xf.v, wf.v};
  N_VLinearCombination(3, coef, Xl, zl.v);
  N_VLinearCombination(3, coef, Xf, zf.v);
  same(zl, zf);
  Vec ul(n, c.ctx, false), uf(n, c.ctx, true);
  N_Vector Yl[2] = {yl.v, wl.v}, Yf[2] = {yf.v, wf.v};
  N_Vector Zl[2] = {zl.v, ul.v}, Zf[2] = {zf.v, uf.v};
  N_VScaleAddMulti(2, coef, xl.v, Yl, Zl);
  N_VScaleAddMulti(2, coef, xf.v, Yf, Zf);
  same(zl, zf);
  same(ul, uf);
  double dl[2], df[2];
  N_VDotProdMulti(2, xl.v, Yl, dl);
  N_VDotProdMulti(2, xf.v, Yf, df);
  CHECK(df[0] == Approx(dl[0]).epsilon(1e-15));
  CHECK(df[1] == Approx(dl[1]).epsilon(1e-15));
  // A clone carries the fast operations.
  N_Vector clone = N_VClone(xf.v);
  CHECK(clone->ops->nvlinearsum == xf.v->ops->nvlinearsum);
  CHECK(clone->ops->nvlinearsum != xl.v->ops->nvlinearsum);
  N_VDestroy(clone);
}

TEST_CASE("fast dense LU solves like SUNDIALS' dense solver and GSL's LU", "[solver][fastops]") {
  Ctx c;
  std::mt19937 rng(11);
  std::uniform_real_distribution<double> u(-1, 1);
  for (int n : {1, 2, 5, 9}) {
    INFO("n = " << n);
    SUNMatrix Al = SUNDenseMatrix(n, n, c.ctx), Af = SUNDenseMatrix(n, n, c.ctx);
    detail::use_fast_dense_ops(Af);
    std::vector<double> a(static_cast<std::size_t>(n) * n);
    for (auto& v : a) v = u(rng);
    // gamma J - like CVODE: M = I - gamma J through copy and scale-add-I.
    SUNMatrix Jf = SUNDenseMatrix(n, n, c.ctx);
    for (int k = 0; k < n * n; ++k) SM_DATA_D(Jf)[k] = SM_DATA_D(Al)[k] = a[k];
    detail::use_fast_dense_ops(Jf);
    SUNMatCopy(Jf, Af);
    SUNMatScaleAddI(-0.7, Af);
    SUNMatScaleAddI(-0.7, Al);
    for (int k = 0; k < n * n; ++k)
      CHECK(SM_DATA_D(Af)[k] == Approx(SM_DATA_D(Al)[k]).epsilon(1e-15));
    std::vector<double> m(SM_DATA_D(Al), SM_DATA_D(Al) + n * n);  // column-major copy for GSL

    Vec bl(n, c.ctx, false), bf(n, c.ctx, true), xl(n, c.ctx, false), xf(n, c.ctx, true);
    fill(bl, bf, rng, -1, 1);
    SUNLinearSolver Ll = SUNLinSol_Dense(bl.v, Al, c.ctx);
    SUNLinearSolver Lf = detail::make_fast_dense_solver(n, c.ctx);
    REQUIRE(SUNLinSolSetup(Ll, Al) == 0);
    REQUIRE(SUNLinSolSetup(Lf, Af) == 0);
    REQUIRE(SUNLinSolSolve(Ll, Al, xl.v, bl.v, 0) == 0);
    REQUIRE(SUNLinSolSolve(Lf, Af, xf.v, bf.v, 0) == 0);
    for (int i = 0; i < n; ++i) CHECK(xf.d()[i] == Approx(xl.d()[i]).epsilon(1e-12));

    // GSL (row-major): the transpose of the column-major data.
    gsl_matrix* g = gsl_matrix_alloc(n, n);
    for (int i = 0; i < n; ++i)
      for (int j = 0; j < n; ++j) gsl_matrix_set(g, i, j, m[i + j * n]);
    gsl_permutation* p = gsl_permutation_alloc(n);
    gsl_vector* gb = gsl_vector_alloc(n);
    gsl_vector* gx = gsl_vector_alloc(n);
    for (int i = 0; i < n; ++i) gsl_vector_set(gb, i, bl.d()[i]);
    int sign = 0;
    gsl_linalg_LU_decomp(g, p, &sign);
    gsl_linalg_LU_solve(g, p, gb, gx);
    for (int i = 0; i < n; ++i) CHECK(xf.d()[i] == Approx(gsl_vector_get(gx, i)).epsilon(1e-12));
    gsl_vector_free(gx), gsl_vector_free(gb), gsl_permutation_free(p), gsl_matrix_free(g);

    // Solving in place (x == b), as the rank-one correction does.
    Vec bb(n, c.ctx, true);
    for (int i = 0; i < n; ++i) bb.d()[i] = bl.d()[i];
    REQUIRE(SUNLinSolSolve(Lf, Af, bb.v, bb.v, 0) == 0);
    for (int i = 0; i < n; ++i) CHECK(bb.d()[i] == xf.d()[i]);
    // CVODE's saved Jacobian is a clone: it keeps the fast operations.
    SUNMatrix C = SUNMatClone(Af);
    CHECK(C->ops->copy == Af->ops->copy);
    CHECK(C->ops->copy != Al->ops->copy);
    SUNMatCopy(Af, C);
    for (int k = 0; k < n * n; ++k) CHECK(SM_DATA_D(C)[k] == SM_DATA_D(Af)[k]);
    SUNMatDestroy(C);
    SUNLinSolFree(Ll), SUNLinSolFree(Lf);
    SUNMatDestroy(Al), SUNMatDestroy(Af), SUNMatDestroy(Jf);
  }
  // A singular matrix is a recoverable failure (CVODE retries).
  SUNMatrix S = SUNDenseMatrix(2, 2, c.ctx);
  SUNLinearSolver L = detail::make_fast_dense_solver(2, c.ctx);
  CHECK(SUNLinSolSetup(L, S) == SUNLS_LUFACT_FAIL);
  CHECK(SUNLinSolLastFlag(L) == 1);
  SUNLinSolFree(L);
  SUNMatDestroy(S);
}

TEST_CASE("block-diagonal matrix and block LU solve each block like GSL's LU",
          "[solver][fastops]") {
  Ctx c;
  std::mt19937 rng(13);
  std::uniform_real_distribution<double> u(-1, 1);
  const int m = 3, N = 4;
  SUNMatrix J = detail::make_block_diagonal_matrix(m, N, c.ctx);
  double* jd = detail::block_diagonal_data(J);
  for (int k = 0; k < m * N * N; ++k) jd[k] = u(rng);
  // M = I - gamma J through clone, copy and scale-add-I, as CVODE forms it.
  SUNMatrix A = SUNMatClone(J);
  CHECK(A->ops->scaleaddi == J->ops->scaleaddi);
  REQUIRE(SUNMatCopy(J, A) == 0);
  REQUIRE(SUNMatScaleAddI(-0.7, A) == 0);
  const double* ad = detail::block_diagonal_data(A);
  for (int b = 0; b < m; ++b)
    for (int j = 0; j < N; ++j)
      for (int i = 0; i < N; ++i) {
        const int k = b * N * N + i + j * N;
        CHECK(ad[k] == -0.7 * jd[k] + (i == j ? 1.0 : 0.0));
      }
  std::vector<double> a(ad, ad + m * N * N);  // before factoring in place

  Vec bv(m * N, c.ctx, true), xv(m * N, c.ctx, true);
  for (int i = 0; i < m * N; ++i) bv.d()[i] = u(rng);
  SUNLinearSolver L = detail::make_block_lu_solver(m, N, c.ctx);
  REQUIRE(SUNLinSolInitialize(L) == 0);
  REQUIRE(SUNLinSolSetup(L, A) == 0);
  REQUIRE(SUNLinSolSolve(L, A, xv.v, bv.v, 0) == 0);
  for (int b = 0; b < m; ++b) {
    gsl_matrix* g = gsl_matrix_alloc(N, N);
    for (int i = 0; i < N; ++i)
      for (int j = 0; j < N; ++j) gsl_matrix_set(g, i, j, a[b * N * N + i + j * N]);
    gsl_permutation* p = gsl_permutation_alloc(N);
    gsl_vector* gb = gsl_vector_alloc(N);
    gsl_vector* gx = gsl_vector_alloc(N);
    for (int i = 0; i < N; ++i) gsl_vector_set(gb, i, bv.d()[b * N + i]);
    int sign = 0;
    gsl_linalg_LU_decomp(g, p, &sign);
    gsl_linalg_LU_solve(g, p, gb, gx);
    for (int i = 0; i < N; ++i)
      CHECK(xv.d()[b * N + i] == Approx(gsl_vector_get(gx, i)).epsilon(1e-12));
    gsl_vector_free(gx), gsl_vector_free(gb), gsl_permutation_free(p), gsl_matrix_free(g);
  }
  // A zero block is a recoverable failure naming its first zero pivot.
  SUNMatZero(A);
  for (int b = 0; b < m; ++b)
    if (b != 1)
      for (int i = 0; i < N; ++i) detail::block_diagonal_data(A)[b * N * N + i + i * N] = 1.0;
  CHECK(SUNLinSolSetup(L, A) == SUNLS_LUFACT_FAIL);
  CHECK(SUNLinSolLastFlag(L) == N + 1);
  SUNLinSolFree(L);
  SUNMatDestroy(A);
  SUNMatDestroy(J);
}

TEST_CASE("the block norm is the largest WRMS norm of any one block", "[solver][fastops]") {
  Ctx c;
  const int N = 3;
  Vec x(3 * N, c.ctx, true), w(3 * N, c.ctx, true);
  const double xs[] = {1, 2, 3, 10, 0, 0, 0.5, 0.5, 0.5};
  for (int i = 0; i < 3 * N; ++i) x.d()[i] = xs[i], w.d()[i] = 0.5;
  detail::use_block_max_norm(x.v, N);
  // Block 2: sqrt((5^2 + 0 + 0) / 3); the whole vector's RMS would be smaller.
  CHECK(N_VWrmsNorm(x.v, w.v) == Approx(5.0 / std::sqrt(3.0)).epsilon(1e-15));
  N_Vector clone = N_VClone(x.v);
  CHECK(clone->ops->nvwrmsnorm == x.v->ops->nvwrmsnorm);
  N_VDestroy(clone);
}
