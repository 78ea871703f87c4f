// pcasweep/solve/randomized_detail.hpp — the randomized solver's two schemes and their error figures (internal).
//
// Contract: solve_randomized (randomized.cpp) checks the settings, fills the
// Basis's moments and the report's common fields, and hands the rest to one of
// two schemes, each in its own file and each a short list of named steps:
//  - subspace_iteration (power_scheme.cpp): fixed q, HMT Algorithm 4.4;
//  - block_krylov (block_krylov.cpp): the adaptive default.
// Both fill out.basis.components and .eigenvalues (r = k, decreasing) and the
// scheme's fields of out.report (scheme, passes, converged, changes, residual,
// gap); they throw only what the operator's products or the eigensolver throw.
// The error figures both report come from the three helpers below
// (randomized_error.cpp). Shapes: op is N×d; k <= l <= min(N, d).
#pragma once

#include <vector>

#include "solve/randomized.hpp"

namespace pcasweep::detail {

// Relative rounding of a sum of squared products of `op` against ‖A_c‖²_F:
// Higham's γ_n for double products (n = N + d), the operator's own
// unit_roundoff() for single ones. Returns a fraction (> 0).
double rounding_level(const CenteredOperator& op);

// Sets report.subspace_residual = (‖A_c‖²_F − captured)/(N−1), clamped below to
// report.residual_floor = rounding_level(op)·‖A_c‖²_F/(N−1). frobenius2 = ‖A_c‖²_F,
// captured = ‖P·A_c‖²_F of the sampled subspace.
void set_residual(SolveReport& report, double frobenius2, double captured, const CenteredOperator& op);

// errors: the rank-k error² of successive estimates (oldest first). Returns the
// estimated relative excess of the last one's error over the optimum
// (√(E/(E − remaining)) − 1, Aitken's extrapolation), 0 when the last step is
// at round-off, NaN with fewer than 3 estimates or steps that do not shrink.
double extrapolated_gap(const std::vector<double>& errors, double frobenius2);

// Fixed q (HMT Algorithm 4.4): 2q + 2 passes; with q = 0 and l = min(N, d) exact.
// op: N×d; k components out of an l-wide sample; frobenius2 = ‖A_c‖²_F.
void subspace_iteration(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, int power_iterations,
                        std::uint64_t seed, double frobenius2, Solution& out);

// Adaptive: randomized block Krylov with blocks of width l, stopping by
// settings.tolerance or settings.max_passes. op: N×d; frobenius2 = ‖A_c‖²_F.
void block_krylov(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, const RandomizedSettings& settings,
                  double frobenius2, Solution& out);

}  // namespace pcasweep::detail
