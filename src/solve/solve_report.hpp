// pcasweep/solve/solve_report.hpp — how a basis was solved, apart from the basis.
//
// Contract: a SolveReport says which solver ran, why, in what precision its
// products with the data ran, and, for the randomized solver, every figure
// of its run and its a-posteriori error estimates. It describes a solve; the
// Basis (solve/basis.hpp) is the value the solve produced, and can be saved,
// loaded and reused without it. solve() returns both in a Solution.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <string>

#include "solve/basis.hpp"

namespace pcasweep {

struct SolveReport {
  std::string solver;                // "exact" or "randomized" ("loaded" or "dct" for a basis from elsewhere)
  std::string reason;                // why this solver ran, in words
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
};

// What a solver returns: the basis and how it was found.
struct Solution {
  Basis basis;
  SolveReport report;
};

}  // namespace pcasweep
