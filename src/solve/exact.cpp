#include "solve/exact.hpp"

#include "core/error.hpp"
#include "solve/symmetric_eigen.hpp"

namespace pcasweep {

Solution solve_exact(const ScatterSource& source) {
  const Eigen::Index n = source.rows();
  if (n < 2) throw data_error("need at least 2 observations to estimate a covariance, got " + std::to_string(n));
  const double denom = double(n - 1);
  Eigen::MatrixXd covariance = source.scatter() / denom;

  Basis basis;
  basis.mean = source.mean();
  basis.observation_count = n;
  basis.variable_variances = source.column_sums_of_squares() / denom;
  basis.total_variance = basis.variable_variances.sum();

  SymmetricEigen eig = symmetric_eigen(covariance, true);
  basis.eigenvalues = std::move(eig.values);
  basis.components = std::move(eig.vectors);
  // Round-off can leave the smallest eigenvalues a hair below zero; a
  // covariance is positive semidefinite, so clamp them to 0.
  basis.eigenvalues = basis.eigenvalues.cwiseMax(0.0);
  apply_sign_convention(basis.components);
  SolveReport report;
  report.solver = "exact";
  return {std::move(basis), std::move(report)};
}

}  // namespace pcasweep
