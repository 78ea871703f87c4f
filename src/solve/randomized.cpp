#include "solve/randomized.hpp"

#include <Eigen/Cholesky>
#include <Eigen/QR>
#include <Eigen/SVD>
#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include "core/error.hpp"

namespace pcasweep {

namespace {

// SplitMix64's finaliser (Steele, Lea & Flood, OOPSLA 2014): a bijective
// 64-bit mix, used here as a counter-based generator.
std::uint64_t splitmix64(std::uint64_t x) {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

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

Eigen::MatrixXd orthonormalize(Eigen::MatrixXd& M) {
  const Eigen::Index m = M.rows(), l = M.cols();
  Eigen::HouseholderQR<Eigen::MatrixXd> qr(M);
  Eigen::MatrixXd r = qr.matrixQR().topRows(l).triangularView<Eigen::Upper>();
  M = qr.householderQ() * Eigen::MatrixXd::Identity(m, l);
  return r;
}

Eigen::MatrixXd orthonormalize_cholesky_qr2(Eigen::MatrixXd& M, bool* fell_back) {
  // CholeskyQR2 (Fukaya, Nakatsukasa, Yanagisawa & Yamamoto, 2014): two
  // rounds of Gram → Cholesky → triangular solve. It is stable while
  // cond(M) stays well below u^(-1/2) ≈ 1e8; we fall back to Householder QR
  // when the first factor's diagonal spread (a lower bound on cond) exceeds
  // 1e5 or the second Gram matrix is visibly not the identity.
  const Eigen::Index l = M.cols();
  const auto cholesky_round = [&](Eigen::MatrixXd& block, Eigen::MatrixXd& r) {
    Eigen::MatrixXd gram = Eigen::MatrixXd::Zero(l, l);
    gram.selfadjointView<Eigen::Lower>().rankUpdate(block.transpose());
    Eigen::LLT<Eigen::MatrixXd> llt(gram);
    if (llt.info() != Eigen::Success) return false;
    r = llt.matrixU();
    const Eigen::VectorXd diag = r.diagonal().cwiseAbs();
    if (!(diag.minCoeff() > 1e-5 * diag.maxCoeff())) return false;
    r.triangularView<Eigen::Upper>().solveInPlace<Eigen::OnTheRight>(block);
    return true;
  };
  Eigen::MatrixXd first = M, r1, r2;
  bool ok = cholesky_round(first, r1);
  if (ok) {
    Eigen::MatrixXd gram = first.transpose() * first;
    ok = (gram - Eigen::MatrixXd::Identity(l, l)).cwiseAbs().maxCoeff() < 0.1 && cholesky_round(first, r2);
  }
  if (fell_back) *fell_back = !ok;
  if (!ok) return orthonormalize(M);
  M = std::move(first);
  return (r2 * r1).triangularView<Eigen::Upper>();
}

Basis solve_randomized(const CenteredOperator& op, const RandomizedSettings& settings) {
  const Eigen::Index n = op.rows(), d = op.cols();
  if (n < 2) throw data_error("need at least 2 observations to estimate a covariance, got " + std::to_string(n));
  const Eigen::Index k = settings.rank, smallest = std::min(n, d);
  if (k < 1 || k > smallest) {
    throw usage_error("randomized solver: rank " + std::to_string(k) + " is outside 1.." + std::to_string(smallest) +
                      " (min(N, d) with N = " + std::to_string(n) + " observations, d = " + std::to_string(d) +
                      " variables)");
  }
  if (settings.oversample < 0) throw usage_error("--oversample must be 0 or more");
  if (settings.power_iterations < -1) throw usage_error("--power-iters must be 0 or more (or -1 for adaptive)");
  const Eigen::Index l = std::min<Eigen::Index>(k + settings.oversample, smallest);
  const bool adaptive = settings.power_iterations < 0;
  const int fixed_passes = adaptive ? 0 : 2 * settings.power_iterations + 2;
  const double denom = double(n - 1);

  Basis basis;
  basis.mean = op.mean();
  basis.observation_count = n;
  basis.variable_variances = op.column_sums_of_squares() / denom;
  basis.total_variance = basis.variable_variances.sum();
  const double frobenius2 = basis.total_variance * denom;  // ‖A_c‖²_F

  // Pass 1: Y = A_c·Ω, orthonormalised to Q.
  Eigen::MatrixXd q = op.apply(gaussian_matrix(d, l, settings.seed));
  orthonormalize(q);
  Eigen::MatrixXd w;  // d×l, orthonormal basis of the right (variable) side
  int passes = 1;
  bool last_on_right = false;  // the latest SVD factors Z = A_cᵀQ (true) or Y = A_c·W (false)
  Eigen::MatrixXd w_used;      // for a Y-side finish: the W that Y = A_c·W was formed with
  Eigen::BDCSVD<Eigen::MatrixXd> svd;
  Eigen::VectorXd sigma2, previous_sigma2;
  std::vector<double> errors;  // rank-k error² of each estimate, for the extrapolation
  double change = std::numeric_limits<double>::infinity();
  bool converged = false;

  for (;;) {
    Eigen::MatrixXd r;
    if (!last_on_right) {
      // Z = A_cᵀ·Q = W·R: σ(R) = σ(QᵀA_c).
      w = op.apply_transpose(q);
      r = orthonormalize(w);
      last_on_right = true;
    } else {
      // Y = A_c·W = Q·R: σ(R) = σ(A_c·W).
      q = op.apply(w);
      r = orthonormalize(q);
      w_used = w;
      last_on_right = false;
    }
    ++passes;
    svd.compute(r, Eigen::ComputeFullU | Eigen::ComputeFullV);
    previous_sigma2 = sigma2;
    sigma2 = svd.singularValues().array().square();
    errors.push_back(std::max(0.0, frobenius2 - sigma2.head(k).sum()));
    if (previous_sigma2.size() == sigma2.size()) {
      // Largest move of any of the leading k eigenvalues, relative to the
      // total variance (so components that carry almost nothing do not hold
      // the run hostage to their own slow convergence).
      change = (sigma2.head(k) - previous_sigma2.head(k)).cwiseAbs().maxCoeff() / frobenius2;
    }
    if (!adaptive) {
      if (passes >= fixed_passes) break;
      continue;
    }
    // A sampled subspace as wide as min(N, d) already holds all of A_c after
    // two passes; otherwise stop when the estimates settle, or at the cap.
    if (l == smallest && passes >= 2) {
      converged = true;
      change = 0.0;
      break;
    }
    if (change < settings.tolerance) {
      converged = true;
      break;
    }
    if (passes >= settings.max_passes) break;
  }

  // Right singular vectors of A_c restricted to the sampled subspace.
  Eigen::MatrixXd right = last_on_right ? Eigen::MatrixXd(w * svd.matrixU().leftCols(k))
                                        : Eigen::MatrixXd(w_used * svd.matrixV().leftCols(k));
  apply_sign_convention(right);
  basis.components = std::move(right);
  basis.eigenvalues = sigma2.head(k) / denom;
  basis.solver = "randomized";
  basis.sample_size = l;
  basis.oversample = int(l - k);
  basis.passes = passes;
  basis.seed = settings.seed;
  basis.converged = adaptive ? converged : true;
  basis.last_relative_change = std::isfinite(change) ? change : std::numeric_limits<double>::quiet_NaN();

  // Captured-subspace residual ‖A_c‖²_F − ‖P·A_c‖²_F. Both terms carry
  // relative rounding of order γ_n = n·u/(1 − n·u) (Higham, Accuracy and
  // Stability of Numerical Algorithms, §3.1), n = N + d, so a difference
  // below γ_n·‖A_c‖²_F is noise: it is clamped to that floor.
  const double u = std::numeric_limits<double>::epsilon() / 2.0;
  const double nu = double(n + d) * u;
  const double floor = nu / (1.0 - nu) * frobenius2;
  basis.residual_floor = floor / denom;
  basis.subspace_residual = std::max(frobenius2 - sigma2.sum(), floor) / denom;

  // Distance of the rank-k error from optimal. When the subspace is complete
  // it is 0. Otherwise the rank-k error² E_m of successive passes falls
  // roughly geometrically (HMT §10.4: the power scheme contracts by
  // (σ_{k+1}/σ_l)^2 per pass pair); with steps Δ_m = E_{m−1} − E_m and
  // ratio ρ = Δ_m/Δ_{m−1} < 1, the remaining fall is about Δ_m·ρ/(1 − ρ)
  // (Aitken's extrapolation). Unknown (NaN) with fewer than 3 estimates or
  // when the steps do not shrink.
  double gap = std::numeric_limits<double>::quiet_NaN();
  if (l == smallest && passes >= 2) {
    gap = 0.0;
  } else if (errors.size() >= 3) {
    const std::size_t m = errors.size() - 1;
    const double step = errors[m - 1] - errors[m], before = errors[m - 2] - errors[m - 1];
    const double current = errors[m];
    if (step <= 1e-15 * frobenius2 || current <= 0.0) {
      gap = 0.0;
    } else if (before > 0.0 && step < before) {
      const double rho = step / before;
      const double remaining = step * rho / (1.0 - rho);
      if (remaining < current) gap = std::sqrt(current / (current - remaining)) - 1.0;
    }
  }
  basis.optimality_gap_estimate = gap;
  return basis;
}

}  // namespace pcasweep
