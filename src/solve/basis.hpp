// pcasweep/solve/basis.hpp — the result of a solve, as a value.
//
// Contract: components are orthonormal columns sorted by decreasing
// eigenvalue, each with a deterministic sign (its largest-magnitude entry is
// positive; on a tie the first such entry). Eigenvalues are of the sample
// covariance (divide by N−1) in the samples' native units. total_variance is
// the trace of that covariance, computed directly from the data, so it is
// known even when only r < d eigenvalues were computed. How the basis was
// solved (solver, precision, diagnostics) is kept apart, in a SolveReport
// (solve/solve_report.hpp).
#pragma once

#include <Eigen/Dense>

namespace pcasweep {

struct Basis {
  Eigen::VectorXd mean;          // d
  Eigen::MatrixXd components;    // d×r, orthonormal columns
  Eigen::VectorXd eigenvalues;   // r, decreasing, >= 0
  double total_variance = 0.0;   // trace of the covariance (sum over all d variables)
  Eigen::VectorXd variable_variances;  // d, the covariance's diagonal
  Eigen::Index observation_count = 0;  // N

  Eigen::Index dimension() const { return mean.size(); }
  Eigen::Index rank() const { return eigenvalues.size(); }
  // True when every eigenvalue is known (r == d).
  bool complete() const { return rank() == dimension(); }
};

// Flips each column of `components` (d×r) so its largest-magnitude entry is positive.
void apply_sign_convention(Eigen::MatrixXd& components);

// Proportion of total variance per computed component: eigenvalues / total_variance. Size r.
Eigen::VectorXd proportions(const Basis& basis);

// Cumulative proportion after each computed component. Size r.
Eigen::VectorXd cumulative_proportions(const Basis& basis);

// Variance beyond the computed rank: total_variance − Σ eigenvalues, clamped
// at 0 (0 for a complete basis up to round-off). Returns a scalar in sample units².
double variance_beyond_rank(const Basis& basis);

}  // namespace pcasweep
