// pcasweep/cli/k_options.hpp — options for the rules that suggest k (spectrum, sweep).
#pragma once

#include <CLI/CLI.hpp>
#include <cmath>
#include <limits>
#include <string>

#include <nlohmann/json.hpp>

#include "pipeline/k_choice.hpp"

namespace pcasweep::cli {

// The options as typed (NaN: not given); k_settings() turns them into settings.
struct KOptionText {
  std::string keep_variance = "90,95,99,99.9";
  double target_psnr = std::numeric_limits<double>::quiet_NaN();
  double target_ssim = std::numeric_limits<double>::quiet_NaN();
  bool log_scale = false;
};

// Declares --keep-variance, --target-psnr, --target-ssim and --log-scale on `sub`.
void add_k_options(CLI::App& sub, KOptionText& text);

// Turns the option text into settings (a goal not given stays unset). Throws Error(usage).
KChoiceSettings k_settings(const KOptionText& text);

// The settings as JSON, for summary.json.
nlohmann::json k_settings_json(const KChoiceSettings& settings, bool log_scale);

}  // namespace pcasweep::cli
