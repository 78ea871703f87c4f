// pcasweep/solve/operator.hpp — the only view of the data a solver gets.
//
// Contract: a CenteredOperator stands for the centred data matrix
// A_c = A − 1·μᵀ (A: N×d observations, μ: d column means) without ever
// forming it. Solvers ask for products with blocks of vectors and for the
// scatter matrix; in-memory data, streamed files and distributed shards are
// then different operators behind the same solvers.
#pragma once

#include <Eigen/Dense>

namespace pcasweep {

class CenteredOperator {
 public:
  virtual ~CenteredOperator() = default;
  // N, the number of observations.
  virtual Eigen::Index rows() const = 0;
  // d, the number of variables.
  virtual Eigen::Index cols() const = 0;
  // μ, the d column means.
  virtual const Eigen::VectorXd& mean() const = 0;
  // Ω: d×l. Returns A_c·Ω, N×l.
  virtual Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const = 0;
  // Y: N×l. Returns A_cᵀ·Y, d×l.
  virtual Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const = 0;
  // Returns the scatter matrix A_cᵀ·A_c, d×d (= (N−1)·covariance).
  virtual Eigen::MatrixXd scatter() const = 0;
  // Returns the d per-variable sums of squares of A_c (the scatter's diagonal),
  // computed directly; their sum is ‖A_c‖²_F = (N−1)·trace(covariance).
  virtual Eigen::VectorXd column_sums_of_squares() const = 0;
};

// The operator over an observation matrix held in memory.
class DenseOperator : public CenteredOperator {
 public:
  // X: N×d, kept by reference: it must outlive the operator. N >= 1.
  explicit DenseOperator(const Eigen::MatrixXd& X);

  Eigen::Index rows() const override { return X_.rows(); }
  Eigen::Index cols() const override { return X_.cols(); }
  const Eigen::VectorXd& mean() const override { return mean_; }
  Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const override;
  Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const override;
  Eigen::MatrixXd scatter() const override;
  Eigen::VectorXd column_sums_of_squares() const override;

 private:
  const Eigen::MatrixXd& X_;
  Eigen::VectorXd mean_;
};

}  // namespace pcasweep
