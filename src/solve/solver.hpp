// pcasweep/solve/solver.hpp — choosing and running a solver.
//
// Contract: solve() takes the centred-data operator and the user's settings
// and returns a Solution: the Basis, and a SolveReport whose `solver` and
// `reason` say which solver ran and why. `exact` returns all d components; other solvers may return fewer
// (basis.rank() < d), in which case eigenvalues beyond the rank are unknown
// but basis.total_variance still holds the exact trace. Given the observation
// matrix itself, solve() also picks the operator: single-precision products
// (SingleOperator) when the randomized solver runs and they were asked for.
#pragma once

#include <cstdint>
#include <string>

#include "solve/operator.hpp"
#include "solve/solve_report.hpp"

namespace pcasweep {

enum class SolverChoice { automatic, exact, randomized };

struct SolverSettings {
  SolverChoice choice = SolverChoice::automatic;
  Eigen::Index rank = 0;          // components wanted from a truncated solver (0: solver decides)
  int oversample = 10;            // randomized: extra test vectors p
  int power_iterations = -1;      // randomized: q; -1 = adaptive default
  std::uint64_t seed = 1;         // randomized: test-matrix seed
  double tolerance = 0.0;         // randomized, adaptive q: stopping tolerance (0: kDefaultTolerance)
  // randomized, given the matrix: precision of the products with the data
  // (the exact solver always accumulates its scatter in double).
  Precision precision = Precision::double_precision;
};

// Rank a truncated solver computes when SolverSettings::rank is 0.
inline constexpr Eigen::Index kDefaultRank = 32;

// How `auto` chooses: a flop count of each path priced at rates fitted to
// earlier measurements with OpenBLAS (`pcasweep-bench crossover`; the figures
// and the machine are in docs/performance.md, "Choosing a solver").
// Exact: scatter N·d² at kScatterFlopRate plus the symmetric eigensolver's d³
// at kEigenFlopRate. Randomized: kTypicalPasses products of 2·N·d·l flops at
// kProductFlopRate (overheads included). Randomized wins when its
// prediction is below kCrossoverMargin times the exact one.
inline constexpr double kScatterFlopRate = 140e9;
inline constexpr double kEigenFlopRate = 6e9;
inline constexpr double kProductFlopRate = 75e9;
inline constexpr double kTypicalPasses = 9.0;
inline constexpr double kCrossoverMargin = 0.5;
// d up to this always goes to the exact solver, which then gives every
// eigenvalue (the rules for k and the near-zero diagnosis read the whole
// spectrum); up to here the time that choice costs over the randomized solver
// stays a fraction of a second (docs/performance.md, "Choosing a solver").
inline constexpr Eigen::Index kAlwaysExactDimension = 1024;
// solve(X, …) with single precision asked for keeps double when the data's
// mean makes them more than this many times their spread (‖A‖_F/‖A_c‖_F):
// single products lose that factor of accuracy, and beyond 16 their rounding
// (16·2⁻²⁴ ≈ 1e-6 of the centred data) would reach the default tolerance.
// Where the bundled samples sit: docs/performance.md, "Precision".
inline constexpr double kSingleOffsetLimit = 16.0;
// A single-precision solve is kept only when the variance beyond its rank is
// at least this many times its rounding level (the operator's unit_roundoff)
// of the total: rounding of order u·‖A_c‖²_F moves the rank-k error² by as
// much, so for an error within 1e-3 of optimal the optimal error² must exceed
// about 500·u·‖A_c‖²_F. The case that showed it is in docs/performance.md,
// "Precision".
inline constexpr double kSingleTailMargin = 1e3;
// The exact solver refuses when its d×d matrices would need more than this.
inline constexpr double kExactMemoryLimit = 4.0 * 1073741824.0;

struct CostEstimate {
  double exact_seconds = 0.0;
  double randomized_seconds = 0.0;
  double exact_bytes = 0.0;
};

// n×d data, rank r wanted, oversampling p. Returns the predicted costs of both paths.
CostEstimate estimate_costs(Eigen::Index n, Eigen::Index d, Eigen::Index rank, int oversample);

// The rank used when none is asked for: min(N, d, kDefaultRank).
Eigen::Index default_rank(Eigen::Index n, Eigen::Index d);

// Parses "auto", "exact", "randomized". Throws Error(usage).
SolverChoice parse_solver_choice(const std::string& text);

// op: N×d centred data. Returns the basis and its report, whose solver and
// reason say which ran and why (report.precision: op's). Throws Error(data)
// for N < 2, Error(usage) for a rank above min(N, d) or an exact solve too
// large for memory.
Solution solve(const CenteredOperator& op, const SolverSettings& settings);

// source: N×d moments only (a ScatterSum, say: no products). Runs the exact
// solver, whatever settings.choice says, under solve()'s checks for
// --solver exact; report.reason as solve() gives it then. Throws Error(data)
// for N < 2, Error(usage) for a rank above min(N, d) or d×d matrices too large
// for memory.
Solution solve_scatter(const ScatterSource& source, const SolverSettings& settings);

// basis: from an operator whose products round at unit_roundoff. Returns
// whether that rounding leaves the rank-r error within about 1e-3 of optimal
// (kSingleTailMargin): always true for double.
bool precision_suffices(const Basis& basis, double unit_roundoff);

// True when solve() would run single-precision products for N×d data: the
// randomized solver is chosen and settings.precision is single. Throws as solve().
bool uses_single_precision(Eigen::Index n, Eigen::Index d, const SolverSettings& settings);

// op: the data with double products; single: the same data with
// single-precision products (null when uses_single_precision() is false),
// whose offset ratio ‖A‖_F/‖A_c‖_F is `offset_ratio`. Runs the rules of
// solve(X, settings) below over these operators. Throws as solve().
Solution solve(const CenteredOperator& op, const CenteredOperator* single, double offset_ratio,
            const SolverSettings& settings);

// X: N×d observations (not centred). As above over DenseOperator(X), or over
// SingleOperator(X) (a float32 copy, N·d·4 bytes more) when the randomized
// solver runs, settings.precision is single and the data allow it: their
// offset (kSingleOffsetLimit) before the solve, precision_suffices after it
// (else the solve is run again in double). report.reason says when double ran
// although single was asked.
Solution solve(const Eigen::MatrixXd& X, const SolverSettings& settings);

}  // namespace pcasweep
