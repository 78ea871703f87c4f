// pcasweep/solve/solver.hpp — choosing and running a solver.
//
// Contract: solve() takes the centred-data operator and the user's settings
// and returns a Basis whose `solver` and `solver_reason` say which solver ran
// and why. `exact` returns all d components; other solvers may return fewer
// (basis.rank() < d), in which case eigenvalues beyond the rank are unknown
// but basis.total_variance still holds the exact trace.
#pragma once

#include <cstdint>
#include <string>

#include "solve/basis.hpp"
#include "solve/operator.hpp"

namespace pcasweep {

enum class SolverChoice { automatic, exact, randomized };

struct SolverSettings {
  SolverChoice choice = SolverChoice::automatic;
  Eigen::Index rank = 0;          // components wanted from a truncated solver (0: solver decides)
  int oversample = 10;            // randomized: extra test vectors p
  int power_iterations = -1;      // randomized: q; -1 = adaptive default
  std::uint64_t seed = 1;         // randomized: test-matrix seed
};

// Parses "auto", "exact", "randomized". Throws Error(usage).
SolverChoice parse_solver_choice(const std::string& text);

// op: N×d centred data. Returns the basis; throws Error.
Basis solve(const CenteredOperator& op, const SolverSettings& settings);

}  // namespace pcasweep
