// Tests for solve/exact: the covariance eigensolver against identities of PCA
// that hold for any data, computed here independently of the solver.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>

#include "../support/synthetic.hpp"
#include "core/error.hpp"
#include "io/image.hpp"
#include "observe/patches.hpp"
#include "reconstruct/reconstruct.hpp"
#include "solve/exact.hpp"
#include "solve/operator.hpp"
#include "../support/reference_decompositions.hpp"

using namespace pcasweep;
using pcasweep::testing::gray_as_rgb;
using pcasweep::testing::scene_image;

namespace {

double relative_difference(double a, double b) {
  const double scale = std::max(std::abs(a), std::abs(b));
  return scale == 0.0 ? 0.0 : std::abs(a - b) / scale;
}

// Joint 8x8 patches of a synthetic scene: X is N×d.
Eigen::MatrixXd patch_observations(const Image& image, int patch = 8, int stride = 0) {
  PatchLayout layout(image, {patch, patch, stride, stride, ColourMode::joint}, "synthetic.png");
  return layout.observe({image});
}

// The sample covariance computed the textbook way (two passes, divide by N−1),
// without the operator or the solver: d×d.
Eigen::MatrixXd textbook_covariance(const Eigen::MatrixXd& X) {
  const Eigen::RowVectorXd mean = X.colwise().mean();
  const Eigen::MatrixXd centred = X.rowwise() - mean;
  return centred.transpose() * centred / double(X.rows() - 1);
}

}  // namespace

// Source: the PCA total-variance identity (common practice): the eigenvalues
// of the covariance sum to its trace, and the trace is the sum of the
// per-variable sample variances. Required to 1e-9 relative by issue 2.
TEST_CASE("exact: sum of eigenvalues = trace of covariance = sum of per-variable variances") {
  for (int channels : {1, 3, 4}) {
    for (int bits : {8, 16}) {
      CAPTURE(channels);
      CAPTURE(bits);
      // 150x120: N = 19·15 = 285 patches, more than d (at most 256).
      const Image image = scene_image(150, 120, channels, bits, 3);
      const Eigen::MatrixXd X = patch_observations(image);
      DenseOperator op(X);
      const auto [basis, basis_report] = solve_exact(op);
      REQUIRE(basis.complete());
      const Eigen::MatrixXd S = textbook_covariance(X);
      double per_variable = 0.0;  // Σ_j var(x_j), each by its own two-pass formula
      for (Eigen::Index j = 0; j < X.cols(); ++j) {
        const double m = X.col(j).mean();
        per_variable += (X.col(j).array() - m).square().sum() / double(X.rows() - 1);
      }
      const double eigen_sum = basis.eigenvalues.sum();
      CHECK(relative_difference(eigen_sum, S.trace()) <= 1e-9);
      CHECK(relative_difference(S.trace(), per_variable) <= 1e-9);
      CHECK(relative_difference(basis.total_variance, per_variable) <= 1e-9);
      CHECK(relative_difference(eigen_sum, basis.total_variance) <= 1e-9);
      CHECK(basis.observation_count == X.rows());
      CHECK(basis_report.solver == "exact");
    }
  }
}

// Source: definition of PCA (common practice): components are orthonormal
// eigenvectors of the covariance, S·v = λ·v, sorted by decreasing λ ≥ 0; plus
// the sign convention stated in solve/basis.hpp (largest-magnitude entry positive).
TEST_CASE("exact: orthonormal eigenvectors, decreasing eigenvalues, deterministic sign") {
  const Image image = scene_image(53, 40, 3, 8, 5);
  const Eigen::MatrixXd X = patch_observations(image, 6, 3);
  DenseOperator op(X);
  const auto [basis, basis_report] = solve_exact(op);
  const Eigen::Index d = basis.dimension();
  REQUIRE(basis.components.rows() == d);
  REQUIRE(basis.components.cols() == d);
  const Eigen::MatrixXd gram = basis.components.transpose() * basis.components;
  CHECK((gram - Eigen::MatrixXd::Identity(d, d)).cwiseAbs().maxCoeff() < 1e-10);
  const Eigen::MatrixXd S = textbook_covariance(X);
  const double largest = basis.eigenvalues(0);
  // ‖S·V − V·Λ‖ relative to λ_max.
  const Eigen::MatrixXd residual = S * basis.components - basis.components * basis.eigenvalues.asDiagonal();
  CHECK(residual.cwiseAbs().maxCoeff() / largest < 1e-10);
  for (Eigen::Index i = 1; i < d; ++i) CHECK(basis.eigenvalues(i) <= basis.eigenvalues(i - 1));
  CHECK(basis.eigenvalues.minCoeff() >= 0.0);
  for (Eigen::Index j = 0; j < d; ++j) {
    Eigen::Index at = 0;
    basis.components.col(j).cwiseAbs().maxCoeff(&at);
    CHECK(basis.components(at, j) > 0.0);
  }
  // The mean is the column mean of X.
  CHECK((basis.mean.transpose() - X.colwise().mean()).cwiseAbs().maxCoeff() < 1e-9);
}

// Source: the link between PCA and the SVD (common practice): the covariance's
// eigenvalues are the squared singular values of the centred data over N−1.
// Computed here with Eigen's BDCSVD on the explicitly centred matrix, a path
// that shares nothing with the solver (no scatter matrix, no eigensolver).
TEST_CASE("exact: eigenvalues equal squared singular values of the centred data over N-1") {
  const Image image = scene_image(45, 37, 3, 8, 9);
  const Eigen::MatrixXd X = patch_observations(image, 4, 2);
  DenseOperator op(X);
  const auto [basis, basis_report] = solve_exact(op);
  const Eigen::MatrixXd centred = X.rowwise() - X.colwise().mean();
  const testing::ReferenceSvd svd = testing::reference_svd(centred);
  const Eigen::VectorXd from_svd = svd.singularValues().array().square() / double(X.rows() - 1);
  REQUIRE(from_svd.size() == basis.rank());
  const double largest = from_svd(0);
  int compared = 0;
  for (Eigen::Index i = 0; i < from_svd.size(); ++i) {
    CAPTURE(i);
    // Eigenvalues far below λ_max carry absolute round-off ~ε·λ_max from either method.
    if (from_svd(i) > 1e-6 * largest) {
      CHECK(relative_difference(basis.eigenvalues(i), from_svd(i)) <= 1e-9);
      ++compared;
    } else {
      CHECK(std::abs(basis.eigenvalues(i) - from_svd(i)) <= 1e-9 * largest);
    }
  }
  CHECK(compared > from_svd.size() / 2);
}

// Source: Eckart–Young–Mirsky theorem (Eckart & Young 1936; Mirsky 1960): the
// rank-k truncation through the top k principal components leaves a squared
// Frobenius error of the centred data equal to the sum of the discarded squared
// singular values, i.e. (N−1)·Σ_{i>k} λ_i. Checked before any rounding, through
// project() and reconstruct(), to 1e-9 relative (issue 2).
TEST_CASE("exact: in-sample squared error at k equals (N-1) times the discarded eigenvalues") {
  for (int channels : {1, 3}) {
    CAPTURE(channels);
    // 160x128: N = 320 patches, more than d (64 or 192).
    const Image image = scene_image(160, 128, channels, 8, 21);
    const Eigen::MatrixXd X = patch_observations(image);
    DenseOperator op(X);
    const auto [basis, basis_report] = solve_exact(op);
    const Eigen::Index d = basis.dimension(), n = X.rows();
    REQUIRE(n > d);
    for (Eigen::Index k = 1; k < d; ++k) {
      CAPTURE(k);
      const Eigen::MatrixXd C = project(basis, X, k);
      REQUIRE(C.rows() == n);
      REQUIRE(C.cols() == k);
      const Eigen::MatrixXd Xk = reconstruct(basis, C);
      const double squared_error = (X - Xk).squaredNorm();
      const double discarded = basis.eigenvalues.tail(d - k).sum();
      CHECK(relative_difference(squared_error, double(n - 1) * discarded) <= 1e-9);
    }
    // At k = d nothing is discarded: only round-off remains.
    const Eigen::MatrixXd Xd = reconstruct(basis, project(basis, X, d));
    CHECK((X - Xd).cwiseAbs().maxCoeff() < 1e-9);
  }
}

// Source: perfect multicollinearity (common practice): when variables are exact
// linear combinations of others the covariance is singular, one zero eigenvalue
// per redundant variable. A gray image stored as RGB (R = G = B) makes two of
// every three joint-patch variables copies of the third: exactly 2/3 of the
// eigenvalues are zero, and the others are 3× the gray image's own eigenvalues
// (the covariance of (x, x, x) is the gray covariance ⊗ the all-ones 3×3,
// whose only non-zero eigenvalue is 3). The image goes through a real PNG
// encode/decode so that "saved as RGB" is taken literally.
TEST_CASE("exact: a gray image saved as RGB has exactly 2/3 zero joint-patch eigenvalues") {
  // 121x89 (odd, mirror-padded to 128x96): N = 16·12 = 192 patches > 64.
  const Image gray = scene_image(121, 89, 1, 8, 17);
  const Image rgb = decode_image(encode_png(gray_as_rgb(gray)), "gray-as-rgb.png");
  REQUIRE(rgb.channels == 3);
  const Eigen::MatrixXd Xg = patch_observations(gray);
  const Eigen::MatrixXd Xc = patch_observations(rgb);
  DenseOperator gray_op(Xg), rgb_op(Xc);
  const auto [g, g_report] = solve_exact(gray_op);
  const auto [c, c_report] = solve_exact(rgb_op);
  REQUIRE(c.dimension() == 192);
  const double largest = c.eigenvalues(0);
  int zero = 0;
  for (Eigen::Index i = 0; i < c.rank(); ++i) zero += c.eigenvalues(i) < 1e-9 * largest;
  CHECK(zero == 128);  // 2/3 of 192
  // ... and the first 64 are clearly non-zero (the noise makes the gray covariance full rank).
  CHECK(c.eigenvalues(63) > 1e-6 * largest);
  for (Eigen::Index i = 0; i < 64; ++i) {
    CAPTURE(i);
    CHECK(relative_difference(c.eigenvalues(i), 3.0 * g.eigenvalues(i)) <= 1e-9);
  }
  // The total variance is 3× the gray one too.
  CHECK(relative_difference(c.total_variance, 3.0 * g.total_variance) <= 1e-12);
}

// Source: the covariance needs two observations (N − 1 > 0); solve/exact.hpp contract.
TEST_CASE("exact: one observation is refused") {
  const Eigen::MatrixXd X = Eigen::MatrixXd::Constant(1, 4, 3.0);
  DenseOperator op(X);
  CHECK_THROWS_AS(solve_exact(op), Error);
}
