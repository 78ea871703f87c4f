// Tests for solve/blocked_operator: the centred-data operator over observations
// made block by block (here: one image's patches, observe/patch_blocks.hpp).
// Reference: the definition A_c = A − 1·μᵀ formed explicitly with Eigen on the
// in-memory matrix (the textbook centring of PCA, common practice), and the
// in-memory DenseOperator whose own checks are in exact_test.cpp.
#include <doctest/doctest.h>

#include "../support/synthetic.hpp"
#include "observe/patch_blocks.hpp"
#include "solve/blocked_operator.hpp"
#include "solve/exact.hpp"
#include "solve/randomized.hpp"
#include "solve/solver.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;

namespace {
double relative(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) { return (a - b).norm() / std::max(b.norm(), 1e-300); }
}  // namespace

TEST_CASE("BlockedOperator over patches equals the explicitly centred matrix") {
  struct Case {
    int w, h, c, bits, ph, sy;
    ColourMode colour;
    int band;
  };
  for (const Case& t : {Case{61, 47, 3, 8, 8, 8, ColourMode::joint, 1}, Case{61, 47, 3, 8, 8, 8, ColourMode::channels, 2},
                        Case{45, 39, 1, 16, 6, 3, ColourMode::joint, 3}, Case{45, 39, 4, 8, 5, 5, ColourMode::joint, 0}}) {
    const Image image = scene_image(t.w, t.h, t.c, t.bits, 31);
    const PatchLayout layout(image, {t.ph, t.ph, t.sy, t.sy, t.colour}, "t.png");
    const PatchBlocks blocks(layout, image, t.band);
    const BlockedOperator<double> op(blocks);
    const Eigen::MatrixXd X = layout.observe({image});
    const Eigen::VectorXd mu = X.colwise().mean().transpose();
    Eigen::MatrixXd Ac = X;
    Ac.rowwise() -= mu.transpose();
    CHECK((op.mean() - mu).cwiseAbs().maxCoeff() <= 1e-12 * mu.cwiseAbs().maxCoeff());
    CHECK(relative(op.scatter(), Ac.transpose() * Ac) < 1e-13);
    CHECK(relative(op.column_sums_of_squares(), Ac.colwise().squaredNorm().transpose()) < 1e-13);
    const Eigen::MatrixXd omega = Eigen::MatrixXd::Random(X.cols(), 5);
    const Eigen::MatrixXd y = Eigen::MatrixXd::Random(X.rows(), 4);
    CHECK(relative(op.apply(omega), Ac * omega) < 1e-13);
    CHECK(relative(op.apply_transpose(y), Ac.transpose() * y) < 1e-13);
    Eigen::MatrixXd yy;
    const Eigen::MatrixXd z = op.apply_normal(omega, yy);
    CHECK(relative(yy, Ac * omega) < 1e-13);
    CHECK(relative(z, Ac.transpose() * (Ac * omega)) < 1e-13);
    // Single precision: products within float32 rounding of the centred ones (Higham's
    // γ_n bound for an inner product of length n, with the uncentred magnitudes).
    const BlockedOperator<float> single(blocks);
    const double bound = 4.0 * double(X.cols()) * 0x1p-24 * (X.norm() * omega.norm()) / (Ac * omega).norm();
    CHECK(relative(single.apply(omega), Ac * omega) < bound);
    CHECK(single.unit_roundoff() > 0x1p-24);
    CHECK(single.offset_ratio() == doctest::Approx(std::sqrt(X.squaredNorm() / Ac.squaredNorm())).epsilon(1e-12));
  }
}

TEST_CASE("solving streamed patches gives the in-memory basis") {
  const Image image = scene_image(80, 56, 3, 8, 41);
  const PatchLayout layout(image, {8, 8, 8, 8, ColourMode::joint}, "t.png");
  const PatchBlocks blocks(layout, image, 2);
  const BlockedOperator<double> op(blocks);
  const Eigen::MatrixXd X = layout.observe({image});
  SolverSettings exact;
  exact.choice = SolverChoice::exact;
  const auto [streamed, streamed_report] = solve(op, nullptr, 1.0, exact);
  const auto [held, held_report] = solve(X, exact);
  REQUIRE(streamed.rank() == held.rank());
  CHECK(relative(streamed.eigenvalues, held.eigenvalues) < 1e-12);
  CHECK(streamed.total_variance == doctest::Approx(held.total_variance).epsilon(1e-13));
  // Components up to sign (both follow the same sign convention) on the well-separated leading ones.
  for (int j = 0; j < 8; ++j) CHECK(relative(streamed.components.col(j), held.components.col(j)) < 1e-8);
  SolverSettings rnd;
  rnd.choice = SolverChoice::randomized;
  rnd.rank = 8;
  rnd.seed = 3;
  const auto [r1, r1_report] = solve(op, nullptr, 1.0, rnd);
  const auto [r2, r2_report] = solve(X, rnd);
  CHECK(relative(r1.eigenvalues, r2.eigenvalues) < 1e-10);
}
