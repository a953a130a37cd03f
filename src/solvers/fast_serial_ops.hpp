// Compiled-in replacements for the hot SUNDIALS serial-vector and dense
// operations that CVODE calls on every step. Internal to solvers/.
//
// Why: Debian's SUNDIALS 6.4.1 libraries are built without optimization
// (their code spills every variable to the stack: objdump of
// N_VWSqrSumLocal_Serial), so for the small systems of a reactor train
// CVODE spent most of each step in those vector loops and in the dense LU
// (callgrind, docs/performance.md). SUNDIALS lets a user supply the
// operations of a vector, matrix or linear solver; these are the same
// operations, built with this project's flags. Results agree with the
// library's to rounding (tests/fast_serial_ops_test.cpp).
#pragma once

#include <sundials/sundials_linearsolver.h>
#include <sundials/sundials_matrix.h>
#include <sundials/sundials_nvector.h>

namespace rxtrain::detail {

// Replaces the operations of serial vector v (and of every clone CVODE
// makes of it, as clones copy the table) with compiled-in ones.
void use_fast_serial_ops(N_Vector v);

// Replaces zero / copy / scale-add-identity of a dense matrix.
void use_fast_dense_ops(SUNMatrix A);

// A dense direct linear solver (LU with partial pivoting) for an n x n
// SUNDenseMatrix. Owned by the caller (SUNLinSolFree).
SUNLinearSolver make_fast_dense_solver(int n, SUNContext ctx);

}  // namespace rxtrain::detail
