#include "solve/operator.hpp"

#include <algorithm>
#include <omp.h>

namespace pcasweep {

namespace {
// Rows per block when centring on the fly: big enough for fast GEMM, small
// enough that a block of 192 variables stays in cache-friendly sizes.
constexpr Eigen::Index kBlockRows = 2048;
}  // namespace

DenseOperator::DenseOperator(const Eigen::MatrixXd& X) : X_(X) {
  // Column means, accumulated in double column by column (contiguous in memory).
  mean_.resize(X.cols());
#pragma omp parallel for schedule(static)
  for (Eigen::Index j = 0; j < X.cols(); ++j) mean_(j) = X.col(j).mean();
}

Eigen::MatrixXd DenseOperator::apply(const Eigen::MatrixXd& omega) const {
  // A_c·Ω = A·Ω − 1·(μᵀΩ): the centring costs one row vector. The result
  // starts as −1·(μᵀΩ) and the product is accumulated onto it (GEMM with
  // β = 1), so no separate zeroing or subtraction pass over N×l is made.
  Eigen::MatrixXd y(X_.rows(), omega.cols());
  y.rowwise() = -(mean_.transpose() * omega);
  y.noalias() += X_ * omega;
  return y;
}

Eigen::MatrixXd DenseOperator::apply_transpose(const Eigen::MatrixXd& y) const {
  // A_cᵀ·Y = AᵀY − μ·(1ᵀY), accumulated onto the rank-one term as above.
  Eigen::MatrixXd z = -mean_ * y.colwise().sum();
  z.noalias() += X_.transpose() * y;
  return z;
}

Eigen::MatrixXd DenseOperator::scatter() const {
  // Blocks of rows are centred into a small buffer and accumulated, one
  // partial scatter per thread, then summed: no centred copy of X, and no
  // cancellation from AᵀA − N·μμᵀ.
  const Eigen::Index n = X_.rows(), d = X_.cols();
  const Eigen::Index blocks = (n + kBlockRows - 1) / kBlockRows;
  const int threads = std::max(1, std::min<int>(omp_get_max_threads(), int(blocks)));
  std::vector<Eigen::MatrixXd> partial(threads, Eigen::MatrixXd::Zero(d, d));
#pragma omp parallel num_threads(threads)
  {
    Eigen::MatrixXd& mine = partial[omp_get_thread_num()];
    Eigen::MatrixXd block;
#pragma omp for schedule(static)
    for (Eigen::Index b = 0; b < blocks; ++b) {
      const Eigen::Index start = b * kBlockRows;
      const Eigen::Index count = std::min(kBlockRows, n - start);
      block = X_.middleRows(start, count);
      block.rowwise() -= mean_.transpose();
      mine.selfadjointView<Eigen::Lower>().rankUpdate(block.transpose());
    }
  }
  Eigen::MatrixXd total = Eigen::MatrixXd::Zero(d, d);
  for (const auto& p : partial) total += p;
  total.triangularView<Eigen::StrictlyUpper>() = total.transpose();
  return total;
}

Eigen::VectorXd DenseOperator::column_sums_of_squares() const {
  Eigen::VectorXd s(X_.cols());
#pragma omp parallel for schedule(static)
  for (Eigen::Index j = 0; j < X_.cols(); ++j) s(j) = (X_.col(j).array() - mean_(j)).square().sum();
  return s;
}

}  // namespace pcasweep
