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

#include "rxtrain/solvers/cvode.hpp"

namespace rxtrain::detail {

// Replaces the operations of serial vector v (and of every clone CVODE
// makes of it, as clones copy the table) with compiled-in ones.
void use_fast_serial_ops(N_Vector v);

// Replaces zero / copy / scale-add-identity of a dense matrix.
void use_fast_dense_ops(SUNMatrix A);

// A dense direct linear solver (LU with partial pivoting) for an n x n
// SUNDenseMatrix. Owned by the caller (SUNLinSolFree).
SUNLinearSolver make_fast_dense_solver(int n, SUNContext ctx);

// Block-diagonal systems: `blocks` independent systems of block_size
// states each, stacked in one vector, so that CVODE's per-step work is
// shared by all of them (see CvodeIntegrator's block constructor).
// Makes N_VWrmsNorm of v (and of its clones) the largest WRMS norm of any
// block of block_size states (1 <= block_size <= kMaxBlockSize).
void use_block_max_norm(N_Vector v, int block_size);

// A block-diagonal matrix of `blocks` dense block_size x block_size blocks
// (custom SUNMatrix: zero, copy, clone, scale-add-identity). Owned by the
// caller (SUNMatDestroy).
SUNMatrix make_block_diagonal_matrix(int blocks, int block_size, SUNContext ctx);
// Its blocks: column-major, block b at b * block_size^2.
double* block_diagonal_data(SUNMatrix A);

// LU with partial pivoting of each block of such a matrix.
SUNLinearSolver make_block_lu_solver(int blocks, int block_size, SUNContext ctx);

}  // namespace rxtrain::detail
