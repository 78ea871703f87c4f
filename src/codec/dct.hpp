// pcasweep/codec/dct.hpp — the fixed DCT-II basis, the baseline the learned basis must beat.
//
// Contract: the orthonormal DCT-II of length n is the n×n matrix
//   C[j, u] = a_u · cos(π·(2j + 1)·u / (2n)),  a_0 = √(1/n), a_u = √(2/n) for u > 0
// whose column u is the u-th basis vector (so C·Cᵀ = I; scipy.fft.dct(x, norm="ortho")
// = Cᵀ·x). For a ph×pw patch with variable order (row, column, channel) as in
// PatchLayout, the 2-D basis vector of frequencies (u, v) on channel ch is
// C_ph[:, u] ⊗ C_pw[:, v] ⊗ e_ch: column index (u·pw + v)·c + ch, where c is the
// number of channels in one observation (channels for joint colour, 1 otherwise).
// No sign convention is applied: the columns are exactly the DCT-II vectors.
//
// Ordering by the data: a learned basis is sorted by eigenvalue, the DCT by the
// data's coefficient variance λ_j = c_jᵀ·S·c_j/(N−1) (S the scatter, d×d), so
// that "the first k columns" means the same thing for both. The sort is
// stable: columns of equal variance keep their frequency order. This one
// ordering serves `fit --transform dct` (dct_basis.hpp) and the coder's DCT
// (image_codec.hpp), so the two can never disagree on which column comes first.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <vector>

namespace pcasweep {

// n ≥ 1. Returns C, n×n, orthonormal DCT-II basis vectors as columns.
Eigen::MatrixXd dct_ii_matrix(int n);

// patch_height, patch_width ≥ 1, channels ≥ 1 (per observation). Returns the
// d×d basis, d = patch_height·patch_width·channels, columns in natural frequency order.
Eigen::MatrixXd patch_dct_basis(int patch_height, int patch_width, int channels);

// scatter: S, d×d, Σ (x − x̄)(x − x̄)ᵀ over the observations; dof: N − 1 (use 1
// when N ≤ 1); columns: d×m. Returns the m coefficient variances
// max(0, c_jᵀ·S·c_j)/dof.
Eigen::VectorXd dct_coefficient_variances(const Eigen::MatrixXd& scatter, double dof, const Eigen::MatrixXd& columns);

// The DCT-II columns ordered by decreasing coefficient variance.
struct OrderedDct {
  Eigen::MatrixXd columns;           // d×m, columns[:, j] = all[:, order[j]]
  Eigen::VectorXd variances;         // m, decreasing: variances(j) = given variance of order[j]
  std::vector<std::uint32_t> order;  // m natural-order column indices (the container's component index)
};

// all: d×m basis columns (patch_dct_basis); variances: m values, one per column.
// Returns the columns stably sorted by decreasing variance (ties keep their
// natural order). Throws nothing.
OrderedDct order_dct_by_variance(const Eigen::MatrixXd& all, const Eigen::VectorXd& variances);

}  // namespace pcasweep
