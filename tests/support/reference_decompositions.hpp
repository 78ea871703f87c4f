// tests/support/reference_decompositions.hpp — Eigen's own decompositions, the
// independent references the solver tests compare against.
//
// Contract: thin wrappers, instantiated once in reference_decompositions.cpp.
// Eigen's BDCSVD cost 40–50 s of compile time (-O3 -march=native) in every
// test file that used it, and five did; here it is compiled once.
#pragma once

#include <Eigen/Core>

namespace pcasweep::testing {

// A (m×n) → Eigen::BDCSVD's singular values, min(m, n), decreasing; with
// `with_v`, also its thin right singular vectors V (n×min(m, n)).
struct ReferenceSvd {
  Eigen::VectorXd values;
  Eigen::MatrixXd V;  // empty unless asked for
  const Eigen::VectorXd& singularValues() const { return values; }
  const Eigen::MatrixXd& matrixV() const { return V; }
};
ReferenceSvd reference_svd(const Eigen::MatrixXd& A, bool with_v = false);

// S symmetric (d×d) → Eigen::SelfAdjointEigenSolver's eigenvalues (d), in
// decreasing order (Eigen gives them increasing).
Eigen::VectorXd reference_eigenvalues_decreasing(const Eigen::MatrixXd& S);

}  // namespace pcasweep::testing
