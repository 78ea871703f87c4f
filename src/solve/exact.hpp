// pcasweep/solve/exact.hpp — PCA through the covariance matrix.
//
// Contract: forms the d×d sample covariance S = A_cᵀA_c/(N−1) from the
// scatter of a ScatterSource (an operator accumulates it in blocks, in
// parallel; a ScatterSum has it already), solves it with the symmetric
// eigensolver of solve/symmetric_eigen.hpp, and returns every one of the d
// eigenpairs, the (near-)zero ones included. Cost O(N·d² + d³), memory O(d²): the path for
// small d (patches, bands).
#pragma once

#include "solve/scatter_source.hpp"
#include "solve/solve_report.hpp"

namespace pcasweep {

// source: the centred data's moments, N×d with N >= 2 (any CenteredOperator
// is one). Returns a complete Basis (r = d: components d×d, eigenvalues d)
// and a report naming the solver "exact" (reason left empty for the caller).
// Throws Error(data) if N < 2 (a covariance needs two observations).
Solution solve_exact(const ScatterSource& source);

}  // namespace pcasweep
