// pcasweep/solve/operator.hpp — the only view of the data a solver gets.
//
// Contract: a CenteredOperator stands for the centred data matrix
// A_c = A − 1·μᵀ (A: N×d observations, μ: d column means) without ever
// forming it. It is a ScatterSource (solve/scatter_source.hpp: N, d, μ, the
// scatter matrix) that also makes products with blocks of vectors, which the
// randomized solver asks for; in-memory data, streamed files and distributed
// shards are then different operators behind the same solvers. Products come
// back in double whatever precision they were computed in; unit_roundoff()
// tells the solver which (it sets the solver's noise floors from it).
#pragma once

#include <Eigen/Dense>
#include <string>

#include "solve/scatter_source.hpp"

namespace pcasweep {

// Unit roundoff of IEEE double (2⁻⁵³) and single (2⁻²⁴) arithmetic.
inline constexpr double kDoubleRoundoff = 0x1p-53;
inline constexpr double kSingleRoundoff = 0x1p-24;

class CenteredOperator : public ScatterSource {
 public:
  // Ω: d×l. Returns A_c·Ω, N×l.
  virtual Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const = 0;
  // Y: N×l. Returns A_cᵀ·Y, d×l.
  virtual Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const = 0;
  // Unit roundoff of the arithmetic apply() and apply_transpose() run in:
  // 2⁻⁵³ (double, the default) or 2⁻²⁴ (single).
  virtual double unit_roundoff() const { return kDoubleRoundoff; }
  // W: d×l. Sets Y = A_c·W (N×l) and returns A_cᵀ·Y (d×l). By default the
  // two products one after the other; see fuses_normal_products().
  virtual Eigen::MatrixXd apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const;
  // W: N×l. Sets Y = A_cᵀ·W (d×l) and returns A_c·Y (N×l), likewise.
  virtual Eigen::MatrixXd apply_normal_transpose(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const;
  // True when the apply_normal pair costs clearly less than its two products
  // apart (one sweep over the data instead of two); solvers that would make
  // both products anyway then call it.
  virtual bool fuses_normal_products() const { return false; }
};

// The operator over an observation matrix held in memory.
class DenseOperator : public CenteredOperator {
 public:
  // X: N×d, kept by reference: it must outlive the operator. N >= 1.
  explicit DenseOperator(const Eigen::MatrixXd& X);

  Eigen::Index rows() const override { return X_.rows(); }
  Eigen::Index cols() const override { return X_.cols(); }
  const Eigen::VectorXd& mean() const override { return mean_; }
  Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const override;
  Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const override;
  Eigen::MatrixXd scatter() const override;
  Eigen::VectorXd column_sums_of_squares() const override;

 private:
  const Eigen::MatrixXd& X_;
  Eigen::VectorXd mean_;
};

// The operator over float32 observations whose products run in single
// precision (sgemm runs at a higher rate than dgemm: docs/performance.md,
// "Precision"). The mean is removed implicitly, as in DenseOperator;
// the mean, the sums of squares, the scatter and the centring terms are
// accumulated in double. Products carry rounding of about √(inner length)·2⁻²⁴
// against ‖row‖·‖column‖ of the uncentred data, so data whose mean dwarfs its
// spread lose accuracy in proportion: unit_roundoff() reports
// 2⁻²⁴·‖A‖_F/‖A_c‖_F, the rounding relative to the centred data.
class SingleOperator : public CenteredOperator {
 public:
  // X: N×d, N >= 1. Keeps a float32 copy (N·d·4 bytes, exact for samples of
  // up to 24 bits); X need not outlive the operator.
  explicit SingleOperator(const Eigen::MatrixXd& X);
  // X: N×d float32 observations, N >= 1, kept by reference (no copy): it
  // must outlive the operator.
  explicit SingleOperator(const Eigen::MatrixXf& X);
  SingleOperator(Eigen::MatrixXf&&) = delete;  // a temporary would not outlive the operator
  SingleOperator(const SingleOperator&) = delete;
  SingleOperator& operator=(const SingleOperator&) = delete;

  Eigen::Index rows() const override { return X_->rows(); }
  Eigen::Index cols() const override { return X_->cols(); }
  const Eigen::VectorXd& mean() const override { return mean_; }
  Eigen::MatrixXd apply(const Eigen::MatrixXd& omega) const override;
  Eigen::MatrixXd apply_transpose(const Eigen::MatrixXd& y) const override;
  Eigen::MatrixXd scatter() const override;
  Eigen::VectorXd column_sums_of_squares() const override { return sums_; }
  double unit_roundoff() const override;
  // One sweep: each block of rows (columns for the transpose) makes both of
  // its products while it is in cache, which was measured faster than two
  // sgemm calls; in double the same sweep gained nothing, so DenseOperator
  // does not fuse (docs/performance.md, "Figures once quoted in headers").
  Eigen::MatrixXd apply_normal(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const override;
  Eigen::MatrixXd apply_normal_transpose(const Eigen::MatrixXd& w, Eigen::MatrixXd& y) const override;
  bool fuses_normal_products() const override { return true; }

  // Returns ‖A‖_F/‖A_c‖_F of the data: how much larger the uncentred data
  // are than their spread (1 for centred data; infinite when A_c = 0).
  double offset_ratio() const;

 private:
  Eigen::MatrixXf owned_;        // the copy, when made from double observations
  const Eigen::MatrixXf* X_;     // N×d, not centred: owned_ or the caller's
  Eigen::VectorXd mean_;         // d
  Eigen::VectorXd sums_;         // d, Σ (x − μ)² accumulated in double
};

// Precision of the products a solver asks of the data.
enum class Precision { double_precision, single_precision };

// Parses "double" or "single". Throws Error(usage).
Precision parse_precision(const std::string& text);

// Returns "double" or "single".
const char* text_of(Precision precision);

}  // namespace pcasweep
