// pcasweep/solve/randomized.cpp — the randomized solver: its settings checked, its test matrices, its
// orthonormalisation, and the choice between its two schemes (randomized_detail.hpp).
#include "solve/randomized.hpp"

#include <Eigen/Cholesky>
#include <Eigen/QR>
#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include "core/error.hpp"
#include "core/random.hpp"
#include "solve/randomized_detail.hpp"

namespace pcasweep {

namespace {

// Uniform in (0, 1): the top 53 bits, shifted off zero by half a step.
double open_unit(std::uint64_t bits) { return (double(bits >> 11) + 0.5) * 0x1.0p-53; }

}  // namespace

Eigen::MatrixXd gaussian_matrix(Eigen::Index rows, Eigen::Index cols, std::uint64_t seed) {
  Eigen::MatrixXd g(rows, cols);
  const std::uint64_t key = splitmix64(seed ^ 0x5eed5eed5eed5eedULL);
  const std::int64_t total = std::int64_t(rows) * cols;
  const std::int64_t pairs = (total + 1) / 2;
  double* out = g.data();
#pragma omp parallel for schedule(static)
  for (std::int64_t pair = 0; pair < pairs; ++pair) {
    // Box–Muller (1958): two independent normals from two uniforms.
    const std::uint64_t a = splitmix64(key ^ splitmix64(2 * std::uint64_t(pair)));
    const std::uint64_t b = splitmix64(key ^ splitmix64(2 * std::uint64_t(pair) + 1));
    const double radius = std::sqrt(-2.0 * std::log(open_unit(a)));
    const double angle = 2.0 * std::numbers::pi * open_unit(b);
    out[2 * pair] = radius * std::cos(angle);
    if (2 * pair + 1 < total) out[2 * pair + 1] = radius * std::sin(angle);
  }
  return g;
}

Eigen::MatrixXd orthonormalize_householder(Eigen::MatrixXd& M) {
  const Eigen::Index m = M.rows(), l = M.cols();
  Eigen::HouseholderQR<Eigen::MatrixXd> qr(M);
  Eigen::MatrixXd r = qr.matrixQR().topRows(l).triangularView<Eigen::Upper>();
  M = qr.householderQ() * Eigen::MatrixXd::Identity(m, l);
  return r;
}

namespace {

// One round of CholeskyQR: Gram matrix G = BᵀB (l×l), its Cholesky factor R,
// then B ← B·R⁻¹. Returns false (B untouched) when max|G − I| over the lower
// triangle is not below `max_off_identity`, when G is not positive definite,
// or when R's diagonal spreads over more than 1e5 (a lower bound on cond(B)).
bool cholesky_round(Eigen::MatrixXd& block, Eigen::MatrixXd& r, double max_off_identity) {
  const Eigen::Index l = block.cols();
  Eigen::MatrixXd gram = Eigen::MatrixXd::Zero(l, l);
  gram.selfadjointView<Eigen::Lower>().rankUpdate(block.transpose());
  const Eigen::MatrixXd off = (gram - Eigen::MatrixXd::Identity(l, l)).triangularView<Eigen::Lower>();
  if (!(off.cwiseAbs().maxCoeff() < max_off_identity)) return false;
  Eigen::LLT<Eigen::MatrixXd> llt(gram);
  if (llt.info() != Eigen::Success) return false;
  r = llt.matrixU();
  const Eigen::VectorXd diag = r.diagonal().cwiseAbs();
  if (!(diag.minCoeff() > 1e-5 * diag.maxCoeff())) return false;
  r.triangularView<Eigen::Upper>().solveInPlace<Eigen::OnTheRight>(block);
  return true;
}

}  // namespace

Eigen::MatrixXd orthonormalize(Eigen::MatrixXd& M, bool* fell_back) {
  // CholeskyQR2 (Fukaya, Nakatsukasa, Yanagisawa & Yamamoto, 2014): two
  // rounds of Gram → Cholesky → triangular solve. It is stable while
  // cond(M) stays well below u^(-1/2) ≈ 1e8; we fall back to Householder QR
  // when a factor's diagonal spread (a lower bound on cond) exceeds 1e5 or
  // the second Gram matrix is visibly not the identity.
  Eigen::MatrixXd first = M, r1, r2;
  const bool ok = cholesky_round(first, r1, std::numeric_limits<double>::infinity()) && cholesky_round(first, r2, 0.1);
  if (fell_back) *fell_back = !ok;
  if (!ok) return orthonormalize_householder(M);
  M = std::move(first);
  return (r2 * r1).triangularView<Eigen::Upper>();
}

namespace {

// n×d data: throws Error(data) for n < 2, Error(usage) for a rank outside
// 1..min(n, d), a negative oversample or power_iterations below −1.
void check_settings(Eigen::Index n, Eigen::Index d, const RandomizedSettings& settings) {
  if (n < 2) throw data_error("need at least 2 observations to estimate a covariance, got " + std::to_string(n));
  const Eigen::Index k = settings.rank, smallest = std::min(n, d);
  if (k < 1 || k > smallest) {
    throw usage_error("randomized solver: rank " + std::to_string(k) + " is outside 1.." + std::to_string(smallest) +
                      " (min(N, d) with N = " + std::to_string(n) + " observations, d = " + std::to_string(d) +
                      " variables)");
  }
  if (settings.oversample < 0) throw usage_error("--oversample must be 0 or more");
  if (settings.power_iterations < -1) throw usage_error("--power-iters must be 0 or more (or -1 for adaptive)");
}

// What every scheme shares: the mean, N, the per-variable variances and their
// exact total, straight from the operator (none of it sampled).
Solution start_solution(const CenteredOperator& op) {
  const double denom = double(op.rows() - 1);
  Solution out;
  Basis& basis = out.basis;
  basis.mean = op.mean();
  basis.observation_count = op.rows();
  basis.variable_variances = op.column_sums_of_squares() / denom;
  basis.total_variance = basis.variable_variances.sum();
  return out;
}

}  // namespace

Solution solve_randomized(const CenteredOperator& op, const RandomizedSettings& settings) {
  check_settings(op.rows(), op.cols(), settings);
  const Eigen::Index k = settings.rank, smallest = std::min(op.rows(), op.cols());
  const Eigen::Index l = std::min<Eigen::Index>(k + settings.oversample, smallest);
  Solution out = start_solution(op);
  const double frobenius2 = out.basis.total_variance * double(op.rows() - 1);  // ‖A_c‖²_F
  if (settings.power_iterations >= 0) {
    detail::subspace_iteration(op, k, l, settings.power_iterations, settings.seed, frobenius2, out);
  } else if (l == smallest) {
    detail::subspace_iteration(op, k, l, 0, settings.seed, frobenius2, out);  // two passes are exact
  } else {
    detail::block_krylov(op, k, l, settings, frobenius2, out);
  }
  out.report.solver = "randomized";
  out.report.sample_size = l;
  out.report.oversample = int(l - k);
  out.report.seed = settings.seed;
  return out;
}

}  // namespace pcasweep
