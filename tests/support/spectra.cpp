// tests/support/spectra.cpp — see spectra.hpp.
#include "spectra.hpp"

#include <Eigen/QR>
#include <cmath>

#include "solve/randomized.hpp"

namespace pcasweep::testing {

Eigen::VectorXd geometric_spectrum(Eigen::Index count, double scale, double ratio) {
  return Eigen::VectorXd::LinSpaced(count, 0.0, double(count - 1)).unaryExpr([&](double i) {
    return scale * std::pow(ratio, i);
  });
}

Eigen::MatrixXd orthonormal_columns(const Eigen::MatrixXd& g) {
  const Eigen::HouseholderQR<Eigen::MatrixXd> qr(g);
  return qr.householderQ() * Eigen::MatrixXd::Identity(g.rows(), g.cols());
}

Eigen::MatrixXd with_spectrum(Eigen::Index n, Eigen::Index d, const Eigen::VectorXd& s, std::uint64_t seed,
                              double low, double high) {
  const Eigen::MatrixXd u = orthonormal_columns(gaussian_matrix(n, s.size(), seed));
  const Eigen::MatrixXd v = orthonormal_columns(gaussian_matrix(d, s.size(), seed + 1));
  Eigen::MatrixXd a = u * s.asDiagonal() * v.transpose();
  a.rowwise() += Eigen::RowVectorXd::LinSpaced(d, low, high);
  return a;
}

Eigen::MatrixXd centred(const Eigen::MatrixXd& a) { return a.rowwise() - a.colwise().mean(); }

}  // namespace pcasweep::testing
