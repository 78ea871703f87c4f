// pcasweep/solve/power_scheme.cpp — the randomized solver with a fixed number of power iterations.
//
// Fixed q (HMT Algorithm 4.4): 2q + 2 passes alternating Y = A_c·W and
// Z = A_cᵀ·Q, each orthonormalised (orthonormalize: CholeskyQR2, Householder
// when ill-conditioned); the last factor's small SVD gives σ and the right
// singular vectors. Also used, with q = 0, when the sample is as wide as
// min(N, d): two passes are then exact. Steps: start (Q from A_c·Ω), pass
// (one product, orthonormalised, and the small SVD of its factor), finish.
#include <algorithm>
#include <limits>

#include "solve/randomized_detail.hpp"
#include "solve/small_svd.hpp"

namespace pcasweep::detail {

namespace {

// The iteration as it goes: the newest factors and the estimates they give.
struct PowerState {
  Eigen::MatrixXd q;       // N×l, orthonormal: the newest left factor
  Eigen::MatrixXd w;       // d×l, orthonormal: the newest right factor
  Eigen::MatrixXd w_used;  // the W that made the newest Q
  bool last_on_right = false;
  SmallSvd svd;                             // of the newest R
  Eigen::VectorXd sigma2, previous_sigma2;  // σ² of the newest R and of the one before
};

// How it went, apart from the estimates: reported at the end.
struct PowerStatus {
  int passes = 0;
  std::vector<double> errors;  // rank-k error² after each pass but the first
  double change = std::numeric_limits<double>::quiet_NaN();
};

// First pass: Q = orth(A_c·Ω), Ω d×l Gaussian from the seed.
void start(const CenteredOperator& op, Eigen::Index l, std::uint64_t seed, PowerState& s, PowerStatus& status) {
  s.q = op.apply(gaussian_matrix(op.cols(), l, seed));
  orthonormalize(s.q);
  status.passes = 1;
}

// One more pass, on the side opposite the last one, then the small SVD of its
// factor R and the leading k estimates' error² and relative move.
void pass(const CenteredOperator& op, Eigen::Index k, double frobenius2, PowerState& s, PowerStatus& status) {
  Eigen::MatrixXd r;
  if (!s.last_on_right) {
    s.w = op.apply_transpose(s.q);  // Z = A_cᵀ·Q = W·R: σ(R) = σ(QᵀA_c)
    r = orthonormalize(s.w);
  } else {
    s.q = op.apply(s.w);  // Y = A_c·W = Q·R: σ(R) = σ(A_c·W)
    r = orthonormalize(s.q);
    s.w_used = s.w;
  }
  s.last_on_right = !s.last_on_right;
  ++status.passes;
  s.svd = small_svd(r);
  s.previous_sigma2 = s.sigma2;
  s.sigma2 = s.svd.values.array().square();
  status.errors.push_back(std::max(0.0, frobenius2 - s.sigma2.head(k).sum()));
  if (s.previous_sigma2.size() == s.sigma2.size())
    status.change = ((s.sigma2.head(k) - s.previous_sigma2.head(k)).array().abs() /
                     s.sigma2.head(k).array().max(1e-300)).maxCoeff();
}

// The answer: right singular vectors from the side the last pass ended on,
// σ²/(N−1), and the report's figures.
void finish(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, double frobenius2, const PowerState& s,
            const PowerStatus& status, Solution& out) {
  Eigen::MatrixXd right = s.last_on_right ? Eigen::MatrixXd(s.w * s.svd.U.leftCols(k))
                                          : Eigen::MatrixXd(s.w_used * s.svd.V.leftCols(k));
  apply_sign_convention(right);
  out.basis.components = std::move(right);
  out.basis.eigenvalues = s.sigma2.head(k) / double(op.rows() - 1);
  out.report.scheme = "power iterations";
  out.report.passes = status.passes;
  out.report.converged = true;
  out.report.last_relative_change = status.change;
  set_residual(out.report, frobenius2, s.sigma2.sum(), op);
  const bool complete = l == std::min(op.rows(), op.cols());
  out.report.optimality_gap_estimate = complete ? 0.0 : extrapolated_gap(status.errors, frobenius2);
}

}  // namespace

void subspace_iteration(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, int power_iterations,
                        std::uint64_t seed, double frobenius2, Solution& out) {
  const int total_passes = 2 * power_iterations + 2;
  PowerState state;
  PowerStatus status;
  start(op, l, seed, state, status);
  while (status.passes < total_passes) pass(op, k, frobenius2, state, status);
  finish(op, k, l, frobenius2, state, status, out);
}

}  // namespace pcasweep::detail
