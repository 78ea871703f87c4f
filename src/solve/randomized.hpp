// pcasweep/solve/randomized.hpp — truncated PCA by randomized SVD.
//
// Contract: Halko, Martinsson & Tropp (SIAM Review 53(2), 2011), Algorithms
// 4.3/4.4 with re-orthonormalisation between passes, run on the centred-data
// operator only (no centred copy of the data is ever formed):
//   Ω  d×l Gaussian test matrix, l = min(k + p, N, d), from a counter-based
//      generator: bit-identical for a seed whatever the thread count;
//   passes alternate Y = A_c·W (N×l) and Z = A_cᵀ·Q (d×l), each followed by
//      an orthonormalisation (Householder QR);
//   the small SVD of the projected l×l factor gives σ; eigenvalues σ²/(N−1),
//   components = right singular vectors of A_c, sign by apply_sign_convention.
// The run ends after 2q+2 passes for a fixed q, or — the default, q = −1 —
// when none of the leading k eigenvalue estimates moves by more than
// kDefaultTolerance × the total variance between two successive passes
// (each pass yields an estimate: σ(QᵀA_c) after a Aᵀ-pass, σ(A_c·W) after an
// A-pass; both rise monotonically towards σ(A_c)), or at kMaxAdaptivePasses.
// With a sampled subspace as wide as min(N, d) two passes are exact and the
// run stops there. Cost: passes·2·N·d·l flops; memory O((N+d)·l) besides
// the data.
#pragma once

#include <cstdint>
#include <vector>

#include "solve/basis.hpp"
#include "solve/operator.hpp"

namespace pcasweep {

// Adaptive stopping rule: largest change of any of the leading k eigenvalue
// estimates between two successive passes, relative to the total variance.
// Chosen from measurements (docs/performance.md): on the lfw faces (200×625,
// k = 20) it leaves the leading 20 eigenvalues within about 2e-5 relative.
inline constexpr double kDefaultTolerance = 5e-8;
// At most this many products with the data in adaptive mode (= 24.5 power iterations).
inline constexpr int kMaxAdaptivePasses = 51;

struct RandomizedSettings {
  Eigen::Index rank = 0;          // k, components returned (1 <= k <= min(N, d))
  int oversample = 10;            // p
  int power_iterations = -1;      // q >= 0 fixed; -1 adaptive
  std::uint64_t seed = 1;
  double tolerance = kDefaultTolerance;  // adaptive rule only
  int max_passes = kMaxAdaptivePasses;   // adaptive rule only
};

// op: N×d centred data, N >= 2. Returns a Basis with r = k components and the
// randomized fields filled (see basis.hpp). Throws Error(data) for N < 2,
// Error(usage) for k outside 1..min(N, d) or negative p.
Basis solve_randomized(const CenteredOperator& op, const RandomizedSettings& settings);

// Standard normal samples: entry i of the column-major rows×cols matrix is a
// pure function of (seed, i) (Box–Muller on a SplitMix64 hash of the counter).
// Returns rows×cols.
Eigen::MatrixXd gaussian_matrix(Eigen::Index rows, Eigen::Index cols, std::uint64_t seed);

// M: m×l, m >= l. Replaces M by Q (m×l, orthonormal columns) and returns R
// (l×l upper triangular) with M = Q·R, by Householder QR (blocked, Eigen).
// This is what the solver uses: measured faster here than CholeskyQR2 (see
// docs/performance.md), and it needs no fallback for rank-deficient blocks.
Eigen::MatrixXd orthonormalize(Eigen::MatrixXd& M);

// The same by CholeskyQR2 (two rounds of Gram → Cholesky → triangular solve),
// kept for the measurement in pcasweep-bench; falls back to Householder when
// the block is too ill-conditioned for Cholesky and then sets *fell_back.
Eigen::MatrixXd orthonormalize_cholesky_qr2(Eigen::MatrixXd& M, bool* fell_back = nullptr);

}  // namespace pcasweep
