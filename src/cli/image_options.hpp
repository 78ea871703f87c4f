// pcasweep/cli/image_options.hpp — options shared by the subcommands that cut images.
#pragma once

#include <CLI/CLI.hpp>
#include <cstdint>
#include <string>
#include <vector>

#include "pipeline/image_study.hpp"

namespace pcasweep::cli {

struct ImageOptionText {
  std::string patch = "8";
  std::string stride;          // empty: same as patch
  std::string colour = "joint";
  bool drop_alpha = false;
  std::string layout;          // patches (default), whole, bands; "windows" belongs to the signal options
  std::string solver = "auto";
  int rank = 0;                // 0: from the k's asked for
  int oversample = 10;
  int power_iters = -1;        // -1: adaptive
  std::uint64_t seed = 1;
  std::string precision = "double";
  std::uint64_t max_pixels = kDefaultMaxPixels;  // --max-pixels (io/image.hpp)
};

// Declares the positional IMAGE (required: an image or a recording) and MORE
// (further images for --layout whole or bands), shared by sweep and spectrum.
void add_input_arguments(CLI::App& sub, std::string& input, std::vector<std::string>& more);

// Declares --patch, --stride, --colour, --drop-alpha, --max-pixels, --layout and the solver
// options (--solver, --rank, --oversample, --power-iters, --seed, --precision) on `sub`.
void add_image_options(CLI::App& sub, ImageOptionText& text);

// Turns the option text into settings. Throws Error(usage).
ImageStudySettings image_settings(const ImageOptionText& text);

// The settings as JSON, for summary.json.
nlohmann::json image_settings_json(const ImageStudySettings& settings);

// The patch layout in words for the batch report's "Layout" row, from the options actually in
// force, e.g. "8x8 patches, stride 8x8, joint colour". Shared by `batch` and `demo`.
std::string patch_layout_text(const PatchOptions& p);

}  // namespace pcasweep::cli
