// pcasweep/solve/block_krylov.cpp — the randomized solver's adaptive scheme.
//
// Randomized block Krylov iteration (Musco & Musco, "Randomized block Krylov
// methods for stronger and faster approximate singular value decomposition",
// NeurIPS 2015), written here for the variable side (the observation side
// swaps A_c and A_cᵀ, see KrylovProblem). Blocks W_0 = orth(Ω),
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
//
// block_krylov() reads as its steps: start, then per block extend (products,
// K and G grown, Rayleigh–Ritz), settled (the stopping rule), next_block
// (the following orthonormal block), and finally finish (the Ritz pairs, or an
// SVD of one more product when the Gram matrix cannot resolve them). What the
// run is asked (KrylovProblem), the space it builds (KrylovSpace) and how it
// went (KrylovStatus, reported in the SolveReport) are kept apart.
#include <algorithm>
#include <limits>

#include "solve/randomized_detail.hpp"
#include "solve/small_svd.hpp"
#include "solve/symmetric_eigen.hpp"

namespace pcasweep::detail {

namespace {

// The Ritz pairs of the Gram matrix are returned as they are when the k-th
// Ritz value is at least this fraction of the first (σ_k >= 1e-3·σ₁); below
// it, one more product and an SVD resolve the small σ (resolve_by_svd).
constexpr double kGramRitzFloor = 1e-6;
// The change floor with double products (fraction of the total variance).
constexpr double kChangeFloor = 1e-9;

// What the run is asked and what follows from it: fixed for the run.
struct KrylovProblem {
  const CenteredOperator& op;
  Eigen::Index k, l;
  const RandomizedSettings& settings;
  double frobenius2;  // ‖A_c‖²_F
  // The Krylov space lives on the smaller side: the variables (s = d, blocks
  // multiplied by A_c) when d <= N, else the observations (s = N, blocks
  // multiplied by A_cᵀ; its Ritz vectors are then left singular vectors).
  // Projections and orthonormalisations cost O(s·m·l) per block, so on wide
  // data this side is several times cheaper.
  bool right_side;
  Eigen::Index space;  // s
  // Everything is captured once ‖A_c‖²_F − trace(G) is below this.
  double captured_floor;
  // Changes are measured relative to each eigenvalue, but never relative to
  // less than this (a fraction of the total): components that carry almost
  // nothing are known only to G's rounding and must not hold the run back.
  double change_floor;
  // An operator that makes Y_b and Z_b in one sweep (SingleOperator) is asked
  // for both at once, because the sweep costs less than its two products
  // apart (docs/performance.md), except for a block that is likely the last:
  // its Z_b would be made for nothing, so it gets Y_b alone (and Z_b after all
  // if the guess was wrong). Such a block's Gram matrix is also diagonalised
  // with its vectors straight away, so that finish() need not do it again.
  bool fuses;

  Eigen::MatrixXd forward(const Eigen::MatrixXd& x) const { return right_side ? op.apply(x) : op.apply_transpose(x); }
  Eigen::MatrixXd backward(const Eigen::MatrixXd& y) const { return right_side ? op.apply_transpose(y) : op.apply(y); }
};

// The space as it grows and the estimates it gives.
struct KrylovSpace {
  Eigen::MatrixXd w;       // s×l_b, the newest block W_b, orthonormal and orthogonal to K
  Eigen::MatrixXd krylov;  // s×m, K = [W_0 … W_b], orthonormal columns
  Eigen::MatrixXd zs;      // s×(m − l_b), [Z_0 … Z_{b−1}] as made (not projected)
  // Observation side only: every Y_b = forward(W_b) (d×l_b), from which the
  // components (A_c's right singular vectors) are formed at the end. The
  // variable side keeps just the newest Y_b: its components lie in span(K).
  std::vector<Eigen::MatrixXd> ys;
  Eigen::MatrixXd y;       // the newest Y_b
  Eigen::MatrixXd z_next;  // Z_b of the newest block, once made
  bool z_made = false;     // z_next belongs to the newest block (made with Y_b in one sweep)
  Eigen::MatrixXd gram;    // m×m, G
  SymmetricEigen ritz;     // G's eigenpairs (vectors only when the newest block was likely the last)
  Eigen::VectorXd theta, previous;  // leading k Ritz values (σ²), this block and the last
};

// How the run goes, apart from the space: what the SolveReport tells.
struct KrylovStatus {
  int passes = 0, blocks = 0;
  bool converged = false;
  std::vector<double> errors;   // rank-k error² after each block
  std::vector<double> changes;  // largest relative move of the leading k Ritz values, per block
};

// Whether the next block is likely the last one, from the changes of the
// leading eigenvalue estimates so far (the stopping rule of settled(), asked
// one block early). Block Krylov converges faster than geometrically: on the
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

KrylovProblem describe(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, const RandomizedSettings& settings,
                       double frobenius2) {
  const bool right_side = op.cols() <= op.rows();
  const double level = rounding_level(op);
  return {op,
          k,
          l,
          settings,
          frobenius2,
          right_side,
          right_side ? op.cols() : op.rows(),
          level * frobenius2,
          std::max(kChangeFloor, level) * frobenius2,
          op.fuses_normal_products()};
}

// W_0 = orth(Ω), Ω s×l Gaussian from the seed.
void start(const KrylovProblem& p, KrylovSpace& s) {
  s.w = gaussian_matrix(p.space, p.l, p.settings.seed);
  orthonormalize(s.w);
}

// Y_b = forward(W_b), and with a fusing operator Z_b = backward(Y_b) in the same sweep.
void multiply(const KrylovProblem& p, bool fused, KrylovSpace& s, KrylovStatus& status) {
  if (fused) {
    s.z_next = p.right_side ? p.op.apply_normal(s.w, s.y) : p.op.apply_normal_transpose(s.w, s.y);
    status.passes += 2;
  } else {
    s.y.resize(0, 0);  // the previous block's Y goes before the new one is made
    s.y = p.forward(s.w);
    ++status.passes;
  }
  s.z_made = fused;
  if (!p.right_side) s.ys.push_back(s.y);
  ++status.blocks;
}

// Appends W_b to K and G's new row and column: Z_iᵀ·W_b for the earlier
// blocks, and the block's own Y_bᵀ·Y_b.
void grow(const KrylovProblem& p, KrylovSpace& s) {
  const Eigen::Index m_old = s.krylov.cols(), lb = s.w.cols(), m = m_old + lb;
  s.krylov.conservativeResize(p.space, m);
  s.krylov.rightCols(lb) = s.w;
  s.gram.conservativeResize(m, m);
  if (m_old > 0) s.gram.block(0, m_old, m_old, lb).noalias() = s.zs.transpose() * s.w;
  auto diagonal = s.gram.block(m_old, m_old, lb, lb);
  if (s.z_made) {
    // Y_bᵀ·Y_b = W_bᵀ·Z_b, symmetrised: s·l² flops instead of N·l².
    const Eigen::MatrixXd wz = s.w.transpose() * s.z_next;
    diagonal = 0.5 * (wz + wz.transpose());
  } else {
    diagonal.setZero();
    diagonal.selfadjointView<Eigen::Lower>().rankUpdate(s.y.transpose());  // Y_bᵀ·Y_b
    diagonal.triangularView<Eigen::StrictlyUpper>() = diagonal.transpose();
  }
  s.gram.block(m_old, 0, lb, m_old) = s.gram.block(0, m_old, m_old, lb).transpose();
}

// One block: its products (fused unless it is likely the last), K and G grown,
// and Rayleigh–Ritz on the whole space (with vectors when likely the last).
void extend(const KrylovProblem& p, KrylovSpace& s, KrylovStatus& status) {
  const bool likely_last =
      s.krylov.cols() + s.w.cols() >= p.space || next_block_likely_last(status.changes, p.settings.tolerance);
  multiply(p, p.fuses && !likely_last, s, status);
  grow(p, s);
  const Eigen::Index m = s.gram.rows();
  s.previous = s.theta;
  s.ritz = symmetric_eigen(s.gram, likely_last);
  s.theta = s.ritz.values.head(std::min(p.k, m)).cwiseMax(0.0);
  status.errors.push_back(std::max(0.0, p.frobenius2 - s.theta.head(std::min(p.k, m)).sum()));
}

// The stopping rule. True when everything is captured (span(K) holds A_c's
// rows), K fills the space, or the leading k Ritz values settled: the next
// move, extrapolated from the last two (ρ = c_b/c_{b−1}, remaining ≈
// c_b·ρ/(1 − ρ)), is below the tolerance. Records the block's change.
bool settled(const KrylovProblem& p, const KrylovSpace& s, KrylovStatus& status) {
  if (p.frobenius2 - s.gram.trace() <= p.captured_floor || s.gram.rows() == p.space) {
    status.changes.push_back(0.0);
    return status.converged = true;
  }
  if (s.previous.size() != p.k || s.theta.size() != p.k) return false;
  const Eigen::ArrayXd scale = s.theta.array().max(p.change_floor);
  status.changes.push_back(((s.theta - s.previous).array().abs() / scale).maxCoeff());
  const std::vector<double>& c = status.changes;
  const std::size_t n = c.size();
  if (c[n - 1] == 0.0) return status.converged = true;
  if (n >= 2 && c[n - 1] < c[n - 2]) {
    const double rho = c[n - 1] / c[n - 2];
    if (c[n - 1] * rho / (1.0 - rho) < p.settings.tolerance) return status.converged = true;
  }
  return false;
}

// Z_b = backward(Y_b) (unless already made), kept whole for G; then the next
// block W_{b+1}: Z_b minus its part in span(K), orthonormalised. Block
// classical Gram–Schmidt, run twice around the orthonormalisation (BCGS2:
// Barlow & Smoktunowicz, Numer. Math. 123, 2013): orthogonal to span(K) to
// working accuracy.
void next_block(const KrylovProblem& p, KrylovSpace& s, KrylovStatus& status) {
  if (!s.z_made) {
    s.z_next = p.backward(s.y);
    ++status.passes;
  }
  const Eigen::Index m = s.krylov.cols(), lb = s.w.cols();
  s.zs.conservativeResize(p.space, m);
  s.zs.rightCols(lb) = s.z_next;
  const Eigen::Index width = std::min<Eigen::Index>(lb, p.space - m);
  Eigen::MatrixXd z = s.z_next.leftCols(width);
  const auto project_out = [&](Eigen::MatrixXd& block) { block.noalias() -= s.krylov * (s.krylov.transpose() * block); };
  const Eigen::VectorXd before = z.colwise().norm();
  project_out(z);
  // A column that vanished lies in span(K) already (an invariant subspace was
  // found): replace it by a fresh Gaussian direction, so the block stays full.
  const Eigen::VectorXd after = z.colwise().norm();
  if (!((after.array() > 1e-10 * before.array()).all())) {
    const Eigen::MatrixXd fresh = gaussian_matrix(p.space, width, p.settings.seed + 1 + std::uint64_t(status.blocks));
    for (Eigen::Index j = 0; j < width; ++j)
      if (!(after(j) > 1e-10 * before(j))) z.col(j) = fresh.col(j);
    project_out(z);
  }
  orthonormalize(z);
  project_out(z);
  orthonormalize(z);
  s.w = std::move(z);
}

// The answer's σ² (the l leading, decreasing) and A_c's k leading right singular vectors.
struct RitzAnswer {
  Eigen::VectorXd sigma2;
  Eigen::MatrixXd right;
};

// Smaller σ² than kGramRitzFloor·σ₁² G knows only to rounding of the largest
// (σ to √u·σ₁), so σ and the vectors come from an SVD of the product itself,
// Y_l = A_c·V_l (variable side: one more pass; observation side: from the
// stored Y_b): QR, then the l×l SVD, which resolves σ down to about u·σ₁.
// sel: m×l_r, G's leading eigenvectors; v_l = K·sel.
RitzAnswer resolve_by_svd(const KrylovProblem& p, KrylovSpace& s, const Eigen::MatrixXd& sel,
                          const Eigen::MatrixXd& v_l, KrylovStatus& status) {
  Eigen::MatrixXd y_l;
  if (p.right_side) {
    y_l = p.forward(v_l);
    ++status.passes;
  } else {
    y_l = Eigen::MatrixXd::Zero(p.op.cols(), sel.cols());
    Eigen::Index offset = 0;
    for (const Eigen::MatrixXd& yi : s.ys) {
      y_l.noalias() += yi * sel.middleRows(offset, yi.cols());
      offset += yi.cols();
    }
    s.ys.clear();
  }
  const Eigen::MatrixXd r = orthonormalize(y_l);
  const SmallSvd svd = small_svd(r);
  // Variable side: A_c·V_l = Q·U_r·Σ·V_rᵀ, so A_c's right singular vectors are V_l·V_r.
  // Observation side: A_cᵀ·U_l = Q·U_r·Σ·V_rᵀ, so they are Q·U_r.
  return {svd.values.array().square(),
          p.right_side ? Eigen::MatrixXd(v_l * svd.V.leftCols(p.k))
                       : Eigen::MatrixXd(y_l * svd.U.leftCols(p.k))};
}

// Rayleigh–Ritz: G = S·Θ·Sᵀ, and the l leading Ritz vectors V_l = K·S_l span
// the answer. (All m vectors: LAPACK's dsyevd forms them faster than dsyevr
// forms the l leading ones, which it does by bisection and inverse iteration;
// docs/performance.md.)
RitzAnswer ritz_answer(const KrylovProblem& p, KrylovSpace& s, KrylovStatus& status) {
  s.y.resize(0, 0);
  s.zs.resize(0, 0);
  const Eigen::Index m = s.gram.rows(), lr = std::min(p.l, m);
  const SymmetricEigen eig = s.ritz.vectors.cols() == m ? std::move(s.ritz) : symmetric_eigen(s.gram, true);
  const Eigen::MatrixXd sel = eig.vectors.leftCols(lr);
  const Eigen::MatrixXd v_l = s.krylov * sel;
  s.krylov.resize(0, 0);
  const Eigen::VectorXd theta_l = eig.values.head(lr).cwiseMax(0.0);
  // G's rounding is of order u·σ₁² (as the exact path's covariance), so in
  // double Θ holds σ_k² to about m·u·σ₁²/σ_k² <= 3e-8 relative here: the Ritz
  // pairs are the answer. (With single-precision products u is the operator's,
  // 2⁻²⁴ or more: that is the single path's bound, see docs/performance.md,
  // "Precision".)
  if (p.right_side && theta_l(p.k - 1) >= kGramRitzFloor * theta_l(0)) return {theta_l, v_l.leftCols(p.k)};
  return resolve_by_svd(p, s, sel, v_l, status);
}

// The basis's components and eigenvalues, and the report's figures.
void finish(const KrylovProblem& p, KrylovSpace& s, KrylovStatus& status, Solution& out) {
  const Eigen::Index m = s.gram.rows();
  RitzAnswer answer = ritz_answer(p, s, status);
  apply_sign_convention(answer.right);
  out.basis.components = std::move(answer.right);
  out.basis.eigenvalues = answer.sigma2.head(p.k) / double(p.op.rows() - 1);
  out.report.scheme = "block Krylov";
  out.report.krylov_width = m;
  out.report.passes = status.passes;
  out.report.converged = status.converged;
  out.report.last_relative_change =
      status.changes.empty() ? std::numeric_limits<double>::quiet_NaN() : status.changes.back();
  // The residual of the l leading Ritz vectors: an l-dimensional subspace, as
  // for the power scheme (‖A_c·K·S_l‖²_F = Σ of the l leading Ritz values).
  set_residual(out.report, p.frobenius2, answer.sigma2.sum(), p.op);
  out.report.optimality_gap_estimate =
      status.errors.back() <= p.captured_floor ? 0.0 : extrapolated_gap(status.errors, p.frobenius2);
}

}  // namespace

void block_krylov(const CenteredOperator& op, Eigen::Index k, Eigen::Index l, const RandomizedSettings& settings,
                  double frobenius2, Solution& out) {
  const KrylovProblem problem = describe(op, k, l, settings, frobenius2);
  KrylovSpace space;
  KrylovStatus status;
  start(problem, space);
  for (;;) {
    extend(problem, space, status);
    if (settled(problem, space, status)) break;
    if (status.passes + 2 > settings.max_passes) break;
    next_block(problem, space, status);
  }
  finish(problem, space, status, out);
}

}  // namespace pcasweep::detail
