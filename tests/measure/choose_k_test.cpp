// Rules for k (measure/choose_k): checked against closed forms and published values.
#include <doctest/doctest.h>

#include <cmath>
#include <random>

#include "measure/choose_k.hpp"
#include "../support/reference_decompositions.hpp"
#include "../support/spectra.hpp"

using namespace pcasweep;

namespace {
// A basis holding only a spectrum (components unused by the rules).
Basis spectrum_basis(std::vector<double> eigenvalues, Eigen::Index d, Eigen::Index n, double total = -1) {
  Basis b;
  b.eigenvalues = Eigen::Map<Eigen::VectorXd>(eigenvalues.data(), Eigen::Index(eigenvalues.size()));
  b.mean = Eigen::VectorXd::Zero(d);
  b.components = Eigen::MatrixXd::Identity(d, Eigen::Index(eigenvalues.size()));
  b.total_variance = total >= 0 ? total : b.eigenvalues.sum();
  b.observation_count = n;
  return b;
}

// Covariance eigenvalues (divide by N−1) of the column-centred N×d matrix X, decreasing.
Basis basis_of(const Eigen::MatrixXd& X) {
  Eigen::MatrixXd c = X.rowwise() - X.colwise().mean();
  const Eigen::MatrixXd cov = (c.transpose() * c) / double(X.rows() - 1);
  Eigen::VectorXd ev = pcasweep::testing::reference_eigenvalues_decreasing(cov).cwiseMax(0.0);
  std::vector<double> v(ev.data(), ev.data() + ev.size());
  return spectrum_basis(v, X.cols(), X.rows(), cov.trace());
}
}  // namespace

TEST_CASE("broken-stick expectations match the closed form for p = 10") {
  // Source: Jackson (1993), b_k = (1/p)·Σ_{i=k..p} 1/i; b_1 = H_10/10 = 0.2928968 (from the formula).
  const auto b = broken_stick_expectations(10);
  REQUIRE(b.size() == 10);
  CHECK(b[0] == doctest::Approx(0.2929).epsilon(1e-4));
  CHECK(b[0] == doctest::Approx(0.29289682539682).epsilon(1e-12));
  CHECK(b[9] == doctest::Approx(0.01));  // (1/10)·(1/10)
  double sum = 0;
  for (double v : b) sum += v;
  CHECK(sum == doctest::Approx(1.0));  // the expected pieces of a unit stick add up to 1
}

TEST_CASE("broken-stick keeps leading components while they beat the stick") {
  // p = 4: b = (0.5208, 0.2708, 0.1458, 0.0625). Proportions 0.6, 0.25, 0.1, 0.05:
  // 0.6 > 0.5208 but 0.25 < 0.2708, so k = 1 (worked by hand from the formula).
  const Basis b = spectrum_basis({6, 2.5, 1, 0.5}, 4, 100);
  CHECK(rule_broken_stick(b).k == 1);
  const Basis c = spectrum_basis({6, 3, 0.5, 0.5}, 4, 100);
  CHECK(rule_broken_stick(c).k == 2);
}

TEST_CASE("Gavish-Donoho omega(1) is within 0.005 of the paper's 2.858") {
  // Source: Gavish & Donoho, IEEE Trans. Inf. Theory 60(8) 2014: ω(β) ≈ 0.56β³ − 0.95β² + 1.82β + 1.43,
  // and ω(1) ≈ 2.858 for the square, unknown-noise case.
  CHECK(std::abs(gavish_donoho_omega(1.0) - 2.858) < 0.005);
  CHECK(gavish_donoho_omega(0.5) == doctest::Approx(0.56 * 0.125 - 0.95 * 0.25 + 1.82 * 0.5 + 1.43));
}

TEST_CASE("Gavish-Donoho finds rank 5 in a 500x500 rank-5 matrix plus white noise") {
  // Signal singular values 600..200, noise σ = 1: the noise bulk ends near 2·√500 ≈ 45 and the
  // threshold is ≈ 2.858 × median ≈ 55, so all five signal values stand well above it.
  std::mt19937_64 rng(5);
  std::normal_distribution<double> g(0.0, 1.0);
  const int n = 500, d = 500;
  auto gauss = [&](int r, int c) {
    Eigen::MatrixXd m(r, c);
    for (Eigen::Index j = 0; j < c; ++j)
      for (Eigen::Index i = 0; i < r; ++i) m(i, j) = g(rng);
    return m;
  };
  const Eigen::MatrixXd U = testing::orthonormal_columns(gauss(n, 5));
  const Eigen::MatrixXd V = testing::orthonormal_columns(gauss(d, 5));
  Eigen::VectorXd s(5);
  s << 600, 500, 400, 300, 200;
  const Eigen::MatrixXd X = U * s.asDiagonal() * V.transpose() + gauss(n, d);
  const KSuggestion k = rule_gavish_donoho(basis_of(X));
  CHECK(k.k == 5);
  CHECK_FALSE(k.lower_bound);
}

TEST_CASE("Gavish-Donoho returns 0 on pure noise in at least 95 of 100 seeds") {
  // 500×500 as in the issue; only eigenvalues are computed (no vectors), about 0.1 s per seed.
  int zeros = 0;
  for (int seed = 0; seed < 100; ++seed) {
    std::mt19937_64 rng(1000 + seed);
    std::normal_distribution<double> g(0.0, 3.0);
    Eigen::MatrixXd X(500, 500);
    for (Eigen::Index j = 0; j < X.cols(); ++j)
      for (Eigen::Index i = 0; i < X.rows(); ++i) X(i, j) = g(rng);
    zeros += rule_gavish_donoho(basis_of(X)).k == 0;
  }
  MESSAGE("pure noise: Gavish-Donoho returned 0 in " << zeros << " of 100 seeds");
  CHECK(zeros >= 95);
}

TEST_CASE("Kneedle returns a planted elbow") {
  // Two straight pieces: steep from (1, 100) to (6, 10), shallow from (6, 10) to (60, 0).
  // For a piecewise-linear convex curve the distance below the chord peaks at the joint: k = 6.
  Eigen::VectorXd y(60);
  for (int i = 1; i <= 60; ++i) y(i - 1) = i <= 6 ? 100.0 - 18.0 * (i - 1) : 10.0 * (60 - i) / 54.0;
  CHECK(kneedle_elbow(y) == 6);
  // A smooth exponential scree e^{−i/4}, i = 0..39: the difference curve peaks where the
  // normalised slope is −1, i.e. 39/4·e^{−i/4}/(1 − e^{−39/4}) = 1, i = 4·ln(9.75/(1 − e^{−9.75}))
  // ≈ 9.11 (worked by hand from the Kneedle definition): component 10 (1-based), within one.
  Eigen::VectorXd e(40);
  for (int i = 0; i < 40; ++i) e(i) = std::exp(-i / 4.0);
  const double knee = 4.0 * std::log(9.75 / (1.0 - std::exp(-9.75)));
  CHECK(std::abs((kneedle_elbow(e) - 1) - knee) <= 1.0);
  // A straight line has no elbow; neither have fewer than 3 points.
  Eigen::VectorXd line(10);
  for (int i = 0; i < 10; ++i) line(i) = 10.0 - i;
  CHECK(kneedle_elbow(line) == 0);
  CHECK(kneedle_elbow(Eigen::Vector2d(2, 1)) == 0);
}

TEST_CASE("Kaiser-Guttman and keep-variance on a small spectrum") {
  // Mean eigenvalue 10/5 = 2: two eigenvalues above it (worked by hand).
  const Basis b = spectrum_basis({5, 3, 1, 0.5, 0.5}, 5, 50);
  CHECK(rule_kaiser_guttman(b).k == 2);
  CHECK(rule_keep_variance(b, 0.80).k == 2);   // 8/10
  CHECK(rule_keep_variance(b, 0.90).k == 3);   // 9/10
  CHECK(rule_keep_variance(b, 0.95).k == 4);   // 9.5/10
  CHECK(rule_keep_variance(b, 1.00).k == 5);
}

TEST_CASE("rules answer honestly for a truncated basis (r < d)") {
  // r = 2 of d = 6 computed; the trace (10) is exact: 6 + 2 = 8 known, 2 beyond r.
  const Basis b = spectrum_basis({6, 2}, 6, 400, 10.0);
  const KSuggestion v80 = rule_keep_variance(b, 0.80);
  CHECK(v80.k == 2);
  CHECK_FALSE(v80.lower_bound);
  const KSuggestion v90 = rule_keep_variance(b, 0.90);
  CHECK(v90.k == 2);
  CHECK(v90.lower_bound);  // "more than the computed components"
  CHECK(rule_kaiser_guttman(b).k == 2);  // mean 10/6: both computed ones exceed it...
  CHECK(rule_kaiser_guttman(b).lower_bound);  // ...so only "at least 2" is known
  const KSuggestion gd = rule_gavish_donoho(b);
  CHECK(gd.k == -1);  // the median singular value (component 3..4 of 6) is unknown
  CHECK(gd.meaning.find("full spectrum") != std::string::npos);
  // Eckart–Young with the exact trace: (N−1)·(10 − 6)/(N·d) at k = 1.
  CHECK(eckart_young_mse(b, 1) == doctest::Approx(399.0 * 4.0 / (400.0 * 6.0)));
}

TEST_CASE("agreement sentence names agreeing and disagreeing rules") {
  std::vector<KSuggestion> r(4);
  r[0].label = "A", r[0].k = 3;
  r[1].label = "B", r[1].k = 3;
  r[2].label = "C", r[2].k = 10;
  r[3].label = "D", r[3].k = -1;
  const std::string s = rules_agreement(r);
  CHECK(s.find("A and B agree on k = 3") != std::string::npos);
  CHECK(s.find("from k = 3") != std::string::npos);
  CHECK(s.find("to k = 10 (C)") != std::string::npos);
  CHECK(s.find("D could not answer") != std::string::npos);
}

TEST_CASE("percent lists parse and reject junk") {
  const auto f = parse_percent_list("99.9,90,95", "--keep-variance");
  REQUIRE(f.size() == 3);
  CHECK(f[0] == doctest::Approx(0.90));
  CHECK(f[2] == doctest::Approx(0.999));
  CHECK_THROWS(parse_percent_list("90,,95", "--keep-variance"));
  CHECK_THROWS(parse_percent_list("120", "--keep-variance"));
  CHECK_THROWS(parse_percent_list("0", "--keep-variance"));
}
