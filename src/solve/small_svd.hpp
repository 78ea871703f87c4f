// pcasweep/solve/small_svd.hpp — the full SVD of a small dense matrix.
//
// Contract: the one place the solvers take an SVD (the l×l factor R of the
// randomized schemes), by Eigen's BDCSVD. It is instantiated once, in
// small_svd.cpp (29 s of compile time at -O3, measured alone), not in each
// solver file that needs it.
#pragma once

#include <Eigen/Core>

namespace pcasweep {

struct SmallSvd {
  Eigen::VectorXd values;  // min(m, n) singular values, decreasing
  Eigen::MatrixXd U;       // m×m left singular vectors
  Eigen::MatrixXd V;       // n×n right singular vectors
};

// r: m×n, small (the randomized schemes pass l×l). Returns its full SVD r = U·diag(values)·Vᵀ.
SmallSvd small_svd(const Eigen::MatrixXd& r);

}  // namespace pcasweep
