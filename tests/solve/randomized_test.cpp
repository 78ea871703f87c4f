// Checks of the randomized solver (solve/randomized.hpp) against Eigen's
// BDCSVD on the explicitly centred matrix, and against the expectation bound
// of Halko, Martinsson & Tropp, SIAM Review 53(2), 2011, Theorem 10.6.
#include <doctest/doctest.h>
#include <omp.h>

#include <cmath>

#include "core/error.hpp"
#include "core/thread_guard.hpp"
#include "solve/operator.hpp"
#include "solve/randomized.hpp"
#include "solve/solver.hpp"
#include "../support/spectra.hpp"
#include "../support/reference_decompositions.hpp"

using namespace pcasweep;
using pcasweep::testing::centred;
using pcasweep::testing::geometric_spectrum;
using pcasweep::testing::with_spectrum;

namespace {

// ‖A_c − A_c·V·Vᵀ‖_F, the error of projecting on the returned components.
double projection_error(const Eigen::MatrixXd& ac, const Eigen::MatrixXd& v) {
  return (ac - (ac * v) * v.transpose()).norm();
}

RandomizedSettings settings_for(Eigen::Index k) {
  RandomizedSettings s;
  s.rank = k;
  return s;
}

}  // namespace

TEST_CASE("randomized: exact-rank matrix recovered as BDCSVD gives it (1e-10)") {
  const Eigen::Index n = 300, d = 80, r = 7;
  Eigen::VectorXd s(r);
  s << 50, 30, 20, 9, 5, 2, 1;
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 11);
  const Eigen::MatrixXd ac = centred(a);
  const testing::ReferenceSvd ref = testing::reference_svd(ac, true);
  DenseOperator op(a);
  const auto [b, b_report] = solve_randomized(op, settings_for(10));
  REQUIRE(b.rank() == 10);
  const Eigen::VectorXd sigma = (b.eigenvalues * double(n - 1)).cwiseSqrt();
  for (Eigen::Index i = 0; i < r; ++i) CHECK(std::abs(sigma(i) - ref.singularValues()(i)) <= 1e-10 * ref.singularValues()(0));
  // Beyond the rank the singular values vanish (round-off only).
  CHECK(sigma.tail(3).maxCoeff() <= 1e-10 * ref.singularValues()(0));
  // Same subspace: projectors onto the leading r right singular vectors agree.
  const Eigen::MatrixXd p_ref = ref.matrixV().leftCols(r) * ref.matrixV().leftCols(r).transpose();
  const Eigen::MatrixXd p_ours = b.components.leftCols(r) * b.components.leftCols(r).transpose();
  CHECK((p_ref - p_ours).cwiseAbs().maxCoeff() <= 1e-10);
  // The captured subspace holds everything: the residual is at the rounding floor.
  CHECK(b_report.subspace_residual <= b_report.residual_floor * (1 + 1e-12));
}

TEST_CASE("randomized: decaying spectrum, default settings within (1+1e-3) of optimal") {
  const Eigen::Index n = 400, d = 200, k = 20;
  // Geometric decay 0.9^i: slow enough that q = 0 visibly misses (see below).
  const Eigen::VectorXd s = geometric_spectrum(d, 1.0, 0.9);
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 21);
  const Eigen::MatrixXd ac = centred(a);
  const testing::ReferenceSvd ref = testing::reference_svd(ac);
  const double optimal = std::sqrt(ref.singularValues().tail(d - k).squaredNorm());
  DenseOperator op(a);
  const auto [b, b_report] = solve_randomized(op, settings_for(k));
  const double ours = projection_error(ac, b.components);
  const int passes = b_report.passes;  // INFO captures by reference; clang 14 cannot capture a structured binding
  INFO("ours " << ours << " optimal " << optimal << " passes " << passes);
  CHECK(ours <= (1.0 + 1e-3) * optimal);
  CHECK(b_report.converged);
  // The estimated distance from optimal is of the right size (loose: factor 10 or 1e-6 absolute).
  REQUIRE(std::isfinite(b_report.optimality_gap_estimate));
  CHECK(b_report.optimality_gap_estimate <= 10.0 * (ours / optimal - 1.0) + 1e-6);
}

TEST_CASE("randomized: q = 0 respects the HMT Theorem 10.6 expectation bound (loose, mean of 10 seeds)") {
  // Theorem 10.6 (HMT 2011): for target rank k and oversampling p >= 2, Q from
  // Y = AΩ with Ω Gaussian d×(k+p):
  //   E‖A − QQᵀA‖₂ <= (1 + sqrt(k/(p−1)))·σ_{k+1} + (e·sqrt(k+p)/p)·sqrt(Σ_{j>k} σ_j²).
  // We return V spanning the rows of QᵀA; ‖A(I − VVᵀ)‖₂ <= ‖A − QQᵀA‖₂, so
  // asking for rank k+p with no oversampling and q = 0 tests the same bound.
  const Eigen::Index n = 300, d = 150, k = 10, p = 5;
  const Eigen::VectorXd s = Eigen::VectorXd::LinSpaced(d, 1, double(d)).cwiseInverse();  // σ_j = 1/j: slow decay
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 31);
  const Eigen::MatrixXd ac = centred(a);
  const testing::ReferenceSvd ref = testing::reference_svd(ac);
  const Eigen::VectorXd sv = ref.singularValues();
  const double bound = (1.0 + std::sqrt(double(k) / double(p - 1))) * sv(k) +
                       std::exp(1.0) * std::sqrt(double(k + p)) / double(p) * std::sqrt(sv.tail(d - k).squaredNorm());
  double mean = 0.0;
  DenseOperator op(a);
  for (std::uint64_t seed = 1; seed <= 10; ++seed) {
    RandomizedSettings rs;
    rs.rank = k + p;
    rs.oversample = 0;
    rs.power_iterations = 0;
    rs.seed = seed;
    const auto [b, b_report] = solve_randomized(op, rs);
    CHECK(b_report.passes == 2);
    const Eigen::MatrixXd resid = ac - (ac * b.components) * b.components.transpose();
    mean += testing::reference_svd(resid).values(0) / 10.0;
  }
  INFO("mean spectral error " << mean << ", bound " << bound << ", optimal " << sv(k));
  CHECK(mean <= bound);
  CHECK(mean >= sv(k + p) * (1 - 1e-12));  // no rank-(k+p) projection beats σ_{k+p+1}
}

TEST_CASE("randomized: orthonormal, sorted, deterministic sign, bit-identical for a seed") {
  const Eigen::Index n = 500, d = 120, k = 12;
  const Eigen::VectorXd s = Eigen::VectorXd::LinSpaced(d, 0, double(d - 1)).unaryExpr([](double i) { return std::exp(-i / 8.0); });
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 41);
  DenseOperator op(a);
  const auto [b1, b1_report] = solve_randomized(op, settings_for(k));
  const auto [b2, b2_report] = solve_randomized(op, settings_for(k));
  CHECK((b1.components.transpose() * b1.components - Eigen::MatrixXd::Identity(k, k)).cwiseAbs().maxCoeff() <= 1e-10);
  for (Eigen::Index i = 1; i < k; ++i) CHECK(b1.eigenvalues(i) <= b1.eigenvalues(i - 1));
  for (Eigen::Index j = 0; j < k; ++j) {
    Eigen::Index at = 0;
    b1.components.col(j).cwiseAbs().maxCoeff(&at);
    CHECK(b1.components(at, j) > 0.0);
  }
  CHECK(b1.components == b2.components);  // bit for bit
  CHECK(b1.eigenvalues == b2.eigenvalues);
  CHECK(b1_report.passes == b2_report.passes);
}

TEST_CASE("randomized: the Gaussian test matrix does not depend on the thread count") {
  const auto on_threads = [](int threads) {
    const ThreadGuard guard({.openmp = threads});
    return gaussian_matrix(1001, 7, 99);
  };
  const Eigen::MatrixXd one = on_threads(1);
  const Eigen::MatrixXd many = on_threads(std::max(2, omp_get_max_threads()));
  CHECK(one == many);
  // Loose sanity of the distribution (common practice): mean near 0, variance near 1.
  CHECK(std::abs(one.mean()) < 0.05);
  CHECK(std::abs((one.array() - one.mean()).square().mean() - 1.0) < 0.05);
  CHECK(gaussian_matrix(10, 3, 1) != gaussian_matrix(10, 3, 2));
}

TEST_CASE("randomized: another seed gives the same eigenvalues to 1e-6 on a separated spectrum") {
  const Eigen::Index n = 400, d = 100, k = 8;
  const Eigen::VectorXd s = geometric_spectrum(d, 1.0, 0.6);
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 51);
  DenseOperator op(a);
  RandomizedSettings r1 = settings_for(k), r2 = settings_for(k);
  r2.seed = 12345;
  const auto [b1, b1_report] = solve_randomized(op, r1);
  const auto [b2, b2_report] = solve_randomized(op, r2);
  CHECK(b1.components != b2.components);
  for (Eigen::Index i = 0; i < k; ++i) CHECK(std::abs(b1.eigenvalues(i) - b2.eigenvalues(i)) <= 1e-6 * b1.eigenvalues(i));
}

TEST_CASE("randomized: bad input is refused with clear errors") {
  const Eigen::MatrixXd a = gaussian_matrix(30, 10, 3);
  DenseOperator op(a);
  CHECK_THROWS_WITH_AS(solve_randomized(op, settings_for(11)), doctest::Contains("outside 1..10"), Error);
  CHECK_THROWS_AS(solve_randomized(op, settings_for(0)), Error);
  const Eigen::MatrixXd one_row = gaussian_matrix(1, 10, 3);
  DenseOperator op1(one_row);
  try {
    solve_randomized(op1, settings_for(1));
    FAIL("no error for N = 1");
  } catch (const Error& e) {
    CHECK(e.kind() == ErrorKind::data);
    CHECK(std::string(e.what()).find("at least 2 observations") != std::string::npos);
  }
  SolverSettings s;
  s.rank = 11;
  s.choice = SolverChoice::randomized;
  CHECK_THROWS_WITH_AS(solve(op, s), doctest::Contains("min(N, d) = 10"), Error);
}

TEST_CASE("randomized: a subspace as wide as min(N, d) is exact after two passes") {
  const Eigen::MatrixXd a = gaussian_matrix(40, 25, 8);
  const Eigen::MatrixXd ac = centred(a);
  const testing::ReferenceSvd ref = testing::reference_svd(ac);
  DenseOperator op(a);
  const auto [b, b_report] = solve_randomized(op, settings_for(20));  // l = min(20 + 10, 25) = 25 = d
  CHECK(b_report.passes == 2);
  CHECK(b_report.optimality_gap_estimate == 0.0);
  for (Eigen::Index i = 0; i < 20; ++i)
    CHECK(std::abs(b.eigenvalues(i) * 39.0 - ref.singularValues()(i) * ref.singularValues()(i)) <=
          1e-10 * ref.singularValues()(0) * ref.singularValues()(0));
}

TEST_CASE("solve: auto explains its choice; exact refuses a covariance too large for memory") {
  const Eigen::MatrixXd a = gaussian_matrix(50, 20, 5);
  DenseOperator op(a);
  SolverSettings s;
  const auto [b, b_report] = solve(op, s);
  CHECK(b_report.solver == "exact");
  CHECK(b_report.reason.find("d = 20") != std::string::npos);
  const CostEstimate big = estimate_costs(400, 65536, 32, 10);
  CHECK(big.exact_bytes > kExactMemoryLimit);
  CHECK(big.randomized_seconds < big.exact_seconds);
}

TEST_CASE("randomized: wide data (N < d) keeps the accuracy of tall data") {
  // Block Krylov runs on the smaller side; for N < d that is the observations,
  // and the components come from A_cᵀ·U. Reference: Eigen's BDCSVD of the
  // explicitly centred matrix, as above.
  const Eigen::Index n = 90, d = 400, r = 6;
  Eigen::VectorXd s(r);
  s << 40, 25, 12, 6, 3, 1;
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 61);
  const Eigen::MatrixXd ac = centred(a);
  const testing::ReferenceSvd ref = testing::reference_svd(ac, true);
  DenseOperator op(a);
  const auto [b, b_report] = solve_randomized(op, settings_for(8));
  const Eigen::VectorXd sigma = (b.eigenvalues * double(n - 1)).cwiseSqrt();
  for (Eigen::Index i = 0; i < r; ++i) CHECK(std::abs(sigma(i) - ref.singularValues()(i)) <= 1e-10 * ref.singularValues()(0));
  const Eigen::MatrixXd p_ref = ref.matrixV().leftCols(r) * ref.matrixV().leftCols(r).transpose();
  const Eigen::MatrixXd p_ours = b.components.leftCols(r) * b.components.leftCols(r).transpose();
  CHECK((p_ref - p_ours).cwiseAbs().maxCoeff() <= 1e-10);
  CHECK((b.components.transpose() * b.components - Eigen::MatrixXd::Identity(8, 8)).cwiseAbs().maxCoeff() <= 1e-10);

  // Decaying spectrum on a wide matrix: within (1 + 1e-3) of the optimal rank-k error.
  const Eigen::Index k = 15;
  const Eigen::VectorXd slow = Eigen::VectorXd::LinSpaced(n, 1, double(n)).cwiseInverse();
  const Eigen::MatrixXd w = with_spectrum(n, d, slow, 62);
  const Eigen::MatrixXd wc = centred(w);
  const Eigen::VectorXd sv = testing::reference_svd(wc).values;
  DenseOperator wop(w);
  const auto [bw, bw_report] = solve_randomized(wop, settings_for(k));
  const double optimal = std::sqrt(sv.tail(sv.size() - k).squaredNorm());
  const int passes = bw_report.passes;  // INFO captures by reference; clang 14 cannot capture a structured binding
  INFO("passes " << passes);
  CHECK(projection_error(wc, bw.components) <= (1.0 + 1e-3) * optimal);
  CHECK(bw_report.converged);
}

TEST_CASE("solve: single precision asked for on data whose mean dwarfs its spread runs in double, and says why") {
  // ‖A‖_F/‖A_c‖_F for a column offset c and centred spread s per entry is
  // √(1 + c²/s²) (Pythagoras, common practice): offset 1e4 on spread ~1 gives
  // ~1e4, far above kSingleOffsetLimit, where float32 products would round at
  // 1e4·2⁻²⁴ ≈ 6e-4 of the centred data.
  const Eigen::VectorXd s = Eigen::VectorXd::LinSpaced(10, 30.0, 3.0);
  Eigen::MatrixXd a = with_spectrum(400, 60, s, 21);
  a.array() += 1e4;
  SolverSettings settings;
  settings.choice = SolverChoice::randomized;
  settings.rank = 4;
  settings.precision = Precision::single_precision;
  const auto [guarded, guarded_report] = solve(a, settings);
  CHECK(guarded_report.precision == "double");
  CHECK(guarded_report.reason.find("although single was asked") != std::string::npos);
  // The same data centred (ratio 1) run in single; with with_spectrum's own
  // column offsets of 10..20 (about 40 times this spread) they too stay in double.
  const Eigen::MatrixXd offset = with_spectrum(400, 60, s, 21);
  CHECK(solve(centred(offset), settings).report.precision == "single");
  CHECK(solve(offset, settings).report.precision == "double");
  // Exact ignores the request: its scatter is accumulated in double.
  settings.choice = SolverChoice::exact;
  CHECK(solve(a, settings).report.precision == "double");
}

TEST_CASE("solve: a single-precision solve whose tail lies below float32 rounding is redone in double") {
  // σ_i = e^{−i/5}: the variance beyond rank k is about e^{−2k/5} of the
  // total (geometric series, common practice): 1.8e-2 at k = 10, far above
  // kSingleTailMargin·2⁻²⁴ ≈ 6e-5; 6e-6 at k = 30, below it.
  const Eigen::VectorXd s = (-Eigen::VectorXd::LinSpaced(120, 0.0, 119.0) / 5.0).array().exp();
  const Eigen::MatrixXd a = centred(with_spectrum(600, 200, s, 31));
  SolverSettings settings;
  settings.choice = SolverChoice::randomized;
  settings.precision = Precision::single_precision;
  settings.rank = 10;
  const auto [kept, kept_report] = solve(a, settings);
  CHECK(kept_report.precision == "single");
  CHECK(precision_suffices(kept, SingleOperator(a).unit_roundoff()));
  settings.rank = 30;
  const auto [redone, redone_report] = solve(a, settings);
  CHECK(redone_report.precision == "double");
  CHECK(redone_report.reason.find("after a single-precision solve") != std::string::npos);
  // Redone in double, the rank-30 error is near optimal again (reference: BDCSVD).
  const testing::ReferenceSvd ref = testing::reference_svd(a);
  const double optimal = std::sqrt(ref.singularValues().tail(ref.singularValues().size() - 30).squaredNorm());
  CHECK(projection_error(a, redone.components) <= (1.0 + 1e-3) * optimal);
}
