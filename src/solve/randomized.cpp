#include "solve/randomized.hpp"
#include "core/random.hpp"

#include <Eigen/Cholesky>
#include <Eigen/QR>
#include <Eigen/SVD>
#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include "core/error.hpp"
#include "solve/symmetric_eigen.hpp"

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

Eigen::MatrixXd orthonormalize(Eigen::MatrixXd& M, bool* fell_back) {
  // CholeskyQR2 (Fukaya, Nakatsukasa, Yanagisawa & Yamamoto, 2014): two
  // rounds of Gram → Cholesky → triangular solve. It is stable while
  // cond(M) stays well below u^(-1/2) ≈ 1e8; we fall back to Householder QR
  // when a factor's diagonal spread (a lower bound on cond) exceeds 1e5 or
  // the second Gram matrix is visibly not the identity.
  const Eigen::Index l = M.cols();
  // One round; `max_off_identity` bounds |G − I| (lower triangle) before the Cholesky.
  const auto cholesky_round = [&](Eigen::MatrixXd& block, Eigen::MatrixXd& r, double max_off_identity) {
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
  };
  Eigen::MatrixXd first = M, r1, r2;
  const bool ok = cholesky_round(first, r1, std::numeric_limits<double>::infinity()) && cholesky_round(first, r2, 0.1);
  if (fell_back) *fell_back = !ok;
  if (!ok) return orthonormalize_householder(M);
  M = std::move(first);
  return (r2 * r1).triangularView<Eigen::Upper>();
}

namespace {

// Block Krylov returns the Ritz pairs of its Gram matrix as they are when the
// k-th Ritz value is at least this fraction of the first (σ_k >= 1e-3·σ₁);
// below it, one more product and an SVD resolve the small σ (block_krylov).
constexpr double kGramRitzFloor = 1e-6;
// Block Krylov's change floor with double products (fraction of the total variance).
constexpr double kChangeFloor = 1e-9;

// Relative rounding of a sum of squared products against ‖A_c‖²_F. Double
// products: Higham's worst case γ_n = n·u/(1 − n·u) (Accuracy and Stability
// of Numerical Algorithms, §3.1), n = N + d. Single products: that worst case
// (1.3e-3 at 20000×1024) is far above what happens, because the products'
// rounding errors take both signs and cancel in the sum; measured with
// OpenBLAS's sgemm against dgemm on the benchmark matrices, ‖A·W‖²_F moved by
// 3e-10 to 1.6e-9 of itself (docs/performance.md, "Precision"). The floor is
// the operator's unit_roundoff() itself: 2⁻²⁴ ≈ 6e-8 for centred data, about
// 40× that margin, and more for data whose mean inflates the rounding.
double rounding_level(const CenteredOperator& op) {
  const double n = double(op.rows() + op.cols()), u = op.unit_roundoff();
  if (u > kDoubleRoundoff) return u;
  return n * u / (1.0 - n * u);
}

// The variance the captured subspace misses and what is known of its rounding:
// ‖A_c‖²_F − ‖P·A_c‖²_F where `captured` = ‖P·A_c‖²_F. Both terms carry
// relative rounding of order rounding_level(op), so a difference below
// that fraction of ‖A_c‖²_F is noise: it is clamped to that floor.
void set_residual(SolveReport& report, double frobenius2, double captured, const CenteredOperator& op) {
  const double denom = double(op.rows() - 1);
  const double floor = rounding_level(op) * frobenius2;
  report.residual_floor = floor / denom;
  report.subspace_residual = std::max(frobenius2 - captured, floor) / denom;
}

// Distance of the rank-k error from optimal, from the rank-k error² E_m of
// successive estimates. E_m falls at least geometrically (HMT §10.4 for the
// power scheme; faster for block Krylov); with steps Δ_m = E_{m−1} − E_m and
// ratio ρ = Δ_m/Δ_{m−1} < 1, the remaining fall is about Δ_m·ρ/(1 − ρ)
// (Aitken's extrapolation; an overestimate when convergence is faster than
// geometric). Returns √(E/(E − remaining)) − 1, 0 when the last step is at
// round-off, NaN with fewer than 3 estimates or when the steps do not shrink.
double extrapolated_gap(const std::vector<double>& errors, double frobenius2) {
  if (errors.size() < 3) return std::numeric_limits<double>::quiet_NaN();
  const std::size_t m = errors.size() - 1;
  const double step = errors[m - 1] - errors[m], before = errors[m - 2] - errors[m - 1];
  const double current = errors[m];
  if (step <= 1e-15 * frobenius2 || current <= 0.0) return 0.0;
  if (before > 0.0 && step < before) {
    const double rho = step / before;
    const double remaining = step * rho / (1.0 - rho);
    if (remaining < current) return std::sqrt(current / (current - remaining)) - 1.0;
  }
  return std::numeric_limits<double>::quiet_NaN();
}

// Whether the next block is likely the last one, from the changes of the
// leading eigenvalue estimates so far (block_krylov's stopping rule, asked one
// block early). Block Krylov converges faster than geometrically: on the
// benchmark matrices the ratio of successive changes roughly squares from one
// block to the next (slow decay 0.30, 0.075, 0.005), so the next change is
// predicted as c·ρ² with ρ = c_b/c_{b−1}, and the rule applied to it. Used
// only to choose between a fused sweep and a lone product, so a wrong guess
// costs time, never accuracy.
bool next_block_likely_last(const std::vector<double>& changes, double tolerance) {
  const std::size_t c = changes.size();
  if (c < 2 || !(changes[c - 1] > 0.0) || !(changes[c - 1] < changes[c - 2])) return false;
  const double ratio = changes[c - 1] / changes[c - 2], rho = ratio * ratio;
  return changes[c - 1] * rho * rho / (1.0 - rho) < tolerance;
}

// Fixed q (HMT Algorithm 4.4): 2q + 2 passes alternating Y = A_c·W and
// Z = A_cᵀ·Q, each orthonormalised (orthonormalize: CholeskyQR2, Householder
// when ill-conditioned); the last factor's small SVD gives σ and
// the right singular vectors. Also used, with q = 0, when the sample is as
// wide as min(N, d): two passes are then exact.
void subspace_iteration(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, int power_iterations,
                        std::uint64_t seed, double frobenius2, Solution& out) {
  const int total_passes = 2 * power_iterations + 2;
  Eigen::MatrixXd q = op.apply(gaussian_matrix(op.cols(), l, seed));
  orthonormalize(q);
  Eigen::MatrixXd w, w_used;
  int passes = 1;
  bool last_on_right = false;
  Eigen::BDCSVD<Eigen::MatrixXd> svd;
  Eigen::VectorXd sigma2, previous_sigma2;
  std::vector<double> errors;
  double change = std::numeric_limits<double>::quiet_NaN();
  while (passes < total_passes) {
    Eigen::MatrixXd r;
    if (!last_on_right) {
      w = op.apply_transpose(q);  // Z = A_cᵀ·Q = W·R: σ(R) = σ(QᵀA_c)
      r = orthonormalize(w);
    } else {
      q = op.apply(w);  // Y = A_c·W = Q·R: σ(R) = σ(A_c·W)
      r = orthonormalize(q);
      w_used = w;
    }
    last_on_right = !last_on_right;
    ++passes;
    svd.compute(r, Eigen::ComputeFullU | Eigen::ComputeFullV);
    previous_sigma2 = sigma2;
    sigma2 = svd.singularValues().array().square();
    errors.push_back(std::max(0.0, frobenius2 - sigma2.head(k).sum()));
    if (previous_sigma2.size() == sigma2.size())
      change = ((sigma2.head(k) - previous_sigma2.head(k)).array().abs() / sigma2.head(k).array().max(1e-300)).maxCoeff();
  }
  Eigen::MatrixXd right = last_on_right ? Eigen::MatrixXd(w * svd.matrixU().leftCols(k))
                                        : Eigen::MatrixXd(w_used * svd.matrixV().leftCols(k));
  apply_sign_convention(right);
  out.basis.components = std::move(right);
  out.basis.eigenvalues = sigma2.head(k) / double(op.rows() - 1);
  out.report.scheme = "power iterations";
  out.report.passes = passes;
  out.report.converged = true;
  out.report.last_relative_change = change;
  set_residual(out.report, frobenius2, sigma2.sum(), op);
  const bool complete = l == std::min(op.rows(), op.cols());
  out.report.optimality_gap_estimate = complete ? 0.0 : extrapolated_gap(errors, frobenius2);
}

// Adaptive default: randomized block Krylov iteration (Musco & Musco, "Randomized
// block Krylov methods for stronger and faster approximate singular value
// decomposition", NeurIPS 2015), written here for the variable side (the
// observation side swaps A_c and A_cᵀ, see below). Blocks W_0 = orth(Ω),
// W_{b+1} = orth(Z_b minus its part in span(W_0..W_b)) with Z_b = A_cᵀ·A_c·W_b
// (BCGS2), so K = [W_0 … W_b] (d×m) is orthonormal. After each block the
// Rayleigh–Ritz values of A_c on span(K) are the eigenvalues of the Gram
// matrix G = KᵀA_cᵀA_cK (m×m, m = Σ block widths), built without another look
// at the data: G_ib = Y_iᵀ·Y_b = Z_iᵀ·W_b for the earlier blocks i < b (their
// Z_i were needed anyway to grow K; d×l_i·l_b flops instead of N×l_i·l_b) and
// G_bb = Y_bᵀ·Y_b from the block's own product Y_b = A_c·W_b (W_bᵀ·Z_b when
// the operator made Z_b in the same sweep). Two products per block, and
// convergence governed by the square root of the spectral gap instead of the
// gap itself: on the slowly decaying spectra measured in docs/performance.md
// this needs about half the products of the power scheme for far better
// accuracy.
void block_krylov(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, const RandomizedSettings& settings,
                  double frobenius2, Solution& out) {
  const Eigen::Index n = op.rows(), d = op.cols();
  // The Krylov space lives on the smaller side: the variables (s = d, blocks
  // multiplied by A_c) when d <= N, else the observations (s = N, blocks
  // multiplied by A_cᵀ; its Ritz vectors are then left singular vectors).
  // Projections and orthonormalisations cost O(s·m·l) per block, so on wide
  // data (2000×16384) this side is several times cheaper.
  const bool right_side = d <= n;
  const Eigen::Index space = right_side ? d : n;
  const auto forward = [&](const Eigen::MatrixXd& x) { return right_side ? op.apply(x) : op.apply_transpose(x); };
  const auto backward = [&](const Eigen::MatrixXd& y) { return right_side ? op.apply_transpose(y) : op.apply(y); };
  Eigen::MatrixXd krylov;  // s×m, K = [W_0 … W_b], orthonormal columns
  Eigen::MatrixXd zs;      // s×(m − l_b), [Z_0 … Z_{b−1}] as made (not projected)
  // Observation side only: every Y_b = forward(W_b) (d×l_b), from which the
  // components (A_c's right singular vectors) are formed at the end. The
  // variable side keeps just the newest Y_b: its components lie in span(K).
  std::vector<Eigen::MatrixXd> ys;
  Eigen::MatrixXd y;                    // the newest Y_b
  Eigen::MatrixXd gram;                 // m×m, G
  Eigen::MatrixXd w = gaussian_matrix(space, l, settings.seed);
  orthonormalize(w);
  int passes = 0, blocks = 0;
  Eigen::VectorXd theta, previous;  // leading k Ritz values (σ²), this block and the last
  std::vector<double> errors, changes;
  bool converged = false;
  const double level = rounding_level(op);
  const double captured_floor = level * frobenius2;
  // Changes are measured relative to each eigenvalue, but never relative to
  // less than change_floor (a fraction of the total): components that carry
  // almost nothing are known only to G's rounding and must not hold the run back.
  const double change_floor = std::max(kChangeFloor, level) * frobenius2;
  // An operator that makes Y_b and Z_b in one sweep (SingleOperator) is
  // asked for both at once, because the sweep costs less than its two products
  // apart (0.019 against 0.026 s in docs/performance.md), except for a block
  // that is likely the last: its Z_b would be made for nothing, so it gets Y_b
  // alone (and Z_b after all if the guess was wrong). Such a block's Gram
  // matrix is also diagonalised with its vectors straight away, so that the
  // final step need not do it again.
  const bool fuses = op.fuses_normal_products();
  Eigen::MatrixXd z_next;  // Z_b of the newest block, once made
  SymmetricEigen ritz;     // G's eigenpairs, when the newest block was likely the last
  for (;;) {
    const bool likely_last = krylov.cols() + w.cols() >= space || next_block_likely_last(changes, settings.tolerance);
    const bool fused = fuses && !likely_last;
    if (fused) {
      z_next = right_side ? op.apply_normal(w, y) : op.apply_normal_transpose(w, y);
      passes += 2;
    } else {
      y.resize(0, 0);  // the previous block's Y goes before the new one is made
      y = forward(w);
      ++passes;
    }
    if (!right_side) ys.push_back(y);
    ++blocks;
    const Eigen::Index m_old = krylov.cols(), lb = w.cols(), m = m_old + lb;
    krylov.conservativeResize(space, m);
    krylov.rightCols(lb) = w;
    // Extend G by the new block's column: Z_iᵀ·W_b for the earlier blocks.
    gram.conservativeResize(m, m);
    if (m_old > 0) gram.block(0, m_old, m_old, lb).noalias() = zs.transpose() * w;
    auto diagonal = gram.block(m_old, m_old, lb, lb);
    if (fused) {
      // Y_bᵀ·Y_b = W_bᵀ·Z_b, symmetrised: s·l² flops instead of N·l².
      const Eigen::MatrixXd wz = w.transpose() * z_next;
      diagonal = 0.5 * (wz + wz.transpose());
    } else {
      diagonal.setZero();
      diagonal.selfadjointView<Eigen::Lower>().rankUpdate(y.transpose());  // Y_bᵀ·Y_b
      diagonal.triangularView<Eigen::StrictlyUpper>() = diagonal.transpose();
    }
    gram.block(m_old, 0, lb, m_old) = gram.block(0, m_old, m_old, lb).transpose();
    previous = theta;
    ritz = symmetric_eigen(gram, likely_last);
    theta = ritz.values.head(std::min(k, m)).cwiseMax(0.0);
    errors.push_back(std::max(0.0, frobenius2 - theta.head(std::min(k, m)).sum()));
    // Stop: everything captured (span(K) holds A_c's rows), K fills the space,
    // or the leading k Ritz values settled: the next move, extrapolated from the
    // last two (ρ = c_b/c_{b−1}, remaining ≈ c_b·ρ/(1 − ρ)), is below tolerance.
    if (frobenius2 - gram.trace() <= captured_floor || m == space) {
      converged = true;
      changes.push_back(0.0);
      break;
    }
    if (previous.size() == k && theta.size() == k) {
      const Eigen::ArrayXd scale = theta.array().max(change_floor);
      changes.push_back(((theta - previous).array().abs() / scale).maxCoeff());
      const std::size_t c = changes.size();
      if (changes[c - 1] == 0.0) {
        converged = true;
        break;
      }
      if (c >= 2 && changes[c - 1] < changes[c - 2]) {
        const double rho = changes[c - 1] / changes[c - 2];
        if (changes[c - 1] * rho / (1.0 - rho) < settings.tolerance) {
          converged = true;
          break;
        }
      }
    }
    if (passes + 2 > settings.max_passes) break;
    // Next block: Z_b = backward(Y_b), kept whole for G, then minus its part
    // in span(K), orthonormalised.
    if (!fused) {
      z_next = backward(y);
      ++passes;
    }
    zs.conservativeResize(space, m);
    zs.rightCols(lb) = z_next;
    const Eigen::Index width = std::min<Eigen::Index>(lb, space - m);
    Eigen::MatrixXd z = z_next.leftCols(width);
    // Block classical Gram–Schmidt, run twice around the orthonormalisation
    // (BCGS2: Barlow & Smoktunowicz, Numer. Math. 123, 2013): orthogonal to
    // span(K) to working accuracy.
    const auto project_out = [&](Eigen::MatrixXd& block) { block.noalias() -= krylov * (krylov.transpose() * block); };
    const Eigen::VectorXd before = z.colwise().norm();
    project_out(z);
    // A column that vanished lies in span(K) already (an invariant subspace was
    // found): replace it by a fresh Gaussian direction, so the block stays full.
    const Eigen::VectorXd after = z.colwise().norm();
    if (!((after.array() > 1e-10 * before.array()).all())) {
      const Eigen::MatrixXd fresh = gaussian_matrix(space, width, settings.seed + 1 + std::uint64_t(blocks));
      for (Eigen::Index j = 0; j < width; ++j)
        if (!(after(j) > 1e-10 * before(j))) z.col(j) = fresh.col(j);
      project_out(z);
    }
    orthonormalize(z);
    project_out(z);
    orthonormalize(z);
    w = std::move(z);
  }
  y.resize(0, 0);
  zs.resize(0, 0);
  // Rayleigh–Ritz: G = S·Θ·Sᵀ, and the l leading Ritz vectors V_l = K·S_l
  // span the answer.
  // (All m vectors: LAPACK's dsyevd forms them faster than dsyevr forms the l
  // leading ones, which it does by bisection and inverse iteration: 8.6 against
  // 10.8 ms at m = 370, l = 74, docs/performance.md.)
  const Eigen::Index m = gram.rows(), lr = std::min(l, m);
  const SymmetricEigen eig = ritz.vectors.cols() == m ? std::move(ritz) : symmetric_eigen(gram, true);
  const Eigen::MatrixXd s = eig.vectors.leftCols(lr);
  const Eigen::MatrixXd v_l = krylov * s;
  krylov.resize(0, 0);
  Eigen::VectorXd all;  // the l leading σ², decreasing
  Eigen::MatrixXd right;
  const Eigen::VectorXd theta_l = eig.values.head(lr).cwiseMax(0.0);
  if (right_side && theta_l(k - 1) >= kGramRitzFloor * theta_l(0)) {
    // G's rounding is of order u·σ₁² (as the exact path's covariance), so in
    // double Θ holds σ_k² to about m·u·σ₁²/σ_k² <= 3e-8 relative here: the
    // Ritz pairs are the answer. (With single-precision products u is the
    // operator's, 2⁻²⁴ or more: that is the single path's bound, see
    // docs/performance.md, "Precision".)
    all = theta_l;
    right = v_l.leftCols(k);
  } else {
    // Smaller σ² than that G knows only to rounding of the largest (σ to
    // √u·σ₁), so σ and the vectors come from an SVD of the product itself,
    // Y_l = A_c·V_l (variable side: one more pass; observation side: from
    // the stored Y_b): QR, then the l×l SVD, which resolves σ down to about u·σ₁.
    Eigen::MatrixXd y_l;
    if (right_side) {
      y_l = forward(v_l);
      ++passes;
    } else {
      y_l = Eigen::MatrixXd::Zero(d, lr);
      Eigen::Index offset = 0;
      for (const Eigen::MatrixXd& yi : ys) {
        y_l.noalias() += yi * s.middleRows(offset, yi.cols());
        offset += yi.cols();
      }
      ys.clear();
    }
    const Eigen::MatrixXd r = orthonormalize(y_l);
    const Eigen::BDCSVD<Eigen::MatrixXd> svd(r, Eigen::ComputeFullU | Eigen::ComputeFullV);
    all = svd.singularValues().array().square();
    // Variable side: A_c·V_l = Q·U_r·Σ·V_rᵀ, so A_c's right singular vectors are V_l·V_r.
    // Observation side: A_cᵀ·U_l = Q·U_r·Σ·V_rᵀ, so they are Q·U_r.
    right = right_side ? Eigen::MatrixXd(v_l * svd.matrixV().leftCols(k))
                       : Eigen::MatrixXd(y_l * svd.matrixU().leftCols(k));
  }
  apply_sign_convention(right);
  out.basis.components = std::move(right);
  out.basis.eigenvalues = all.head(k) / double(n - 1);
  out.report.scheme = "block Krylov";
  out.report.krylov_width = m;
  out.report.passes = passes;
  out.report.converged = converged;
  out.report.last_relative_change = changes.empty() ? std::numeric_limits<double>::quiet_NaN() : changes.back();
  // The residual of the l leading Ritz vectors: an l-dimensional subspace, as
  // for the power scheme (‖A_c·K·S_l‖²_F = Σ of the l leading Ritz values).
  set_residual(out.report, frobenius2, all.sum(), op);
  out.report.optimality_gap_estimate = errors.back() <= captured_floor ? 0.0 : extrapolated_gap(errors, frobenius2);
}

}  // namespace

Solution solve_randomized(const CenteredOperator& op, const RandomizedSettings& settings) {
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
  const double denom = double(n - 1);

  Solution out;
  Basis& basis = out.basis;
  basis.mean = op.mean();
  basis.observation_count = n;
  basis.variable_variances = op.column_sums_of_squares() / denom;
  basis.total_variance = basis.variable_variances.sum();
  const double frobenius2 = basis.total_variance * denom;  // ‖A_c‖²_F

  if (settings.power_iterations >= 0) {
    subspace_iteration(op, k, l, settings.power_iterations, settings.seed, frobenius2, out);
  } else if (l == smallest) {
    subspace_iteration(op, k, l, 0, settings.seed, frobenius2, out);  // two passes are exact
  } else {
    block_krylov(op, k, l, settings, frobenius2, out);
  }
  out.report.solver = "randomized";
  out.report.sample_size = l;
  out.report.oversample = int(l - k);
  out.report.seed = settings.seed;
  return out;
}

}  // namespace pcasweep
