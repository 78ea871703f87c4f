// pcasweep/codec/dct_basis.hpp — the DCT-II as a Basis, for `fit --transform dct`.
//
// Contract: the fixed DCT-II columns of a patch (dct.hpp) packaged like a
// learned basis, so a basis file can hold either: components are the DCT-II
// columns ordered by the data's coefficient variance (order_dct_by_variance),
// eigenvalues are those variances, the mean and per-variable variances are the
// data's. Pure arithmetic on moments already accumulated; no files.
#pragma once

#include <Eigen/Dense>

#include "observe/patches.hpp"
#include "solve/basis.hpp"

namespace pcasweep {

// mean: d, the observations' mean; scatter: d×d, Σ (x − mean)(x − mean)ᵀ over the
// N = observations rows; patch: the patch geometry (d = ph·pw·c); channels: the
// image's channels (c = channels for joint colour, 1 otherwise). Returns the d×d
// basis (rank d; the caller names it "dct" in its SolveReport). Divides by N − 1 (by 1 when N ≤ 1). Throws nothing.
Basis dct_basis(const Eigen::VectorXd& mean, const Eigen::MatrixXd& scatter, Eigen::Index observations,
                const PatchOptions& patch, int channels);

}  // namespace pcasweep
