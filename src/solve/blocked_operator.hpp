// pcasweep/solve/blocked_operator.hpp — the centred-data operator over
// observations that are made block by block, never held whole.
//
// Contract: given an ObservationBlocks source (observe/observation_blocks.hpp:
// X made a block of rows at a time), a BlockedOperator is the
// CenteredOperator of that X: the mean, the scatter and every product are
// accumulated block by block, each thread working on whole blocks with its
// own partial sums added in a fixed order, so memory is O(threads·block·d)
// plus the products' own N×l or d×l results, and a given thread count gives
// the same numbers every run. The mean is one pass over the blocks; the
// sums of squares and the scatter (centred by that mean in each block, no
// AᵀA − Nμμᵀ cancellation) one more, made when first asked for and kept.
// Products make one pass each; apply_normal makes both of its products in one
// pass (fuses_normal_products() is true), since making a block costs as much
// as a product with it. Scalar float runs the products in single precision
// (as SingleOperator does; centring terms and sums in double).
#pragma once

#include <Eigen/Dense>

#include "observe/observation_blocks.hpp"
#include "solve/operator.hpp"

namespace pcasweep {

template <class Scalar>
class BlockedOperator : public CenteredOperator {
 public:
  // source: must outlive the operator. Makes one pass for the mean.
  explicit BlockedOperator(const ObservationBlocks& source);

  Eigen::Index rows() const override { return source_.rows(); }
  Eigen::Index cols() const override { return source_.cols(); }
  const Eigen::VectorXd& mean() const override { return mean_; }
  Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const override;
  Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const override;
  // d×d, computed on the first call (one pass) and kept.
  Eigen::MatrixXd scatter() const override;
  // d, computed with the scatter (one pass) and kept.
  Eigen::VectorXd column_sums_of_squares() const override;
  double unit_roundoff() const override;
  Eigen::MatrixXd apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const override;
  bool fuses_normal_products() const override { return true; }
  // ‖A‖_F/‖A_c‖_F (SingleOperator::offset_ratio's meaning); infinite for constant data.
  double offset_ratio() const;

 private:
  void compute_scatter() const;
  const ObservationBlocks& source_;
  Eigen::VectorXd mean_;
  mutable bool have_scatter_ = false;
  mutable Eigen::MatrixXd scatter_;
  mutable Eigen::VectorXd sums_;
};

extern template class BlockedOperator<double>;
extern template class BlockedOperator<float>;

}  // namespace pcasweep
