// The DCT ordered by the data and the Gaussian R(D) curve (codec/dct.hpp,
// codec/dct_basis.hpp, codec/gaussian_rd.hpp).
// Sources: reverse water-filling, Cover & Thomas, Elements of Information Theory,
// §10.3.3 (values below worked by hand); the DCT ordering's stability is the
// header's contract.
#include <doctest/doctest.h>

#include <cmath>

#include "codec/dct.hpp"
#include "codec/dct_basis.hpp"
#include "codec/gaussian_rd.hpp"

using namespace pcasweep;

TEST_CASE("DCT ordering: decreasing variance, ties keep their frequency order") {
  const Eigen::MatrixXd all = patch_dct_basis(2, 2, 1);
  Eigen::VectorXd v(4);
  v << 1.0, 5.0, 1.0, 5.0;
  const OrderedDct o = order_dct_by_variance(all, v);
  CHECK(o.order == std::vector<std::uint32_t>{1, 3, 0, 2});
  CHECK(o.variances(0) == 5.0);
  CHECK(o.variances(3) == 1.0);
  for (Eigen::Index j = 0; j < 4; ++j) CHECK(o.columns.col(j) == all.col(o.order[std::size_t(j)]));
}

TEST_CASE("DCT basis: eigenvalues are the data's coefficient variances, sorted") {
  // Scatter of 11 observations (dof 10) built as a sum of outer products.
  Eigen::MatrixXd x(11, 4);
  for (int i = 0; i < 11; ++i)
    for (int j = 0; j < 4; ++j) x(i, j) = std::sin(1.3 * i + 0.7 * j * j) * (j + 1);
  const Eigen::VectorXd mean = x.colwise().mean().transpose();
  const Eigen::MatrixXd centred = x.rowwise() - mean.transpose();
  const Eigen::MatrixXd scatter = centred.transpose() * centred;
  PatchOptions patch;
  patch.patch_height = patch.patch_width = 2;
  const Basis b = dct_basis(mean, scatter, 11, patch, 1);
  CHECK(b.rank() == 4);
  CHECK(b.total_variance == doctest::Approx(scatter.trace() / 10.0));
  for (Eigen::Index j = 0; j < 4; ++j) {
    const Eigen::VectorXd c = centred * b.components.col(j);
    CHECK(b.eigenvalues(j) == doctest::Approx(c.squaredNorm() / 10.0));
    if (j > 0) CHECK(b.eigenvalues(j) <= b.eigenvalues(j - 1));
  }
}

TEST_CASE("Gaussian R(D): hand-worked points of reverse water-filling") {
  // λ = {100, 1}, d = 2, L = √10 so that θ = 10^(1 − p/10): θ = 1 at 10 dB, 0.1 at 20 dB.
  Eigen::VectorXd ev(2);
  ev << 100.0, 1.0;
  const auto curve = gaussian_rd_curve(ev, 101.0, 2, std::sqrt(10.0), 10, 20);
  REQUIRE(curve.size() == 11);
  // 10 dB: D = (1 + 1)/2 = 1, R = ½·log2(100), only the first component coded.
  CHECK(curve.front().psnr_db == doctest::Approx(10.0));
  CHECK(curve.front().bits_per_observation == doctest::Approx(0.5 * std::log2(100.0)));
  CHECK(curve.front().coded == 1);
  // 20 dB: D = (0.1 + 0.1)/2, R = ½·log2(1000) + ½·log2(10) = ½·log2(10⁴), both coded.
  CHECK(curve.back().psnr_db == doctest::Approx(20.0));
  CHECK(curve.back().bits_per_observation == doctest::Approx(0.5 * std::log2(1e4)));
  CHECK(curve.back().coded == 2);
  // Variance beyond the computed eigenvalues (tail 2) is charged to distortion:
  // at 10 dB D = (1 + 1 + 2)/2 = 2, PSNR = 10·log10(10/2).
  const auto truncated = gaussian_rd_curve(ev, 103.0, 2, std::sqrt(10.0), 10, 10);
  REQUIRE(truncated.size() == 1);
  CHECK(truncated[0].psnr_db == doctest::Approx(10.0 * std::log10(5.0)));
  // θ ≥ every λ gives no rate: such points are left out.
  CHECK(gaussian_rd_curve(ev, 101.0, 2, std::sqrt(10.0), -12, -10).empty());
}
