#include "solve/blocked_operator.hpp"

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/error.hpp"

namespace pcasweep {

namespace {

// Runs work(b, block, partial) for every block across the threads: each
// thread makes its blocks into its own buffer and adds into its own
// rows×cols partial (static schedule: a given thread count always gives each
// thread the same blocks); returns the partials summed in thread order.
template <class Work>
Eigen::MatrixXd over_blocks(const ObservationBlocks& source, Eigen::Index rows, Eigen::Index cols, Work&& work) {
  const Eigen::Index blocks = source.block_count();
  const int threads = std::max(1, std::min<int>(omp_in_parallel() ? 1 : omp_get_max_threads(), int(blocks)));
  std::vector<Eigen::MatrixXd> partial(std::size_t(threads), Eigen::MatrixXd::Zero(rows, cols));
#pragma omp parallel num_threads(threads)
  {
    Eigen::MatrixXd& mine = partial[std::size_t(omp_get_thread_num())];
    RowBlock block;
#pragma omp for schedule(static)
    for (Eigen::Index b = 0; b < blocks; ++b) {
      source.fill(b, block);
      work(b, block, mine);
    }
  }
  for (int t = 1; t < threads; ++t) partial[0] += partial[std::size_t(t)];
  return std::move(partial[0]);
}

// Copies the rows of `from` (block order) to their places in `to` (X order), or back.
template <class Dst, class Src>
void scatter_rows(const std::vector<std::pair<Eigen::Index, Eigen::Index>>& segments, Dst& to, const Src& from) {
  Eigen::Index at = 0;
  for (const auto& [first, count] : segments) {
    to.middleRows(first, count) = from.middleRows(at, count);
    at += count;
  }
}
template <class Dst, class Src>
void gather_rows(const std::vector<std::pair<Eigen::Index, Eigen::Index>>& segments, Dst& to, const Src& from) {
  Eigen::Index at = 0;
  for (const auto& [first, count] : segments) {
    to.middleRows(at, count) = from.middleRows(first, count);
    at += count;
  }
}

}  // namespace

template <class Scalar>
BlockedOperator<Scalar>::BlockedOperator(const ObservationBlocks& source) : source_(source) {
  if (source.rows() < 1 || source.block_count() < 1) throw usage_error("internal: an operator over no observations");
  // Samples are integers, so these double sums are exact (below 2^53) and the
  // mean is the correctly rounded Σx/N whatever the order of the blocks.
  const Eigen::MatrixXd sums = over_blocks(source, source.cols(), 1, [](Eigen::Index, const RowBlock& block, Eigen::MatrixXd& part) {
    part.col(0) += block.colwise().sum().transpose();
  });
  mean_ = sums.col(0) / double(source.rows());
}

template <class Scalar>
void BlockedOperator<Scalar>::compute_scatter() const {
  if (have_scatter_) return;
  const Eigen::Index d = source_.cols();
  // Columns 0..d−1: the lower triangle of the scatter; column d: the sums of squares.
  Eigen::MatrixXd total = over_blocks(source_, d, d + 1, [&](Eigen::Index, const RowBlock& block, Eigen::MatrixXd& part) {
    RowBlock centred = block;
    centred.rowwise() -= mean_.transpose();
    part.leftCols(d).template selfadjointView<Eigen::Lower>().rankUpdate(centred.transpose());
    part.col(d) += centred.colwise().squaredNorm().transpose();
  });
  sums_ = total.col(d);
  scatter_ = total.leftCols(d);
  scatter_.template triangularView<Eigen::StrictlyUpper>() = scatter_.transpose();
  have_scatter_ = true;
}

template <class Scalar>
Eigen::MatrixXd BlockedOperator<Scalar>::scatter() const {
  compute_scatter();
  return scatter_;
}

template <class Scalar>
Eigen::VectorXd BlockedOperator<Scalar>::column_sums_of_squares() const {
  if (!have_scatter_ && sums_.size() == 0) {
    const Eigen::MatrixXd s = over_blocks(source_, source_.cols(), 1, [&](Eigen::Index, const RowBlock& block, Eigen::MatrixXd& part) {
      part.col(0) += (block.rowwise() - mean_.transpose()).colwise().squaredNorm().transpose();
    });
    sums_ = s.col(0);
  }
  return sums_;
}

template <class Scalar>
double BlockedOperator<Scalar>::offset_ratio() const {
  const double centred = column_sums_of_squares().sum();
  if (!(centred > 0.0)) return std::numeric_limits<double>::infinity();
  return std::sqrt((centred + double(rows()) * mean_.squaredNorm()) / centred);
}

template <class Scalar>
double BlockedOperator<Scalar>::unit_roundoff() const {
  if constexpr (std::is_same_v<Scalar, float>) return kSingleRoundoff * offset_ratio();
  return kDoubleRoundoff;
}

template <class Scalar>
Eigen::MatrixXd BlockedOperator<Scalar>::apply(const Eigen::MatrixXd& omega) const {
  // A_c·Ω = A·Ω − 1·(μᵀΩ), block by block into the rows each block owns.
  using Mat = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
  const Mat w = omega.template cast<Scalar>();
  const Eigen::RowVectorXd shift = mean_.transpose() * omega;
  Eigen::MatrixXd y(rows(), omega.cols());
  over_blocks(source_, 0, 0, [&](Eigen::Index b, const RowBlock& block, Eigen::MatrixXd&) {
    Eigen::MatrixXd yb = (block.template cast<Scalar>() * w).template cast<double>();
    yb.rowwise() -= shift;
    scatter_rows(source_.segments(b), y, yb);
  });
  return y;
}

template <class Scalar>
Eigen::MatrixXd BlockedOperator<Scalar>::apply_transpose(const Eigen::MatrixXd& y) const {
  // A_cᵀ·Y = Σ_b A_bᵀ·Y_b − μ·(1ᵀY).
  Eigen::MatrixXd z = over_blocks(source_, cols(), y.cols(), [&](Eigen::Index b, const RowBlock& block, Eigen::MatrixXd& part) {
    Eigen::MatrixXd yb(block.rows(), y.cols());
    gather_rows(source_.segments(b), yb, y);
    part += (block.template cast<Scalar>().transpose() * yb.template cast<Scalar>().eval()).template cast<double>();
  });
  z.noalias() -= mean_ * y.colwise().sum();
  return z;
}

template <class Scalar>
Eigen::MatrixXd BlockedOperator<Scalar>::apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const {
  // One pass: each block makes Y_b = A_b·W − 1·(μᵀW), stores it, and adds A_bᵀ·Y_b.
  using Mat = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
  const Mat ws = w.template cast<Scalar>();
  const Eigen::RowVectorXd shift = mean_.transpose() * w;
  y.resize(rows(), w.cols());
  Eigen::MatrixXd z = over_blocks(source_, cols(), w.cols(), [&](Eigen::Index b, const RowBlock& block, Eigen::MatrixXd& part) {
    const auto a = block.template cast<Scalar>().eval();
    Eigen::MatrixXd yb = (a * ws).template cast<double>();
    yb.rowwise() -= shift;
    scatter_rows(source_.segments(b), y, yb);
    part += (a.transpose() * yb.template cast<Scalar>().eval()).template cast<double>();
  });
  z.noalias() -= mean_ * y.colwise().sum();
  return z;
}

template class BlockedOperator<double>;
template class BlockedOperator<float>;

}  // namespace pcasweep
