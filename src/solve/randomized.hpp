// pcasweep/solve/randomized.hpp — truncated PCA by randomized SVD.
//
// Contract: truncated PCA of the centred-data operator (no centred copy of
// the data is ever formed), from a Gaussian test matrix Ω (d×l,
// l = min(k + p, N, d)) drawn by a counter-based generator: bit-identical for
// a seed whatever the thread count. Eigenvalues σ²/(N−1), components = right
// singular vectors of A_c, sign by apply_sign_convention. Two schemes:
//  - fixed q (power_iterations >= 0): Halko, Martinsson & Tropp (SIAM Review
//    53(2), 2011), Algorithms 4.3/4.4: 2q + 2 passes alternating Y = A_c·W
//    (N×l) and Z = A_cᵀ·Q (d×l), each orthonormalised (orthonormalize), then
//    the small SVD of the projected l×l factor;
//  - adaptive (the default, q = −1): randomized block Krylov iteration (Musco
//    & Musco, NeurIPS 2015) with blocks of width l and Rayleigh–Ritz on the
//    whole Krylov space after every block; it stops when the leading k
//    eigenvalue estimates settle (their next relative move, extrapolated from
//    the last two, is below `tolerance`), when the space holds all of A_c, or
//    at `max_passes`. docs/performance.md gives the measurements behind it.
// (The schemes themselves, as named steps: solve/randomized_detail.hpp.)
// A sample as wide as min(N, d) is exact in two passes and stops there.
// Products go through the operator in its own precision (double, or float32
// for SingleOperator, whose paired products block Krylov then asks for in one
// sweep, except for a block it guesses to be the last, which needs only one);
// everything else is double, and the noise floors scale with the operator's
// unit_roundoff().
// Cost: passes·2·N·d·l flops plus, for block Krylov, O(s·m·l + N·l²) for the
// Gram matrix and projections (m = Krylov width, s = min(N, d)); memory: the
// data plus O((N + d)·l) for the power scheme; for block Krylov O(N·l + d·m)
// when d <= N and O(N·m + d·m) otherwise (m <= l·(max_passes + 1)/2).
#pragma once

#include <cstdint>
#include <vector>

#include "solve/operator.hpp"
#include "solve/solve_report.hpp"

namespace pcasweep {

// Adaptive stopping rule: the extrapolated next move of any of the leading k
// eigenvalue estimates, relative to that eigenvalue (never to less than 1e-9
// of the total variance). Chosen from measurements (docs/performance.md).
inline constexpr double kDefaultTolerance = 1e-6;
// At most this many products with the data in adaptive mode (13 Krylov blocks).
inline constexpr int kMaxAdaptivePasses = 25;

struct RandomizedSettings {
  Eigen::Index rank = 0;          // k, components returned (1 <= k <= min(N, d))
  int oversample = 10;            // p
  int power_iterations = -1;      // q >= 0 fixed; -1 adaptive
  std::uint64_t seed = 1;
  double tolerance = kDefaultTolerance;  // adaptive rule only
  int max_passes = kMaxAdaptivePasses;   // adaptive rule only
};

// op: N×d centred data, N >= 2. Returns a Basis with r = k components and a
// report with the randomized fields filled (see solve_report.hpp). Throws Error(data) for N < 2,
// Error(usage) for k outside 1..min(N, d) or negative p.
Solution solve_randomized(const CenteredOperator& op, const RandomizedSettings& settings);

// Standard normal samples: entry i of the column-major rows×cols matrix is a
// pure function of (seed, i) (Box–Muller on a SplitMix64 hash of the counter).
// Returns rows×cols.
Eigen::MatrixXd gaussian_matrix(Eigen::Index rows, Eigen::Index cols, std::uint64_t seed);

// M: m×l, m >= l. Replaces M by Q (m×l, orthonormal columns) and returns R
// (l×l upper triangular) with M = Q·R. By CholeskyQR2 (two rounds of Gram →
// Cholesky → triangular solve: BLAS-3 work, measured faster than Householder,
// docs/performance.md); when the block is too ill-conditioned for it (a rank-
// deficient sample, say) by Householder QR instead, and then sets *fell_back.
Eigen::MatrixXd orthonormalize(Eigen::MatrixXd& M, bool* fell_back = nullptr);

// The same by Householder QR (blocked, Eigen) always: orthonormalize's
// fallback, and its comparison in pcasweep-bench.
Eigen::MatrixXd orthonormalize_householder(Eigen::MatrixXd& M);

}  // namespace pcasweep
