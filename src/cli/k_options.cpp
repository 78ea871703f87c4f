#include "cli/k_options.hpp"

#include <cmath>

#include "core/error.hpp"
#include "report/table.hpp"

namespace pcasweep::cli {

void add_k_options(CLI::App& sub, KOptionText& text) {
  sub.add_option("--keep-variance", text.keep_variance,
                 "Cumulative-variance goals in percent for the k rules, comma-separated (default 90,95,99,99.9)");
  sub.add_option("--target-psnr", text.target_psnr,
                 "Also find the smallest k whose written image reaches this PSNR in dB (searched, not swept)");
  sub.add_option("--target-ssim", text.target_ssim,
                 "Also find the smallest k whose written image reaches this SSIM (0..1); with --target-psnr "
                 "both must hold");
  sub.add_flag("--log-scale", text.log_scale, "Draw scree.svg with a logarithmic eigenvalue axis");
}

KChoiceSettings k_settings(const KOptionText& text) {
  KChoiceSettings s;
  s.keep_fractions = parse_percent_list(text.keep_variance, "--keep-variance");
  if (!std::isnan(text.target_psnr) && !(text.target_psnr > 0.0 && std::isfinite(text.target_psnr)))
    throw usage_error("--target-psnr must be a positive number of dB, like 40");
  if (!std::isnan(text.target_ssim) && !(text.target_ssim > -1.0 && text.target_ssim <= 1.0))
    throw usage_error("--target-ssim must be in (-1, 1], like 0.95");
  if (!std::isnan(text.target_psnr)) s.target.psnr_db = text.target_psnr;
  if (!std::isnan(text.target_ssim)) s.target.ssim = text.target_ssim;
  return s;
}

nlohmann::json k_settings_json(const KChoiceSettings& s, bool log_scale) {
  nlohmann::json keep = nlohmann::json::array();
  for (double f : s.keep_fractions) keep.push_back(100.0 * f);
  return {{"keep_variance_percent", keep},
          {"target_psnr_db", json_real(s.target.psnr_db.value_or(NAN))},
          {"target_ssim", json_real(s.target.ssim.value_or(NAN))},
          {"log_scale", log_scale}};
}

}  // namespace pcasweep::cli
