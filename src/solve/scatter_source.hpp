// pcasweep/solve/scatter_source.hpp — the narrow view of the data that the exact solver needs.
//
// Contract: a ScatterSource stands for the centred data A_c = A − 1·μᵀ
// (A: N×d observations, μ: d column means) as far as its second moments go:
// N, d, μ, the scatter matrix A_cᵀA_c and its diagonal. It offers no products
// with blocks of vectors, so a source that keeps no observations (ScatterSum)
// can be one without any member that throws. CenteredOperator
// (solve/operator.hpp) extends it with the products the randomized solver
// needs; anything that only needs the scatter (solve_exact, ScatterSum::add)
// takes a ScatterSource, and a ScatterSum cannot be passed where products are
// needed: the compiler refuses it.
#pragma once

#include <Eigen/Dense>

namespace pcasweep {

class ScatterSource {
 public:
  virtual ~ScatterSource() = default;
  // N, the number of observations.
  virtual Eigen::Index rows() const = 0;
  // d, the number of variables.
  virtual Eigen::Index cols() const = 0;
  // μ, the d column means.
  virtual const Eigen::VectorXd& mean() const = 0;
  // Returns the scatter matrix A_cᵀ·A_c, d×d (= (N−1)·covariance).
  virtual Eigen::MatrixXd scatter() const = 0;
  // Returns the d per-variable sums of squares of A_c (the scatter's diagonal),
  // computed directly; their sum is ‖A_c‖²_F = (N−1)·trace(covariance).
  virtual Eigen::VectorXd column_sums_of_squares() const = 0;
};

}  // namespace pcasweep
