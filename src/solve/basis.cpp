#include "solve/basis.hpp"

#include <algorithm>
#include <cmath>

namespace pcasweep {

void apply_sign_convention(Eigen::MatrixXd& components) {
  for (Eigen::Index j = 0; j < components.cols(); ++j) {
    Eigen::Index best = 0;
    double best_abs = -1.0;
    for (Eigen::Index i = 0; i < components.rows(); ++i) {
      // A relative margin keeps the choice stable against round-off between
      // entries of (nearly) equal magnitude: the first one wins.
      const double a = std::abs(components(i, j));
      if (a > best_abs * (1.0 + 1e-9)) {
        best_abs = a;
        best = i;
      }
    }
    if (components(best, j) < 0.0) components.col(j) *= -1.0;
  }
}

Eigen::VectorXd proportions(const Basis& basis) {
  if (basis.total_variance <= 0.0) return Eigen::VectorXd::Zero(basis.rank());
  return basis.eigenvalues / basis.total_variance;
}

Eigen::VectorXd cumulative_proportions(const Basis& basis) {
  Eigen::VectorXd p = proportions(basis);
  for (Eigen::Index i = 1; i < p.size(); ++i) p(i) += p(i - 1);
  return p;
}

double variance_beyond_rank(const Basis& basis) {
  return std::max(0.0, basis.total_variance - basis.eigenvalues.sum());
}

}  // namespace pcasweep
