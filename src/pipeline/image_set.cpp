#include "pipeline/image_set.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <sstream>

#include "core/error.hpp"
#include "observe/bands.hpp"
#include "observe/patches.hpp"
#include "observe/whole.hpp"
#include "report/table.hpp"
#include "solve/blas_runtime.hpp"

namespace pcasweep {

ImageAnalysis analyze_image_files(const std::vector<std::string>& paths, const ImageStudySettings& settings,
                                  const std::vector<int>& ks) {
  if (paths.empty()) throw usage_error("no input image given");
  const std::string& layout_name = settings.layout;
  if (layout_name != "patches" && layout_name != "whole" && layout_name != "bands") {
    throw usage_error("--layout takes patches, whole or bands for images, not '" + layout_name + "'");
  }
  if (layout_name == "patches" && paths.size() != 1) {
    throw usage_error(paths[1] + ": the patches layout takes one image; use --layout whole or bands for several");
  }
  std::vector<Image> sources;
  sources.reserve(paths.size());
  for (const auto& p : paths) sources.push_back(read_image(p, read_options(settings)));
  std::unique_ptr<Layout> layout;
  if (layout_name == "patches") {
    layout = std::make_unique<PatchLayout>(sources.front(), settings.patch, paths.front());
    if (layout->observation_count() < 2) {
      throw usage_error(paths.front() + ": only one patch fits; use a smaller --patch or --stride");
    }
  } else if (layout_name == "whole") {
    layout = std::make_unique<WholeLayout>(sources, paths);
  } else {
    layout = std::make_unique<BandLayout>(sources, paths);
  }
  const Eigen::Index n = layout->observation_count(), d = layout->dimension(), smallest = std::min(n, d);
  SolverSettings solver = settings.solver;
  const int top_k = ks.empty() ? 0 : *std::max_element(ks.begin(), ks.end());
  if (top_k > smallest) {
    throw usage_error("--k: k = " + std::to_string(top_k) + " is more than min(N, d) = " + std::to_string(smallest) +
                      " (N = " + std::to_string(n) + " observations, d = " + std::to_string(d) +
                      " variables): a basis cannot have more useful components than that");
  }
  if (solver.rank > smallest) {
    throw usage_error("--rank " + std::to_string(solver.rank) + " is more than min(N, d) = " +
                      std::to_string(smallest) + " (N = " + std::to_string(n) + ", d = " + std::to_string(d) + ")");
  }
  if (solver.rank > 0 && top_k > solver.rank) {
    throw usage_error("--k: k = " + std::to_string(top_k) + " is more than --rank " + std::to_string(solver.rank) +
                      ", the components the truncated solver computes; raise --rank or drop it");
  }
  if (solver.rank == 0 && top_k > 0 && solver.choice != SolverChoice::exact) solver.rank = top_k;
  return analyze_sources(paths, std::move(sources), std::move(layout), solver);
}

void check_ks_against(const std::vector<int>& ks, const ImageAnalysis& a) {
  const Eigen::Index smallest = std::min(a.observations(), a.dimension());
  for (int k : ks) {
    if (k < 1 || k > smallest) {
      throw usage_error("--k: k = " + std::to_string(k) + " is outside 1.." + std::to_string(smallest) +
                        " (min(N, d), N = " + std::to_string(a.observations()) + " observations, d = " +
                        std::to_string(a.dimension()) + " variables)");
    }
    if (k > a.basis.rank()) {
      throw usage_error("--k: k = " + std::to_string(k) + " is more than the " + std::to_string(a.basis.rank()) +
                        " components the " + a.solve_report.solver + " solver computed; raise --rank");
    }
  }
}

std::vector<int> default_ks_for(const ImageAnalysis& a) {
  const Eigen::Index r = std::min({a.basis.rank(), a.observations(), a.dimension()});
  return default_ks(r);
}

namespace {
nlohmann::json finite_or_null(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }
}  // namespace

nlohmann::json solver_json(const Basis& b, const SolveReport& r) {
  nlohmann::json j = {{"name", r.solver},
                      {"reason", r.reason},
                      {"rank", b.rank()},
                      {"variance_beyond_rank", variance_beyond_rank(b)},
                      {"proportion_beyond_rank",
                       b.total_variance > 0 ? variance_beyond_rank(b) / b.total_variance : 0.0}};
  if (r.solver == "randomized") {
    j["sample_size"] = r.sample_size;
    j["oversample"] = r.oversample;
    j["scheme"] = r.scheme;
    j["passes"] = r.passes;
    if (r.scheme == "block Krylov") j["krylov_width"] = r.krylov_width;
    else j["power_iterations"] = (r.passes - 2) / 2;
    j["seed"] = r.seed;
    j["precision"] = r.precision;
    j["converged"] = r.converged;
    j["last_relative_change"] = finite_or_null(r.last_relative_change);
    j["subspace_residual"] = r.subspace_residual;
    j["subspace_residual_at_rounding_floor"] = r.subspace_residual <= r.residual_floor;
    j["residual_rounding_floor"] = r.residual_floor;
    j["optimality_gap_estimate"] = finite_or_null(r.optimality_gap_estimate);
    j["notes"] =
        "subspace_residual: variance (sample units^2, /(N-1)) outside the sampled subspace of sample_size "
        "vectors, exact up to rounding: trace - sum of its captured eigenvalues, clamped at the rounding floor. "
        "optimality_gap_estimate: estimated relative excess of the rank-r Frobenius error over the optimal "
        "rank-r error (0 = optimal), extrapolated from the last passes; null when it cannot be estimated. "
        "last_relative_change: largest move of a leading eigenvalue at the last step, relative to it.";
  }
  j["blas"] = blas_json(blas_info());  // which kernels ran the products (solve/blas_runtime.hpp)
  return j;
}

std::string solver_lines(const Basis& b, const SolveReport& r) {
  std::ostringstream o;
  o << "solver: " << r.solver << " (" << r.reason << "); " << b.rank() << " of " << b.dimension()
    << " components computed\n";
  o << blas_line(blas_info());
  if (r.solver == "randomized") {
    o << "randomized, " << r.scheme << ": " << r.sample_size << " test vectors (" << r.oversample
      << " oversampling), " << r.passes << " products with the data ("
      << (r.scheme == "block Krylov" ? "Krylov space of " + std::to_string(r.krylov_width) + " vectors"
                                     : std::to_string((r.passes - 2) / 2) + " power iterations")
      << "), seed " << r.seed << ", " << r.precision << "-precision products, " << (r.converged ? "converged" : "stopped at the pass cap before converging")
      << " (last move " << format_real(r.last_relative_change, 2) << " of an eigenvalue)\n";
    o << "variance outside the sampled subspace = "
      << (r.subspace_residual <= r.residual_floor ? "<= " + format_real(r.residual_floor, 3) + " (rounding floor)"
                                                  : format_real(r.subspace_residual, 6))
      << "; rank-" << b.rank() << " error above optimal: "
      << (std::isfinite(r.optimality_gap_estimate) ? "about " + format_real(100.0 * r.optimality_gap_estimate, 2) + " %"
                                                   : std::string("unknown (too few passes to estimate)"))
      << "\n";
  }
  if (!b.complete()) {
    const double beyond = variance_beyond_rank(b);
    o << "variance beyond the computed rank " << b.rank() << " = " << format_real(beyond, 6) << " ("
      << format_real(b.total_variance > 0 ? 100.0 * beyond / b.total_variance : 0.0, 4)
      << " % of the total; proportions use the exact trace)\n";
  }
  return o.str();
}

}  // namespace pcasweep
