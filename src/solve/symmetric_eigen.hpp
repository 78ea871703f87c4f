// pcasweep/solve/symmetric_eigen.hpp — eigenpairs of a small dense symmetric matrix.
//
// Contract: the one place the solvers diagonalise a symmetric matrix (the d×d
// covariance of the exact solver, the m×m Gram matrix of block Krylov). With
// PCASWEEP_HAVE_LAPACK (the OpenBLAS build, which carries LAPACK) it calls
// LAPACK's dsyevd (divide and conquer, blocked, multithreaded through BLAS);
// otherwise Eigen's SelfAdjointEigenSolver. Measured in docs/performance.md.
#pragma once

#include <Eigen/Dense>

namespace pcasweep {

struct SymmetricEigen {
  Eigen::VectorXd values;   // m eigenvalues, decreasing
  Eigen::MatrixXd vectors;  // m×m, column j the unit eigenvector of values(j); empty unless asked for
};

// s: m×m symmetric (only the lower triangle is read). with_vectors: also
// return the eigenvectors. Returns the eigenpairs sorted by decreasing value.
// Throws Error(data) if the eigensolver does not converge.
SymmetricEigen symmetric_eigen(const Eigen::MatrixXd& s, bool with_vectors);

}  // namespace pcasweep
