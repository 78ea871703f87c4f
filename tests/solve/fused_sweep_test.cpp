// Block Krylov over an operator that fuses its paired products: each block is
// made either by one fused call (Y_b and Z_b together) or, when it is likely
// the last, by a lone product (and its partner afterwards if the guess was
// wrong). The answer must not depend on which: the reference is the same
// solve through the plain DenseOperator, and Eigen's BDCSVD of the explicitly
// centred matrix.
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "solve/operator.hpp"
#include "solve/randomized.hpp"
#include "../support/spectra.hpp"
#include "../support/reference_decompositions.hpp"

using namespace pcasweep;
using pcasweep::testing::centred;
using pcasweep::testing::with_spectrum;

namespace {

// DenseOperator's products, offered as fused, with a log of the calls: 'N' a
// fused A_c·W then A_cᵀ·Y, 'M' a fused A_cᵀ·W then A_c·Y (observation side),
// 'f' a lone A_c·W, 't' a lone A_cᵀ·Y.
class LoggingFusedOperator : public CenteredOperator {
 public:
  explicit LoggingFusedOperator(const Eigen::MatrixXd& x) : dense_(x) {}
  Eigen::Index rows() const override { return dense_.rows(); }
  Eigen::Index cols() const override { return dense_.cols(); }
  const Eigen::VectorXd& mean() const override { return dense_.mean(); }
  Eigen::MatrixXd apply(const Eigen::MatrixXd& w) const override {
    log += 'f';
    return dense_.apply(w);
  }
  Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const override {
    log += 't';
    return dense_.apply_transpose(y);
  }
  Eigen::MatrixXd apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const override {
    log += 'N';
    y = dense_.apply(w);
    return dense_.apply_transpose(y);
  }
  Eigen::MatrixXd apply_normal_transpose(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const override {
    log += 'M';
    y = dense_.apply_transpose(w);
    return dense_.apply(y);
  }
  Eigen::MatrixXd scatter() const override { return dense_.scatter(); }
  Eigen::VectorXd column_sums_of_squares() const override { return dense_.column_sums_of_squares(); }
  bool fuses_normal_products() const override { return true; }
  mutable std::string log;

 private:
  DenseOperator dense_;
};

// Products in a call log: a fused pair counts two.
int products_in(const std::string& log) {
  int count = 0;
  for (char c : log) count += c == 'N' || c == 'M' ? 2 : 1;
  return count;
}

// Solves the N×d matrix `a` at rank k with default settings through both
// operators and checks the fused one against the plain one and against
// Eigen's BDCSVD of the centred matrix. `wrong_guess` is the call pair that
// shows a block guessed to be the last which was not (its lone product, then
// its partner); `lone` the lone product that makes a last block.
void check_fused_against_plain(const Eigen::MatrixXd& a, Eigen::Index k, const std::string& wrong_guess, char lone) {
  RandomizedSettings s;
  s.rank = k;
  DenseOperator plain(a);
  LoggingFusedOperator fused(a);
  const auto [ref, ref_report] = solve_randomized(plain, s);
  const auto [b, b_report] = solve_randomized(fused, s);
  // Named copies: doctest's INFO captures by reference, and clang 14 cannot capture a structured binding.
  const int passes = b_report.passes, ref_passes = ref_report.passes;
  INFO("calls " << fused.log << ", passes " << passes << " (plain operator " << ref_passes << ")");
  // Both ways of making a block were taken (this spectrum converges more
  // slowly than the guess assumes), and the last block was made alone.
  CHECK(fused.log.find(wrong_guess) != std::string::npos);
  CHECK(fused.log.back() == lone);
  // `passes` counts what was asked of the data, and the lone last block
  // costs what the plain operator's does.
  CHECK(b_report.passes == products_in(fused.log));
  CHECK(b_report.passes == ref_report.passes);
  // The same Krylov space both ways: only rounding differs (G's diagonal
  // blocks are W_bᵀ·Z_b after a fused call, Y_bᵀ·Y_b after a lone one).
  REQUIRE(b.eigenvalues.size() == k);
  const double eig_diff = ((b.eigenvalues - ref.eigenvalues).cwiseAbs().array() / ref.eigenvalues.array()).maxCoeff();
  const Eigen::MatrixXd p = b.components * b.components.transpose(), p_ref = ref.components * ref.components.transpose();
  const double projector_diff = (p - p_ref).cwiseAbs().maxCoeff();
  INFO("against the plain operator: eigenvalues " << eig_diff << " relative, projectors " << projector_diff);
  CHECK(eig_diff <= 1e-10);
  CHECK(projector_diff <= 1e-10);
  // And the answer itself (Eigen's BDCSVD of the centred matrix).
  const Eigen::MatrixXd ac = centred(a);
  const Eigen::VectorXd sv = testing::reference_svd(ac).values;
  const Eigen::VectorXd exact = sv.head(k).array().square() / double(a.rows() - 1);
  const double eig_err = ((b.eigenvalues - exact).cwiseAbs().array() / exact.array()).maxCoeff();
  const double optimal = std::sqrt(sv.tail(sv.size() - k).squaredNorm());
  const double ours = (ac - (ac * b.components) * b.components.transpose()).norm();
  INFO("largest relative eigenvalue error " << eig_err << ", error/optimum " << ours / optimal);
  CHECK(eig_err <= 1e-6);
  CHECK(ours <= (1.0 + 1e-3) * optimal);
}

}  // namespace

// σ_i = 1/√i: slower than the guess's model (the ratio of successive changes
// squaring), so at the default tolerance one block is guessed last too early
// on both sides (found by trying several spectra and tolerances).
TEST_CASE("randomized: fused or lone products per block, the same answer (tall: variable side)") {
  const Eigen::Index n = 1500, d = 240;
  const Eigen::VectorXd s = Eigen::VectorXd::LinSpaced(d, 1, double(d)).cwiseSqrt().cwiseInverse();
  check_fused_against_plain(with_spectrum(n, d, s, 71), 20, "ft", 'f');
}

TEST_CASE("randomized: fused or lone products per block, the same answer (wide: observation side)") {
  const Eigen::Index n = 240, d = 1500;
  const Eigen::VectorXd s = Eigen::VectorXd::LinSpaced(n, 1, double(n)).cwiseSqrt().cwiseInverse();
  check_fused_against_plain(with_spectrum(n, d, s, 71), 20, "tf", 't');
}
