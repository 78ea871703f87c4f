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
#pragma once

#include <Eigen/Dense>

namespace pcasweep {

// n ≥ 1. Returns C, n×n, orthonormal DCT-II basis vectors as columns.
Eigen::MatrixXd dct_ii_matrix(int n);

// patch_height, patch_width ≥ 1, channels ≥ 1 (per observation). Returns the
// d×d basis, d = patch_height·patch_width·channels, columns in natural frequency order.
Eigen::MatrixXd patch_dct_basis(int patch_height, int patch_width, int channels);

}  // namespace pcasweep
