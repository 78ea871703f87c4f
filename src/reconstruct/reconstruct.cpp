#include "reconstruct/reconstruct.hpp"

#include "core/error.hpp"

namespace pcasweep {

Eigen::MatrixXd project(const Basis& basis, const Eigen::MatrixXd& X, Eigen::Index k) {
  if (X.cols() != basis.dimension()) {
    throw usage_error("observations have " + std::to_string(X.cols()) + " variables but the basis has " +
                      std::to_string(basis.dimension()));
  }
  if (k < 0 || k > basis.rank()) throw usage_error("k must be between 0 and " + std::to_string(basis.rank()));
  const Eigen::RowVectorXd shift = basis.mean.transpose() * basis.components.leftCols(k);
  Eigen::MatrixXd c = X * basis.components.leftCols(k);
  c.rowwise() -= shift;
  return c;
}

Eigen::MatrixXd reconstruct(const Basis& basis, const Eigen::MatrixXd& coefficients) {
  const Eigen::Index k = coefficients.cols();
  if (k > basis.rank()) throw usage_error("more coefficients than components");
  Eigen::MatrixXd x = coefficients * basis.components.leftCols(k).transpose();
  x.rowwise() += basis.mean.transpose();
  return x;
}

ReconstructionSweep::ReconstructionSweep(const Basis& basis, const Eigen::MatrixXd& X)
    : basis_(basis), coefficients_(project(basis, X, basis.rank())) {
  current_ = Eigen::MatrixXd::Zero(X.rows(), X.cols());
  current_.rowwise() += basis.mean.transpose();
}

const Eigen::MatrixXd& ReconstructionSweep::advance_to(Eigen::Index k) {
  if (k < k_ || k > basis_.rank()) throw usage_error("sweep k must grow and stay <= " + std::to_string(basis_.rank()));
  if (k > k_) {
    current_.noalias() +=
        coefficients_.middleCols(k_, k - k_) * basis_.components.middleCols(k_, k - k_).transpose();
    k_ = k;
  }
  return current_;
}

Eigen::MatrixXd project(const Basis& basis, const ObservationBlocks& blocks, Eigen::Index k) {
  if (k < 0 || k > basis.rank()) throw usage_error("k must be between 0 and " + std::to_string(basis.rank()));
  const Eigen::MatrixXd V = basis.components.leftCols(k);
  const Eigen::RowVectorXd shift = basis.mean.transpose() * V;
  Eigen::MatrixXd c(blocks.rows(), k);
  RowBlock band;
  for (Eigen::Index b = 0; b < blocks.block_count(); ++b) {
    blocks.fill(b, band);
    RowBlock part = band * V;
    part.rowwise() -= shift;
    Eigen::Index at = 0;
    for (const auto& [first, count] : blocks.segments(b)) {
      c.middleRows(first, count) = part.middleRows(at, count);
      at += count;
    }
  }
  return c;
}

}  // namespace pcasweep
