// pcasweep/cli/image_options.hpp — options shared by the subcommands that cut images.
#pragma once

#include <CLI/CLI.hpp>
#include <string>

#include "pipeline/image_study.hpp"

namespace pcasweep::cli {

struct ImageOptionText {
  std::string patch = "8";
  std::string stride;          // empty: same as patch
  std::string colour = "joint";
  bool drop_alpha = false;
};

// Declares --patch, --stride, --colour, --drop-alpha on `sub`.
void add_image_options(CLI::App& sub, ImageOptionText& text);

// Turns the option text into settings. Throws Error(usage).
ImageStudySettings image_settings(const ImageOptionText& text);

// The settings as JSON, for summary.json.
nlohmann::json image_settings_json(const ImageStudySettings& settings);

}  // namespace pcasweep::cli
