#include "solve/solver.hpp"

#include <algorithm>
#include <cstdio>

#include "core/error.hpp"
#include "solve/exact.hpp"
#include "solve/randomized.hpp"

namespace pcasweep {

SolverChoice parse_solver_choice(const std::string& text) {
  if (text == "auto") return SolverChoice::automatic;
  if (text == "exact") return SolverChoice::exact;
  if (text == "randomized") return SolverChoice::randomized;
  throw usage_error("--solver takes auto, exact or randomized, not '" + text + "'");
}

namespace {
std::string seconds_text(double s) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2g s", s);
  return buf;
}
}  // namespace

Eigen::Index default_rank(Eigen::Index n, Eigen::Index d) { return std::min<Eigen::Index>({n, d, kDefaultRank}); }

CostEstimate estimate_costs(Eigen::Index n, Eigen::Index d, Eigen::Index rank, int oversample) {
  // Flop counts of the two paths, priced at rates measured on the reference
  // machine (docs/performance.md, "Choosing a solver").
  const double N = double(n), D = double(d);
  const double l = double(std::min<Eigen::Index>(rank + std::max(0, oversample), std::min(n, d)));
  CostEstimate c;
  c.exact_seconds = N * D * D / kScatterFlopRate + D * D * D / kEigenFlopRate;
  c.randomized_seconds = kTypicalPasses * 2.0 * N * D * l / kProductFlopRate + kTypicalPasses * 4.0 * (N + D) * l * l / kProductFlopRate;
  c.exact_bytes = 8.0 * D * D * 3.0;  // covariance, eigenvectors, workspace
  return c;
}

namespace {

struct Plan {
  SolverChoice choice = SolverChoice::exact;  // exact or randomized, never automatic
  Eigen::Index rank = 0;
  std::string reason;
};

// N×d data: validates the settings and decides which solver runs and why.
Plan plan_solve(Eigen::Index n, Eigen::Index d, const SolverSettings& settings) {
  const Eigen::Index smallest = std::min(n, d);
  if (n < 2) throw data_error("need at least 2 observations to estimate a covariance, got " + std::to_string(n));
  const Eigen::Index rank = settings.rank > 0 ? settings.rank : default_rank(n, d);
  if (rank > smallest) {
    throw usage_error("rank " + std::to_string(rank) + " is more than min(N, d) = " + std::to_string(smallest) +
                      " (N = " + std::to_string(n) + " observations, d = " + std::to_string(d) + " variables)");
  }
  SolverChoice choice = settings.choice;
  std::string reason;
  const CostEstimate cost = estimate_costs(n, d, rank, settings.oversample);
  if (choice == SolverChoice::exact) {
    if (cost.exact_bytes > kExactMemoryLimit) {
      throw usage_error("--solver exact: the " + std::to_string(d) + "x" + std::to_string(d) +
                        " covariance would need " + std::to_string(int(cost.exact_bytes / 1073741824.0 + 0.5)) +
                        " GiB; use --solver randomized (or auto) with --rank");
    }
    reason = "asked for with --solver exact";
  } else if (choice == SolverChoice::randomized) {
    reason = "asked for with --solver randomized";
  } else if (cost.exact_bytes > kExactMemoryLimit) {
    choice = SolverChoice::randomized;
    reason = "d = " + std::to_string(d) + ": the d×d covariance would not fit in " +
             std::to_string(int(kExactMemoryLimit / 1073741824.0)) + " GiB";
  } else if (d <= kAlwaysExactDimension) {
    choice = SolverChoice::exact;
    reason = "d = " + std::to_string(d) + " <= " + std::to_string(kAlwaysExactDimension) +
             ": the d×d covariance is cheap here and gives every component (docs/performance.md)";
  } else if (cost.randomized_seconds < kCrossoverMargin * cost.exact_seconds) {
    choice = SolverChoice::randomized;
    reason = "predicted " + seconds_text(cost.randomized_seconds) + " for rank " + std::to_string(rank) +
             " against " + seconds_text(cost.exact_seconds) + " for the exact covariance (N = " + std::to_string(n) +
             ", d = " + std::to_string(d) + ")";
  } else {
    choice = SolverChoice::exact;
    reason = "predicted " + seconds_text(cost.exact_seconds) + " for the exact covariance against " +
             seconds_text(cost.randomized_seconds) + " for rank " + std::to_string(rank) + " (N = " +
             std::to_string(n) + ", d = " + std::to_string(d) + ")";
  }
  if (choice == SolverChoice::randomized && settings.rank == 0) reason += "; rank " + std::to_string(rank) + " by default";
  return {choice, rank, reason};
}

Solution run(const CenteredOperator& op, const Plan& plan, const SolverSettings& settings) {
  Solution solution;
  if (plan.choice == SolverChoice::exact) {
    solution = solve_exact(op);
  } else {
    RandomizedSettings rs;
    rs.rank = plan.rank;
    rs.oversample = settings.oversample;
    rs.power_iterations = settings.power_iterations;
    rs.seed = settings.seed;
    if (settings.tolerance > 0.0) rs.tolerance = settings.tolerance;
    solution = solve_randomized(op, rs);
  }
  solution.report.reason = plan.reason;
  solution.report.precision = op.unit_roundoff() > kDoubleRoundoff ? "single" : "double";
  return solution;
}

}  // namespace

Solution solve(const CenteredOperator& op, const SolverSettings& settings) {
  return run(op, plan_solve(op.rows(), op.cols(), settings), settings);
}

Solution solve_scatter(const ScatterSource& source, const SolverSettings& settings) {
  SolverSettings exact = settings;
  exact.choice = SolverChoice::exact;
  const Plan plan = plan_solve(source.rows(), source.cols(), exact);
  Solution solution = solve_exact(source);
  solution.report.reason = plan.reason;
  solution.report.precision = "double";
  return solution;
}

bool precision_suffices(const Basis& basis, double unit_roundoff) {
  if (unit_roundoff <= kDoubleRoundoff) return true;
  return variance_beyond_rank(basis) >= kSingleTailMargin * unit_roundoff * basis.total_variance;
}

bool uses_single_precision(Eigen::Index n, Eigen::Index d, const SolverSettings& settings) {
  return settings.precision == Precision::single_precision &&
         plan_solve(n, d, settings).choice == SolverChoice::randomized;
}

namespace {
// The single-precision rules of solve(X, settings): `single` first when the
// plan and the data allow it, else (or when its tail is below float32's
// resolution) run_double(plan) — built only then.
template <class RunDouble>
Solution solve_with_precision(Eigen::Index n, Eigen::Index d, const CenteredOperator* single, double ratio,
                           const SolverSettings& settings, RunDouble&& run_double) {
  Plan plan = plan_solve(n, d, settings);
  if (plan.choice == SolverChoice::randomized && settings.precision == Precision::single_precision && single) {
    char buf[320];
    if (ratio <= kSingleOffsetLimit) {
      Solution solution = run(*single, plan, settings);
      const Basis& basis = solution.basis;
      if (precision_suffices(basis, single->unit_roundoff())) return solution;
      std::snprintf(buf, sizeof buf,
                    "; double-precision products after a single-precision solve: the variance beyond rank %ld "
                    "(%.2g of the total) is below what float32 products resolve (%g times their rounding, %.2g)",
                    long(plan.rank), variance_beyond_rank(basis) / basis.total_variance, kSingleTailMargin,
                    single->unit_roundoff());
    } else {
      std::snprintf(buf, sizeof buf,
                    "; double-precision products although single was asked: the data's mean makes it %.3g times "
                    "its spread (||A||_F/||A_c||_F > %g), a factor float32 products would lose in accuracy",
                    ratio, kSingleOffsetLimit);
    }
    plan.reason += buf;
  }
  return run_double(plan);
}
}  // namespace

Solution solve(const CenteredOperator& op, const CenteredOperator* single, double ratio, const SolverSettings& settings) {
  return solve_with_precision(op.rows(), op.cols(), single, ratio, settings,
                              [&](const Plan& plan) { return run(op, plan, settings); });
}

Solution solve(const Eigen::MatrixXd& X, const SolverSettings& settings) {
  const auto run_dense = [&](const Plan& plan) { return run(DenseOperator(X), plan, settings); };
  if (!uses_single_precision(X.rows(), X.cols(), settings))
    return solve_with_precision(X.rows(), X.cols(), nullptr, 1.0, settings, run_dense);
  const SingleOperator single(X);
  return solve_with_precision(X.rows(), X.cols(), &single, single.offset_ratio(), settings, run_dense);
}

}  // namespace pcasweep
