#include "solve/operator.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <omp.h>

#include "core/error.hpp"

namespace pcasweep {

namespace {
// Column means and sums of squares about them of X (N×d, any scalar),
// accumulated in double column by column (contiguous in memory), in one pass:
// Σ(x − x₀) and Σ(x − x₀)² about the column's first entry x₀, which takes
// the offset out before squaring (the shifted-data algorithm, Chan, Golub &
// LeVeque, Am. Stat. 37(3), 1983), then μ = x₀ + S₁/N and Σ(x − μ)² = S₂ − S₁²/N.
// `omp simd` lets the two sums vectorise (it permits reassociating them).
template <class Matrix>
void column_moments(const Matrix& X, Eigen::VectorXd& mean, Eigen::VectorXd& sums) {
  const Eigen::Index n = X.rows();
  mean.resize(X.cols());
  sums.resize(X.cols());
#pragma omp parallel for schedule(static)
  for (Eigen::Index j = 0; j < X.cols(); ++j) {
    const auto* x = X.col(j).data();
    const double x0 = n > 0 ? double(x[0]) : 0.0;
    double s1 = 0.0, s2 = 0.0;
#pragma omp simd reduction(+ : s1, s2)
    for (Eigen::Index i = 0; i < n; ++i) {
      const double v = double(x[i]) - x0;
      s1 += v;
      s2 += v * v;
    }
    mean(j) = x0 + s1 / double(n);
    sums(j) = std::max(0.0, s2 - s1 * s1 / double(n));
  }
}

// Runs block(b, partial, scratch) for b in 0..blocks−1 across the threads,
// each thread adding into its own rows×cols partial sum and reusing its own
// scratch matrix between blocks; returns the sum of the partials.
template <class Block>
Eigen::MatrixXd sweep(Eigen::Index blocks, Eigen::Index rows, Eigen::Index cols, Block&& block) {
  const int threads = std::max(1, std::min<int>(omp_get_max_threads(), int(blocks)));
  std::vector<Eigen::MatrixXd> partial(threads, Eigen::MatrixXd::Zero(rows, cols));
#pragma omp parallel num_threads(threads)
  {
    Eigen::MatrixXd& mine = partial[omp_get_thread_num()];
    Eigen::MatrixXd scratch;
#pragma omp for schedule(static)
    for (Eigen::Index b = 0; b < blocks; ++b) block(b, mine, scratch);
  }
  for (int t = 1; t < threads; ++t) partial[0] += partial[t];
  return std::move(partial[0]);
}

// Rows per block when centring on the fly: big enough for fast GEMM, small
// enough that a block of 192 variables stays in cache-friendly sizes.
constexpr Eigen::Index kBlockRows = 2048;

// The scatter (X − 1·shiftᵀ)ᵀ(X − 1·shiftᵀ), d×d, of X (N×d, any scalar;
// shift: d). Blocks of rows are widened to double and shifted into each
// thread's scratch buffer and accumulated: no centred copy of X, and no
// cancellation from AᵀA − N·μμᵀ.
template <class Matrix>
Eigen::MatrixXd blocked_scatter(const Matrix& X, const Eigen::VectorXd& shift) {
  const Eigen::Index n = X.rows(), d = X.cols();
  Eigen::MatrixXd total =
      sweep((n + kBlockRows - 1) / kBlockRows, d, d, [&](Eigen::Index b, Eigen::MatrixXd& part, Eigen::MatrixXd& block) {
        const Eigen::Index start = b * kBlockRows;
        block = X.middleRows(start, std::min(kBlockRows, n - start)).template cast<double>();
        block.rowwise() -= shift.transpose();
        part.selfadjointView<Eigen::Lower>().rankUpdate(block.transpose());
      });
  total.triangularView<Eigen::StrictlyUpper>() = total.transpose();
  return total;
}

// Rows (or columns) per block of a fused sweep: the block (512×1024 floats,
// 2 MiB) stays in cache between its two products; 128 to 1024 measured alike.
constexpr Eigen::Index kSweepBlock = 512;
}  // namespace

Eigen::MatrixXd CenteredOperator::apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const {
  y = apply(w);
  return apply_transpose(y);
}

Eigen::MatrixXd CenteredOperator::apply_normal_transpose(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const {
  y = apply_transpose(w);
  return apply(y);
}

DenseOperator::DenseOperator(const Eigen::MatrixXd& X) : X_(X) {
  // Column means, accumulated in double column by column (contiguous in memory).
  mean_.resize(X.cols());
#pragma omp parallel for schedule(static)
  for (Eigen::Index j = 0; j < X.cols(); ++j) mean_(j) = X.col(j).mean();
}

Eigen::MatrixXd DenseOperator::apply(const Eigen::MatrixXd& omega) const {
  // A_c·Ω = A·Ω − 1·(μᵀΩ): the centring costs one row vector. The result
  // starts as −1·(μᵀΩ) and the product is accumulated onto it (GEMM with
  // β = 1), so no separate zeroing or subtraction pass over N×l is made.
  Eigen::MatrixXd y(X_.rows(), omega.cols());
  y.rowwise() = -(mean_.transpose() * omega);
  y.noalias() += X_ * omega;
  return y;
}

Eigen::MatrixXd DenseOperator::apply_transpose(const Eigen::MatrixXd& y) const {
  // A_cᵀ·Y = AᵀY − μ·(1ᵀY), accumulated onto the rank-one term as above.
  Eigen::MatrixXd z = -mean_ * y.colwise().sum();
  z.noalias() += X_.transpose() * y;
  return z;
}

Eigen::MatrixXd DenseOperator::scatter() const { return blocked_scatter(X_, mean_); }

Eigen::VectorXd DenseOperator::column_sums_of_squares() const {
  Eigen::VectorXd s(X_.cols());
#pragma omp parallel for schedule(static)
  for (Eigen::Index j = 0; j < X_.cols(); ++j) s(j) = (X_.col(j).array() - mean_(j)).square().sum();
  return s;
}

SingleOperator::SingleOperator(const Eigen::MatrixXd& X) : owned_(X.cast<float>()), X_(&owned_) {
  column_moments(X, mean_, sums_);
}

SingleOperator::SingleOperator(const Eigen::MatrixXf& X) : X_(&X) { column_moments(X, mean_, sums_); }

double SingleOperator::offset_ratio() const {
  const double centred = sums_.sum();
  if (!(centred > 0.0)) return std::numeric_limits<double>::infinity();
  return std::sqrt((centred + double(X_->rows()) * mean_.squaredNorm()) / centred);
}

double SingleOperator::unit_roundoff() const { return kSingleRoundoff * offset_ratio(); }

Eigen::MatrixXd SingleOperator::apply(const Eigen::MatrixXd& omega) const {
  // A_c·Ω = A·Ω − 1·(μᵀΩ): the product in float, the centring term in double.
  Eigen::MatrixXd y(X_->rows(), omega.cols());
  y.rowwise() = -(mean_.transpose() * omega);
  y += (*X_ * omega.cast<float>()).cast<double>();
  return y;
}

Eigen::MatrixXd SingleOperator::apply_transpose(const Eigen::MatrixXd& y) const {
  // A_cᵀ·Y = AᵀY − μ·(1ᵀY), likewise.
  Eigen::MatrixXd z = -mean_ * y.colwise().sum();
  z += (X_->transpose() * y.cast<float>()).cast<double>();
  return z;
}

Eigen::MatrixXd SingleOperator::apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const {
  // Blocks of rows R_b: Y_b = R_b·W − 1·(μᵀW) (centred in double), then
  // A_cᵀ·Y = Σ_b R_bᵀ·Y_b − μ·(1ᵀY), the sum in double.
  const Eigen::Index n = X_->rows(), d = X_->cols(), l = w.cols();
  const Eigen::MatrixXf wf = w.cast<float>();
  const Eigen::RowVectorXd shift = mean_.transpose() * w;
  y.resize(n, l);
  Eigen::MatrixXd z = sweep((n + kSweepBlock - 1) / kSweepBlock, d, l, [&](Eigen::Index b, Eigen::MatrixXd& part, Eigen::MatrixXd&) {
    const Eigen::Index start = b * kSweepBlock, count = std::min(kSweepBlock, n - start);
    const auto rows = X_->middleRows(start, count);
    auto yb = y.middleRows(start, count);
    yb = (rows * wf).cast<double>();
    yb.rowwise() -= shift;
    part += (rows.transpose() * yb.cast<float>()).cast<double>();
  });
  z.noalias() -= mean_ * y.colwise().sum();
  return z;
}

Eigen::MatrixXd SingleOperator::apply_normal_transpose(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const {
  // Blocks of columns C_b (contiguous): Y_b = C_bᵀ·W − μ_b·(1ᵀW), then
  // A_c·Y = Σ_b C_b·Y_b − 1·(μᵀY).
  const Eigen::Index n = X_->rows(), d = X_->cols(), l = w.cols();
  const Eigen::MatrixXf wf = w.cast<float>();
  const Eigen::RowVectorXd total = w.colwise().sum();
  y.resize(d, l);
  Eigen::MatrixXd z = sweep((d + kSweepBlock - 1) / kSweepBlock, n, l, [&](Eigen::Index b, Eigen::MatrixXd& part, Eigen::MatrixXd&) {
    const Eigen::Index start = b * kSweepBlock, count = std::min(kSweepBlock, d - start);
    const auto cols = X_->middleCols(start, count);
    auto yb = y.middleRows(start, count);
    yb = (cols.transpose() * wf).cast<double>();
    yb.noalias() -= mean_.segment(start, count) * total;
    part += (cols * yb.cast<float>()).cast<double>();
  });
  z.rowwise() -= mean_.transpose() * y;
  return z;
}

Eigen::MatrixXd SingleOperator::scatter() const { return blocked_scatter(*X_, mean_); }

Precision parse_precision(const std::string& text) {
  if (text == "double") return Precision::double_precision;
  if (text == "single") return Precision::single_precision;
  throw usage_error("--precision takes double or single, not '" + text + "'");
}

const char* text_of(Precision precision) {
  return precision == Precision::single_precision ? "single" : "double";
}

}  // namespace pcasweep
