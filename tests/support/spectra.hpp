// tests/support/spectra.hpp — test matrices with a chosen singular spectrum.
//
// Contract: pure functions of their arguments (gaussian_matrix is counter-
// based), so a test sees the same matrix on every machine and thread count.
// Defined in spectra.cpp: with_spectrum's Householder QR cost every test file
// that included this header about 5 s of parsing and instantiation.
#pragma once

#include <Eigen/Core>
#include <cstdint>

namespace pcasweep::testing {

// Returns the count-vector scale·ratio^i, i = 0..count−1 (a geometric spectrum).
Eigen::VectorXd geometric_spectrum(Eigen::Index count, double scale, double ratio);

// g: n×r with n >= r, full column rank. Returns n×r: the thin Q of g's Householder QR
// (orthonormal columns spanning g's).
Eigen::MatrixXd orthonormal_columns(const Eigen::MatrixXd& g);

// N×d matrix U·diag(s)·Vᵀ with random orthonormal U (N×r), V (d×r), r = s.size()
// (from Householder QR of Gaussians seeded `seed` and seed + 1), plus column
// means rising linearly from `low` to `high`, so a solver has a mean to remove.
Eigen::MatrixXd with_spectrum(Eigen::Index n, Eigen::Index d, const Eigen::VectorXd& s, std::uint64_t seed,
                              double low = 10.0, double high = 20.0);

// A (N×d) with its column means removed. Returns N×d.
Eigen::MatrixXd centred(const Eigen::MatrixXd& a);

}  // namespace pcasweep::testing
