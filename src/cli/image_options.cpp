#include "cli/image_options.hpp"

#include "core/error.hpp"

namespace pcasweep::cli {

void add_input_arguments(CLI::App& sub, std::string& input, std::vector<std::string>& more) {
  sub.add_option("IMAGE", input,
                 "Image (PNG, JPEG, BMP, TGA, PNM; 8 or 16 bit) or recording (WAV, FLAC, Ogg, AIFF, CSV, raw; "
                 "see --window) to analyse")
      ->required();
  sub.add_option("MORE", more,
                 "Further images, for --layout whole (same size, each one observation) or bands (gray, "
                 "co-registered, one per band)");
}

void add_image_options(CLI::App& sub, ImageOptionText& text) {
  sub.add_option("--patch", text.patch,
                 "Patch size in pixels, ROWSxCOLUMNS or one number for a square (default 8)");
  sub.add_option("--stride", text.stride,
                 "Step between patches in pixels, ROWSxCOLUMNS or one number (default: the patch size, "
                 "no overlap); smaller steps overlap and are averaged when folded back");
  sub.add_option("--colour", text.colour,
                 "joint: one observation of patch·channels values per patch (default); "
                 "channels: each channel's patches are separate observations sharing one basis")
      ->check(CLI::IsMember({"joint", "channels"}));
  sub.add_flag("--drop-alpha", text.drop_alpha,
               "Remove an alpha channel before analysis (default: alpha is kept as a channel)");
  sub.add_option("--max-pixels", text.max_pixels,
                 "Largest image read, in pixels (width x height; default 1073741824 = 2^30). Checked from the "
                 "file header before anything is allocated, together with whether the file is large enough to "
                 "hold the size it declares, so a corrupt or hostile header cannot exhaust memory")
      ->check(CLI::PositiveNumber);
  sub.add_option("--layout", text.layout,
                 "How images become observations: patches (default; one image cut into patches), whole "
                 "(several same-size images, each one observation), bands (several co-registered gray "
                 "images, each pixel one observation across the bands)");
  sub.add_option("--solver", text.solver,
                 "auto (default: chosen from the shape, the output says why), exact (d x d covariance, every "
                 "component) or randomized (truncated randomized SVD)");
  sub.add_option("--rank", text.rank,
                 "Components the randomized solver computes (default: the largest --k, or 32)")
      ->check(CLI::NonNegativeNumber);
  sub.add_option("--oversample", text.oversample, "Randomized: extra test vectors beyond the rank (default 10)")
      ->check(CLI::NonNegativeNumber);
  sub.add_option("--power-iters", text.power_iters,
                 "Randomized: power iterations q (default -1: adaptive, stop when the leading eigenvalues "
                 "settle; see docs/performance.md)")
      ->check(CLI::Range(-1, 1000));
  sub.add_option("--seed", text.seed, "Randomized: seed of the Gaussian test matrix (default 1)");
  sub.add_option("--precision", text.precision,
                 "Randomized: arithmetic of the products with the data, double (default) or single (float32: "
                 "1.4-2.5x faster on the benchmark matrices, with eigenvalue errors up to about 3e-7 relative "
                 "there where double's are as low as 4e-15, and a float32 copy of the observations; "
                 "docs/performance.md)")
      ->check(CLI::IsMember({"double", "single"}));
}

ImageStudySettings image_settings(const ImageOptionText& text) {
  ImageStudySettings s;
  parse_size_pair(text.patch, "--patch", s.patch.patch_height, s.patch.patch_width);
  if (!text.stride.empty()) {
    if (text.stride == "0" || text.stride.find("x0") != std::string::npos || text.stride.rfind("0x", 0) == 0) {
      throw usage_error("--stride must be at least 1, not '" + text.stride + "'");
    }
    parse_size_pair(text.stride, "--stride", s.patch.stride_y, s.patch.stride_x);
  }
  s.patch.colour = text.colour == "channels" ? ColourMode::channels : ColourMode::joint;
  s.drop_alpha = text.drop_alpha;
  s.max_pixels = text.max_pixels;
  s.layout = text.layout.empty() ? "patches" : text.layout;
  if (s.layout != "patches" && s.layout != "whole" && s.layout != "bands") {
    throw usage_error("--layout takes patches, whole or bands for images (windows for recordings), not '" +
                      text.layout + "'");
  }
  s.solver.choice = parse_solver_choice(text.solver);
  s.solver.rank = text.rank;
  s.solver.oversample = text.oversample;
  s.solver.power_iterations = text.power_iters;
  s.solver.seed = text.seed;
  s.solver.precision = parse_precision(text.precision);
  return s;
}

nlohmann::json image_settings_json(const ImageStudySettings& s) {
  const char* solver = s.solver.choice == SolverChoice::exact        ? "exact"
                       : s.solver.choice == SolverChoice::randomized ? "randomized"
                                                                     : "auto";
  return {{"layout", s.layout},
          {"solver", {{"choice", solver},
                      {"rank", s.solver.rank},
                      {"oversample", s.solver.oversample},
                      {"power_iterations", s.solver.power_iterations},
                      {"seed", s.solver.seed},
                      {"precision", text_of(s.solver.precision)}}},
          {"patch", {s.patch.patch_height, s.patch.patch_width}},
          {"stride", {s.patch.stride_y ? s.patch.stride_y : s.patch.patch_height,
                      s.patch.stride_x ? s.patch.stride_x : s.patch.patch_width}},
          {"colour", s.patch.colour == ColourMode::joint ? "joint" : "channels"},
          {"drop_alpha", s.drop_alpha},
          {"max_pixels", s.max_pixels}};
}

std::string patch_layout_text(const PatchOptions& p) {
  return std::to_string(p.patch_height) + "x" + std::to_string(p.patch_width) + " patches, stride " +
         std::to_string(p.stride_y ? p.stride_y : p.patch_height) + "x" +
         std::to_string(p.stride_x ? p.stride_x : p.patch_width) + ", " +
         (p.colour == ColourMode::joint ? "joint colour" : "channels share one basis");
}

}  // namespace pcasweep::cli
