// Checks of the single-precision product path (SingleOperator in
// solve/operator.hpp, solve(X, settings) with Precision::single_precision).
//
// References: Eigen's double-precision products and BDCSVD on the explicitly
// centred matrix; rounding-error bounds from Higham, "Accuracy and Stability
// of Numerical Algorithms" (2nd ed., 2002: float32 unit roundoff u = 2⁻²⁴,
// γ_n = n·u/(1 − n·u) for a sum of n terms, §3.1) and the probabilistic bound
// of Higham & Mary, "A new approach to probabilistic rounding error analysis",
// SIAM J. Sci. Comput. 41(5), 2019, Theorem 2.4 (cited from memory): an inner
// product of n terms computed in precision u errs by at most
// λ·√n·u·Σ|x_i·y_i| (to first order) with probability at least
// 1 − 2n·exp(−λ²(1 − u)²/2). We take λ = 8: 2·1100·e⁻³² ≈ 3e-11 per entry,
// below 1e-4 over the ~1e6 entries checked here (a union bound).
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "solve/operator.hpp"
#include "solve/randomized.hpp"
#include "solve/solver.hpp"
#include "../support/spectra.hpp"
#include "../support/reference_decompositions.hpp"

using namespace pcasweep;
using pcasweep::testing::centred;
using pcasweep::testing::geometric_spectrum;
using pcasweep::testing::with_spectrum;

namespace {

constexpr double kU = 0x1p-24;       // float32 unit roundoff (Higham, Table 2.1; from memory)
constexpr double kUd = 0x1p-53;      // float64 unit roundoff
constexpr double kLambda = 8.0;      // Higham & Mary's λ, see the header comment


// Higham & Mary's probabilistic constant for inner products of n terms.
double gamma_tilde(Eigen::Index n) { return kLambda * std::sqrt(double(n)) * kU; }

// Largest |got − ref| / bound over the entries; the check is "this <= 1".
double worst_ratio(const Eigen::MatrixXd& got, const Eigen::MatrixXd& ref, const Eigen::MatrixXd& bound) {
  REQUIRE(got.rows() == ref.rows());
  REQUIRE(got.cols() == ref.cols());
  return ((got - ref).cwiseAbs().array() / bound.array()).maxCoeff();
}

double relative_frobenius(const Eigen::MatrixXd& got, const Eigen::MatrixXd& ref) {
  return (got - ref).norm() / ref.norm();
}

// Test data, N×d. "offset": Gaussian entries (spread ~1) on column means
// 900..1100, so ‖A‖_F/‖A_c‖_F ≈ 1000. "bytes": integers 0..255 (exactly
// representable in float32), ‖A‖_F/‖A_c‖_F ≈ 2, as for 8-bit images.
Eigen::MatrixXd offset_data(Eigen::Index n, Eigen::Index d, std::uint64_t seed) {
  Eigen::MatrixXd a = gaussian_matrix(n, d, seed);
  a.rowwise() += Eigen::RowVectorXd::LinSpaced(d, 900.0, 1100.0);
  return a;
}

Eigen::MatrixXd byte_data(Eigen::Index n, Eigen::Index d, std::uint64_t seed) {
  // Normal → uniform (0, 1) by erfc, then 256 levels; plus a smooth column
  // trend so the columns differ in mean.
  const Eigen::MatrixXd g = gaussian_matrix(n, d, seed);
  Eigen::MatrixXd a(n, d);
  for (Eigen::Index j = 0; j < d; ++j)
    for (Eigen::Index i = 0; i < n; ++i) {
      const double uniform = 0.5 * std::erfc(-g(i, j) / std::sqrt(2.0));
      a(i, j) = std::floor(std::min(255.0, 200.0 * uniform + 40.0 * double(j % 7) / 6.0));
    }
  return a;
}

// |A| + 1·|μ|ᵀ (N×d): the magnitude that every rounding in the operator's
// products and in the double reference is relative to. The float32 GEMM
// rounds against the uncentred data |A| (operator.hpp's contract); the
// centring term μ·(1ᵀY) and the reference's explicit A_c = A − 1·μᵀ round in
// double against |μ| and |A_c| <= |A| + |μ|.
Eigen::MatrixXd magnitude(const Eigen::MatrixXd& a) {
  return a.cwiseAbs().rowwise() + a.colwise().mean().cwiseAbs();
}

// Relative bound on an entry of a product with inner length `inner`, made
// from the uncentred float32 data, against magnitude(A)·|Q|: the conversions
// of A and of Q to float32 (u each, worst case), the float32 GEMM (Higham &
// Mary's λ·√inner·u; the +1 covers second-order terms), and double rounding
// of the centring term and of the reference (γ_inner in double, twice).
double product_bound(Eigen::Index inner) { return 2.0 * kU + gamma_tilde(inner + 1) + 2.0 * double(inner) * kUd; }

// Every product of SingleOperator(a) against Eigen's double products on the
// explicitly centred matrix, with the bounds above (each stated beside its
// check). l = 37 test vectors: not a multiple of any GEMM kernel width.
void check_products(const Eigen::MatrixXd& a, const std::string& label) {
  CAPTURE(label);
  const Eigen::Index n = a.rows(), d = a.cols(), l = 37;
  const Eigen::MatrixXd ac = centred(a);
  const Eigen::MatrixXd mag = magnitude(a), abs_a = a.cwiseAbs(), abs_ac = ac.cwiseAbs();
  const SingleOperator op(a);
  REQUIRE(op.rows() == n);
  REQUIRE(op.cols() == d);
  const Eigen::MatrixXd w = gaussian_matrix(d, l, 101);   // right-hand side of apply / apply_normal
  const Eigen::MatrixXd v = gaussian_matrix(n, l, 102);   // right-hand side of the transposes

  // apply: A_c·Ω, N×l. Reference: Eigen's double product on the explicitly
  // centred matrix. Bound: product_bound(d)·(magnitude(A)·|Ω|), entrywise.
  const Eigen::MatrixXd y_ref = ac * w;
  const Eigen::MatrixXd y_bound = product_bound(d) * (mag * w.cwiseAbs());
  const Eigen::MatrixXd y = op.apply(w);
  INFO(label << ": sqrt(d)·unit_roundoff " << std::sqrt(double(d)) * op.unit_roundoff() << ", sqrt(N)·unit_roundoff "
             << std::sqrt(double(n)) * op.unit_roundoff());
  INFO(label << ": apply worst error/bound " << worst_ratio(y, y_ref, y_bound) << ", relative Frobenius " << relative_frobenius(y, y_ref));
  CHECK(worst_ratio(y, y_ref, y_bound) <= 1.0);
  // Normwise, the operator's stated accuracy (operator.hpp: rounding of about
  // √inner·2⁻²⁴ against the uncentred data, i.e. √inner·unit_roundoff()
  // against the centred data). A rule of thumb for rounding errors of random
  // sign (Higham & Mary's √n behaviour), not a proven bound, but far sharper
  // than the entrywise one (a systematic 1e-5 relative error in apply fails
  // it on the 8-bit-like data; it passes the entrywise bound).
  const double u_op = op.unit_roundoff();
  CHECK(relative_frobenius(y, y_ref) <= std::sqrt(double(d)) * u_op);

  // apply_transpose: A_cᵀ·V, d×l. Same reference and bound (inner length N).
  const Eigen::MatrixXd z_ref = ac.transpose() * v;
  const Eigen::MatrixXd z_bound = product_bound(n) * (mag.transpose() * v.cwiseAbs());
  const Eigen::MatrixXd z = op.apply_transpose(v);
  INFO(label << ": apply_transpose worst error/bound " << worst_ratio(z, z_ref, z_bound) << ", relative Frobenius " << relative_frobenius(z, z_ref));
  CHECK(worst_ratio(z, z_ref, z_bound) <= 1.0);
  CHECK(relative_frobenius(z, z_ref) <= std::sqrt(double(n)) * u_op);

  // apply_normal: Y = A_c·W (N×l) and A_cᵀ·Y (d×l) in one sweep over blocks
  // of 512 rows. Y has apply's reference and bound. For A_cᵀ·Y the bound is
  // taken in two steps, so that it stays sharp: (i) Ŷ, the Y returned, against
  // A_c·W as for apply; (ii) A_cᵀ·Y against Eigen's double A_cᵀ·Ŷ: Ŷ's own
  // float32 conversion, A's, and a float32 GEMM whose inner length is one
  // block of at most 512 rows (the block sums are added in double, as is the
  // centring term): product_bound(512)·(magnitude(A)ᵀ·|Ŷ|), plus γ_N in double.
  {
    Eigen::MatrixXd yn;
    const Eigen::MatrixXd zn = op.apply_normal(w, yn);
    const Eigen::Index block = std::min<Eigen::Index>(512, n);
    const Eigen::MatrixXd zn_ref = ac.transpose() * yn;
    const Eigen::MatrixXd zn_bound = (product_bound(block) + 2.0 * double(n) * kUd) * (mag.transpose() * yn.cwiseAbs());
    INFO(label << ": apply_normal Y worst error/bound " << worst_ratio(yn, y_ref, y_bound) << ", A_cᵀY worst error/bound "
                  << worst_ratio(zn, zn_ref, zn_bound) << ", A_cᵀY relative Frobenius against A_cᵀA_cW "
                  << relative_frobenius(zn, ac.transpose() * y_ref));
    CHECK(worst_ratio(yn, y_ref, y_bound) <= 1.0);
    CHECK(worst_ratio(zn, zn_ref, zn_bound) <= 1.0);
    // Normwise, as for apply: two products' rounding, so twice the allowance.
    CHECK(relative_frobenius(yn, y_ref) <= std::sqrt(double(d)) * u_op);
    CHECK(relative_frobenius(zn, ac.transpose() * y_ref) <= 2.0 * std::sqrt(double(d)) * u_op);
  }
  // apply_normal_transpose: Y = A_cᵀ·V (d×l) and A_c·Y (N×l), blocks of 512
  // columns; the same two steps.
  {
    Eigen::MatrixXd yt;
    const Eigen::MatrixXd zt = op.apply_normal_transpose(v, yt);
    const Eigen::Index block = std::min<Eigen::Index>(512, d);
    const Eigen::MatrixXd zt_ref = ac * yt;
    const Eigen::MatrixXd zt_bound = (product_bound(block) + 2.0 * double(d) * kUd) * (mag * yt.cwiseAbs());
    INFO(label << ": apply_normal_transpose Y worst error/bound " << worst_ratio(yt, z_ref, z_bound) << ", A_cY worst error/bound "
                  << worst_ratio(zt, zt_ref, zt_bound) << ", A_cY relative Frobenius against A_cA_cᵀV "
                  << relative_frobenius(zt, ac * z_ref));
    CHECK(worst_ratio(yt, z_ref, z_bound) <= 1.0);
    CHECK(worst_ratio(zt, zt_ref, zt_bound) <= 1.0);
    CHECK(relative_frobenius(yt, z_ref) <= std::sqrt(double(n)) * u_op);
    CHECK(relative_frobenius(zt, ac * z_ref) <= 2.0 * std::sqrt(double(n)) * u_op);
  }

  // mean: accumulated in double. Reference: Eigen's colwise().mean(). Bound:
  // γ_N in double (Higham §3.1) for each of the two, relative to mean |column|.
  const Eigen::VectorXd abs_mean = abs_a.colwise().mean().transpose();
  const Eigen::VectorXd mean_err = 2.0 * double(n) * kUd * abs_mean;
  const double mean_ratio = ((op.mean() - a.colwise().mean().transpose()).cwiseAbs().array() / mean_err.array()).maxCoeff();
  CHECK(mean_ratio <= 1.0);

  // Per-variable sums of squares Σ(x − μ)², from the double data. Reference:
  // Eigen's squaredNorm of the centred columns. Bound: the two means' errors
  // (mean_err, times 2·Σ|x − μ|) plus γ_{N+1} in double for each sum.
  const Eigen::VectorXd sums_ref = ac.colwise().squaredNorm().transpose();
  const Eigen::VectorXd sums_bound =
      (2.0 * mean_err.array() * abs_ac.colwise().sum().transpose().array() + 2.0 * double(n + 1) * kUd * sums_ref.array()).matrix();
  const double sums_ratio = ((op.column_sums_of_squares() - sums_ref).cwiseAbs().array() / sums_bound.array()).maxCoeff();
  INFO(label << ": mean worst error/bound " << mean_ratio << ", sums of squares worst error/bound " << sums_ratio);
  CHECK(sums_ratio <= 1.0);

  // unit_roundoff(): 2⁻²⁴·‖A‖_F/‖A_c‖_F (operator.hpp), recomputed directly in double.
  CHECK(std::abs(op.unit_roundoff() - kU * a.norm() / ac.norm()) <= 1e-12 * op.unit_roundoff());

  // scatter: the float32 copy Â = A + E (|E| <= u·|A|; E = 0 when A is
  // exact in float32, as for the integer data) shifted by the double mean and
  // accumulated in double. Âᵀ_cÂ_c − A_cᵀA_c = A_cᵀE + EᵀA_c + EᵀE, so
  // |error| <= u·(|A_c|ᵀ|A| + |A|ᵀ|A_c|) + u²·|A|ᵀ|A|, plus the mean errors
  // (both sides) and the double accumulation γ_{N+2}·(|A_c| + |E|)ᵀ(|A_c| + |E|)
  // (Higham §3.1, worst case). On the integer data only the double part
  // remains, so a scatter summed in float32 would fail there.
  const Eigen::MatrixXd s_ref = ac.transpose() * ac;
  const bool exact_copy = (a.cast<float>().cast<double>().array() == a.array()).all();
  const double e = exact_copy ? 0.0 : kU;
  const Eigen::MatrixXd cross = abs_ac.transpose() * abs_a;
  const Eigen::MatrixXd spread = abs_ac + e * abs_a;
  const Eigen::MatrixXd shift = Eigen::VectorXd::Ones(n) * mean_err.transpose();  // N×d
  const Eigen::MatrixXd shift_term = spread.transpose() * shift;
  const Eigen::MatrixXd s_bound = e * (cross + cross.transpose()) + e * e * (abs_a.transpose() * abs_a) +
                                  (shift_term + shift_term.transpose()) +
                                  2.0 * double(n + 2) * kUd * (spread.transpose() * spread);
  const Eigen::MatrixXd s = op.scatter();
  INFO(label << ": scatter worst error/bound " << worst_ratio(s, s_ref, s_bound) << ", relative Frobenius " << relative_frobenius(s, s_ref));
  CHECK(worst_ratio(s, s_ref, s_bound) <= 1.0);
}

SolverSettings single_randomized(Eigen::Index k) {
  SolverSettings s;
  s.choice = SolverChoice::randomized;
  s.rank = k;
  s.precision = Precision::single_precision;
  return s;
}

// Largest relative difference of the leading k eigenvalues from BDCSVD's σ²/(N−1).
double eigenvalue_error(const Basis& b, const Eigen::VectorXd& sv, Eigen::Index n, Eigen::Index k) {
  const Eigen::VectorXd ref = sv.head(k).array().square() / double(n - 1);
  return ((b.eigenvalues.head(k) - ref).cwiseAbs().array() / ref.array()).maxCoeff();
}

}  // namespace

TEST_CASE("single: SingleOperator products match double products on the centred matrix (Higham bounds)") {
  // The fused sweeps work on blocks of 512 rows (apply_normal) or 512 columns
  // (apply_normal_transpose). 1300×700: rows 512 + 512 + 276, columns
  // 512 + 188; 300×1100: one block of 300 rows, columns 512 + 512 + 76.
  // Offset data (mean ~1000, spread ~1) and 8-bit-like integers.
  check_products(offset_data(1300, 700, 7), "offset 1300x700");
  check_products(offset_data(300, 1100, 8), "offset 300x1100");
  check_products(byte_data(1300, 700, 9), "bytes 1300x700");
  check_products(byte_data(300, 1100, 10), "bytes 300x1100");
}

TEST_CASE("single: on 8-bit-like data the product bound is small against the products themselves") {
  // Guard against a vacuous bound: on data with ‖A‖_F/‖A_c‖_F ≈ 2 (as images),
  // the largest entry of check_products' apply bound must be a small fraction
  // of the typical entry of A_c·Ω, so an error of 1% of the product would fail.
  const Eigen::MatrixXd a = byte_data(1300, 700, 9);
  const Eigen::MatrixXd w = gaussian_matrix(700, 37, 101);
  const double bound = product_bound(700) * (magnitude(a) * w.cwiseAbs()).maxCoeff();
  const Eigen::MatrixXd y = centred(a) * w;
  const double rms = y.norm() / std::sqrt(double(y.size()));
  CHECK(bound <= 1e-2 * rms);
}

TEST_CASE("single: the float32 observations by reference act as the double ones on integer data") {
  // Integers up to 255 are exact in float32 (IEEE 754 binary32, 24-bit
  // significand), and their sums in double are exact, so both constructors
  // hold the same float32 data and the same mean: every product must agree
  // bit for bit. The sums of squares may differ only in summation order.
  const Eigen::MatrixXd a = byte_data(700, 600, 11);
  const Eigen::MatrixXf af = a.cast<float>();
  REQUIRE((af.cast<double>().array() == a.array()).all());
  const SingleOperator from_double(a), from_float(af);
  CHECK(from_float.mean() == from_double.mean());
  const Eigen::VectorXd s1 = from_double.column_sums_of_squares(), s2 = from_float.column_sums_of_squares();
  CHECK(((s1 - s2).cwiseAbs().array() / s1.array()).maxCoeff() <= 700 * kUd);
  const Eigen::MatrixXd w = gaussian_matrix(600, 13, 5), v = gaussian_matrix(700, 13, 6);
  CHECK(from_float.apply(w) == from_double.apply(w));
  CHECK(from_float.apply_transpose(v) == from_double.apply_transpose(v));
  Eigen::MatrixXd y1, y2;
  CHECK(from_float.apply_normal(w, y1) == from_double.apply_normal(w, y2));
  CHECK(y1 == y2);
  CHECK(from_float.apply_normal_transpose(v, y1) == from_double.apply_normal_transpose(v, y2));
  CHECK(y1 == y2);
  CHECK(from_float.scatter() == from_double.scatter());
  CHECK(from_float.unit_roundoff() == doctest::Approx(from_double.unit_roundoff()).epsilon(1e-14));
}

TEST_CASE("single: randomized solve of a decaying spectrum with single products against BDCSVD") {
  // Spectrum 100·0.9^i (as randomized_test's decaying case, scaled) with
  // column means 2..4: ‖A‖_F/‖A_c‖_F about 3, as image data (the operator's
  // offset guard keeps double above 16).
  const Eigen::Index n = 400, d = 200, k = 20;
  const Eigen::VectorXd s = geometric_spectrum(d, 100.0, 0.9);
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 21, 2.0, 4.0);
  const Eigen::MatrixXd ac = centred(a);
  const double ratio = a.norm() / ac.norm();
  CAPTURE(ratio);
  REQUIRE(ratio > 2.0);
  REQUIRE(ratio < 8.0);
  const testing::ReferenceSvd ref = testing::reference_svd(ac);
  const Eigen::VectorXd sv = ref.singularValues();
  // Reference: the optimal rank-k error (Eckart–Young) from BDCSVD's σ.
  const double optimal = std::sqrt(sv.tail(d - k).squaredNorm());
  const auto [b, b_report] = solve(a, single_randomized(k));
  CHECK(b_report.precision == "single");
  CHECK(b_report.solver == "randomized");
  CHECK(b_report.reason.find("although single") == std::string::npos);
  REQUIRE(b.rank() == k);
  const double ours = (ac - (ac * b.components) * b.components.transpose()).norm();
  const int passes = b_report.passes;  // INFO captures by reference; clang 14 cannot capture a structured binding
  INFO("ours " << ours << " optimal " << optimal << " passes " << passes << " offset ratio " << ratio);
  CHECK(ours <= (1.0 + 1e-3) * optimal);
  CHECK(b_report.converged);
  // Eigenvalues σ²/(N−1) from BDCSVD, 1e-5 relative (this spectrum: σ₂₀²/σ₁² ≈ 0.02).
  const double eig_err = eigenvalue_error(b, sv, n, k);
  INFO("largest relative eigenvalue error " << eig_err);
  CHECK(eig_err <= 1e-5);
  // total_variance = ‖A_c‖²_F/(N−1), from the double data (common practice: the trace of the covariance).
  CHECK(std::abs(b.total_variance - ac.squaredNorm() / double(n - 1)) <= 1e-12 * b.total_variance);
  // Components are built in double: orthonormal to 1e-10.
  CHECK((b.components.transpose() * b.components - Eigen::MatrixXd::Identity(k, k)).cwiseAbs().maxCoeff() <= 1e-10);
  // Same seed, same answer, bit for bit.
  const auto [again, again_report] = solve(a, single_randomized(k));
  CHECK(again.eigenvalues == b.eigenvalues);
  CHECK(again.components == b.components);
  CHECK(again_report.passes == b_report.passes);
}

TEST_CASE("single: asked for with the exact solver (or auto choosing exact) the products stay double") {
  // Same data kind as above (small offset: the offset guard is not what decides).
  const Eigen::VectorXd s = geometric_spectrum(60, 50.0, 0.8);
  const Eigen::MatrixXd a = with_spectrum(300, 60, s, 31, 1.0, 2.0);
  SolverSettings settings;
  settings.precision = Precision::single_precision;
  settings.choice = SolverChoice::exact;
  const auto [exact, exact_report] = solve(a, settings);
  CHECK(exact_report.solver == "exact");
  CHECK(exact_report.precision == "double");
  settings.choice = SolverChoice::automatic;  // d = 60 <= kAlwaysExactDimension: auto runs exact
  const auto [automatic, automatic_report] = solve(a, settings);
  CHECK(automatic_report.solver == "exact");
  CHECK(automatic_report.precision == "double");
  // Control: the same data with the randomized solver does run in single.
  settings.choice = SolverChoice::randomized;
  settings.rank = 5;
  CHECK(solve(a, settings).report.precision == "single");
}

TEST_CASE("single: wide data (N < d: observation side and fused A_c·A_cᵀ sweeps) against BDCSVD") {
  // N = 150 < d = 1100: the Krylov space lives on the observations, so the
  // fused products are apply_normal_transpose over 512-column blocks (two and
  // a partial). Spectrum 60·0.85^i, column means 1..2.
  const Eigen::Index n = 150, d = 1100, k = 12;
  const Eigen::VectorXd s = geometric_spectrum(n, 60.0, 0.85);
  const Eigen::MatrixXd a = with_spectrum(n, d, s, 41, 1.0, 2.0);
  const Eigen::MatrixXd ac = centred(a);
  CAPTURE(a.norm() / ac.norm());
  const Eigen::VectorXd sv = testing::reference_svd(ac).values;
  const auto [b, b_report] = solve(a, single_randomized(k));
  CHECK(b_report.precision == "single");
  const double eig_err = eigenvalue_error(b, sv, n, k);
  const int passes = b_report.passes;  // INFO captures by reference; clang 14 cannot capture a structured binding
  INFO("largest relative eigenvalue error " << eig_err << ", passes " << passes);
  CHECK(eig_err <= 1e-5);
  CHECK((b.components.transpose() * b.components - Eigen::MatrixXd::Identity(k, k)).cwiseAbs().maxCoeff() <= 1e-10);
  const double optimal = std::sqrt(sv.tail(sv.size() - k).squaredNorm());
  CHECK((ac - (ac * b.components) * b.components.transpose()).norm() <= (1.0 + 1e-3) * optimal);
}

TEST_CASE("single: constant data (A_c = 0) have an infinite offset ratio and still solve") {
  // ‖A_c‖_F = 0: the ratio ‖A‖_F/‖A_c‖_F is infinite by the header's contract,
  // and the randomized solver must stop at once with eigenvalues that are
  // zero (a constant column has no variance: common practice) up to float32
  // rounding of the uncentred products: σ <= √d·2⁻²⁴·‖A‖_F (Higham & Mary's
  // √n·u growth, as above), eigenvalue σ²/(N−1).
  const Eigen::MatrixXf x = Eigen::MatrixXf::Constant(40, 12, 3.0f);
  SingleOperator op(x);
  CHECK(std::isinf(op.offset_ratio()));
  SolverSettings s;
  s.choice = SolverChoice::randomized;
  s.rank = 3;
  const auto [b, b_report] = solve(op, s);
  const double sigma_bound = std::sqrt(12.0) * 0x1p-24 * double(x.norm());
  CHECK(b.eigenvalues.cwiseAbs().maxCoeff() <= sigma_bound * sigma_bound / 39.0);
  CHECK(b.total_variance == 0.0);
  CHECK(b_report.passes <= 2);
}
