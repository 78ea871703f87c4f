#include "pipeline/image_set.hpp"

#include <algorithm>
#include <filesystem>

#include "core/error.hpp"
#include "observe/bands.hpp"
#include "observe/patches.hpp"
#include "observe/whole.hpp"

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

}  // namespace pcasweep
