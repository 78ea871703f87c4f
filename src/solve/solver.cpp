#include "solve/solver.hpp"

#include "core/error.hpp"
#include "solve/exact.hpp"

namespace pcasweep {

SolverChoice parse_solver_choice(const std::string& text) {
  if (text == "auto") return SolverChoice::automatic;
  if (text == "exact") return SolverChoice::exact;
  if (text == "randomized") return SolverChoice::randomized;
  throw usage_error("--solver takes auto, exact or randomized, not '" + text + "'");
}

Basis solve(const CenteredOperator& op, const SolverSettings& settings) {
  if (settings.choice == SolverChoice::randomized) {
    throw usage_error("--solver randomized is not available yet");
  }
  Basis basis = solve_exact(op);
  basis.solver_reason = settings.choice == SolverChoice::exact
                            ? "asked for with --solver exact"
                            : "d = " + std::to_string(op.cols()) + " is small: the d×d covariance is cheap";
  return basis;
}

}  // namespace pcasweep
