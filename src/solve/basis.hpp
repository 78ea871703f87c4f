// pcasweep/solve/basis.hpp — the result of a solve, as a value.
//
// Contract: components are orthonormal columns sorted by decreasing
// eigenvalue, each with a deterministic sign (its largest-magnitude entry is
// positive; on a tie the first such entry). Eigenvalues are of the sample
// covariance (divide by N−1) in the samples' native units. total_variance is
// the trace of that covariance, computed directly from the data, so it is
// known even when only r < d eigenvalues were computed.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <string>

namespace pcasweep {

struct Basis {
  Eigen::VectorXd mean;          // d
  Eigen::MatrixXd components;    // d×r, orthonormal columns
  Eigen::VectorXd eigenvalues;   // r, decreasing, >= 0
  double total_variance = 0.0;   // trace of the covariance (sum over all d variables)
  Eigen::VectorXd variable_variances;  // d, the covariance's diagonal
  Eigen::Index observation_count = 0;  // N
  std::string solver;            // "exact" or "randomized"
  std::string solver_reason;     // why this solver ran, in words
  std::string precision = "double";  // of the products with the data: "double" or "single"

  // Filled by the randomized solver (solve/randomized.hpp); left as below by exact.
  std::string scheme;            // "block Krylov" (adaptive default) or "power iterations" (fixed q)
  Eigen::Index sample_size = 0;  // l = r + oversample, test vectors actually used (per Krylov block)
  Eigen::Index krylov_width = 0; // block Krylov: columns of the whole Krylov space (0 for power iterations)
  int oversample = 0;            // p
  int passes = 0;                // products with the data (A_c·W or A_cᵀ·Q), 2q+2 for q power iterations
  std::uint64_t seed = 0;        // test-matrix seed
  bool converged = true;         // adaptive rule met its tolerance (false: stopped at the pass cap)
  // Largest move of any of the leading r eigenvalue estimates at the last
  // step, relative to that eigenvalue (block Krylov: never to less than 1e-9
  // of the total variance); NaN when there was no earlier estimate.
  double last_relative_change = 0.0;
  // ‖A_c − P·A_c‖²_F/(N−1), P the projector on the l-dimensional sampled subspace
  // (block Krylov: the span of the l leading Ritz vectors): the variance that
  // subspace misses, = total_variance − Σ of all l captured σ²/(N−1).
  double subspace_residual = 0.0;
  // Rounding floor of that subtraction (Higham's γ_n·‖A_c‖²_F/(N−1), n = N + d);
  // a residual below it is clamped to it and only "≤ floor" is known.
  double residual_floor = 0.0;
  // Estimated relative excess of this basis's rank-r Frobenius error over the
  // optimal rank-r error (√(ours²/optimal²) − 1), extrapolated from the last
  // passes' convergence; 0 for the exact solver, NaN when it cannot be estimated.
  double optimality_gap_estimate = 0.0;

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
