// pcasweep/solve/randomized_error.cpp — rounding levels and a-posteriori error figures of the randomized solver.
#include <algorithm>
#include <cmath>
#include <limits>

#include "solve/randomized_detail.hpp"

namespace pcasweep::detail {

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

// E_m falls at least geometrically (HMT §10.4 for the power scheme; faster for
// block Krylov); with steps Δ_m = E_{m−1} − E_m and ratio ρ = Δ_m/Δ_{m−1} < 1,
// the remaining fall is about Δ_m·ρ/(1 − ρ) (Aitken's extrapolation; an
// overestimate when convergence is faster than geometric).
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

}  // namespace pcasweep::detail
