// Tests for solve/scatter_sum and the ScatterSource seam: moments merged file
// by file against the textbook moments of all rows at once.
#include <doctest/doctest.h>

#include <type_traits>

#include "core/error.hpp"
#include "solve/exact.hpp"
#include "solve/operator.hpp"
#include "solve/randomized.hpp"
#include "solve/scatter_sum.hpp"
#include "../support/reference_decompositions.hpp"

using namespace pcasweep;

// A ScatterSum keeps no observations, so it is a ScatterSource but no
// CenteredOperator: passing one where products are needed (solve_randomized,
// solve) does not compile. That is a compile-time fact, checked here by the
// compiler rather than by a runtime test; the exact solver takes it.
static_assert(std::is_convertible_v<ScatterSum*, ScatterSource*>);
static_assert(!std::is_convertible_v<ScatterSum*, CenteredOperator*>);
static_assert(!std::is_invocable_v<decltype(&solve_randomized), const ScatterSum&, const RandomizedSettings&>);
static_assert(std::is_invocable_v<decltype(&solve_exact), const ScatterSum&>);

namespace {

// Rows of three "files" with different sizes and offsets (N_i × d), and all of them stacked.
struct Files {
  std::vector<Eigen::MatrixXd> parts;
  Eigen::MatrixXd all;
};

Files three_files(Eigen::Index d) {
  Files f;
  const Eigen::Index sizes[] = {40, 7, 113};
  const double offsets[] = {100.0, -3.0, 2500.0};
  Eigen::Index total = 0;
  for (int i = 0; i < 3; ++i) {
    Eigen::MatrixXd x = gaussian_matrix(sizes[i], d, 40 + i) * (1.0 + i);
    x.array() += offsets[i];
    total += sizes[i];
    f.parts.push_back(std::move(x));
  }
  f.all.resize(total, d);
  Eigen::Index row = 0;
  for (const auto& x : f.parts) {
    f.all.middleRows(row, x.rows()) = x;
    row += x.rows();
  }
  return f;
}

double relative(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) { return (a - b).norm() / b.norm(); }

}  // namespace

// Source: Chan, Golub & LeVeque (1979), pairwise update of means and scatter
// matrices; reference: the textbook two-pass moments of the stacked rows,
// (X − 1·x̄ᵀ)ᵀ(X − 1·x̄ᵀ), computed here without the operator.
TEST_CASE("scatter sum: merged file by file = moments of all rows at once") {
  const Eigen::Index d = 6;
  const Files f = three_files(d);
  ScatterSum sum(d);
  for (const auto& x : f.parts) sum.add(DenseOperator(x));
  const Eigen::RowVectorXd mean = f.all.colwise().mean();
  const Eigen::MatrixXd centred = f.all.rowwise() - mean;
  const Eigen::MatrixXd textbook = centred.transpose() * centred;
  CHECK(sum.rows() == f.all.rows());
  CHECK(sum.blocks() == 3);
  CHECK(relative(sum.mean().transpose(), mean) < 1e-13);
  CHECK(relative(sum.scatter(), textbook) < 1e-12);
  CHECK(relative(sum.column_sums_of_squares(), textbook.diagonal()) < 1e-12);

  // A ScatterSum is itself a source: merging two partial sums gives the same.
  ScatterSum first(d), rest(d), both(d);
  first.add(DenseOperator(f.parts[0]));
  rest.add(DenseOperator(f.parts[1]));
  rest.add(DenseOperator(f.parts[2]));
  both.add(first);
  both.add(rest);
  CHECK(relative(both.scatter(), textbook) < 1e-12);
  CHECK(both.rows() == f.all.rows());
}

// Source: the eigen-decomposition of the textbook covariance (Eigen's
// SelfAdjointEigenSolver, independent of the project's solver) — the exact
// solver on a ScatterSum must give its eigenvalues.
TEST_CASE("scatter sum: the exact solver on the sum = the covariance of all rows") {
  const Eigen::Index d = 6;
  const Files f = three_files(d);
  ScatterSum sum(d);
  for (const auto& x : f.parts) sum.add(DenseOperator(x));
  const auto [basis, report] = solve_exact(sum);
  const Eigen::RowVectorXd mean = f.all.colwise().mean();
  const Eigen::MatrixXd centred = f.all.rowwise() - mean;
  const Eigen::MatrixXd covariance = centred.transpose() * centred / double(f.all.rows() - 1);
  const Eigen::VectorXd expected = testing::reference_eigenvalues_decreasing(covariance);
  CHECK(report.solver == "exact");
  CHECK(basis.observation_count == f.all.rows());
  CHECK(relative(basis.eigenvalues, expected) < 1e-12);
  CHECK(std::abs(basis.total_variance - covariance.trace()) < 1e-12 * covariance.trace());
}

TEST_CASE("scatter sum: a block with another d is refused") {
  ScatterSum sum(4);
  const Eigen::MatrixXd x = gaussian_matrix(10, 5, 3);
  CHECK_THROWS_AS(sum.add(DenseOperator(x)), Error);
  CHECK(sum.rows() == 0);
}
