// pcasweep/solve/exact.hpp — PCA through the covariance matrix.
//
// Contract: forms the d×d sample covariance S = A_cᵀA_c/(N−1) from the
// operator (accumulated in blocks, in parallel), solves it with the
// symmetric eigensolver of solve/symmetric_eigen.hpp, and returns every one of the d eigenpairs, the
// (near-)zero ones included. Cost O(N·d² + d³), memory O(d²): the path for
// small d (patches, bands).
#pragma once

#include "solve/operator.hpp"
#include "solve/solve_report.hpp"

namespace pcasweep {

// op: the centred data, N×d with N >= 2. Returns a complete Basis (r = d)
// and a report naming the solver "exact" (reason left empty for the caller).
// Throws Error(data) if N < 2 (a covariance needs two observations).
Solution solve_exact(const CenteredOperator& op);

}  // namespace pcasweep
