// tests/support/spectra.hpp — test matrices with a chosen singular spectrum.
//
// Contract: pure functions of their arguments (gaussian_matrix is counter-
// based), so a test sees the same matrix on every machine and thread count.
#pragma once

#include <Eigen/Dense>
#include <Eigen/QR>
#include <cmath>
#include <cstdint>

#include "solve/randomized.hpp"

namespace pcasweep::testing {

// Returns the count-vector scale·ratio^i, i = 0..count−1 (a geometric spectrum).
inline Eigen::VectorXd geometric_spectrum(Eigen::Index count, double scale, double ratio) {
  return Eigen::VectorXd::LinSpaced(count, 0.0, double(count - 1)).unaryExpr([&](double i) {
    return scale * std::pow(ratio, i);
  });
}

// N×d matrix U·diag(s)·Vᵀ with random orthonormal U (N×r), V (d×r), r = s.size()
// (from Householder QR of Gaussians seeded `seed` and seed + 1), plus column
// means rising linearly from `low` to `high`, so a solver has a mean to remove.
inline Eigen::MatrixXd with_spectrum(Eigen::Index n, Eigen::Index d, const Eigen::VectorXd& s, std::uint64_t seed,
                                     double low = 10.0, double high = 20.0) {
  const Eigen::Index r = s.size();
  Eigen::HouseholderQR<Eigen::MatrixXd> qu(gaussian_matrix(n, r, seed)), qv(gaussian_matrix(d, r, seed + 1));
  const Eigen::MatrixXd u = qu.householderQ() * Eigen::MatrixXd::Identity(n, r);
  const Eigen::MatrixXd v = qv.householderQ() * Eigen::MatrixXd::Identity(d, r);
  Eigen::MatrixXd a = u * s.asDiagonal() * v.transpose();
  a.rowwise() += Eigen::RowVectorXd::LinSpaced(d, low, high);
  return a;
}

// A (N×d) with its column means removed. Returns N×d.
inline Eigen::MatrixXd centred(const Eigen::MatrixXd& a) { return a.rowwise() - a.colwise().mean(); }

}  // namespace pcasweep::testing
