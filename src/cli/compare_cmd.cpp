// pcasweep compare ORIGINAL OTHER: MSE, PSNR and SSIM of one image against another.
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "io/image.hpp"
#include "pipeline/image_compare.hpp"
#include "report/table.hpp"

namespace pcasweep::cli {

namespace {
struct CompareArgs {
  std::string original;
  std::string other;
  std::string ssim_map;
  std::string ssim_precision = "auto";
  bool json = false;
};

// The figures as one JSON object (--json).
nlohmann::json comparison_json(const CompareArgs& args, const ImageComparison& c) {
  nlohmann::json j = {{"original", args.original},
                      {"other", args.other},
                      {"data_range", c.data_range},
                      {"mse", c.quality.mse},
                      {"psnr_db", json_real(c.quality.psnr_db)},
                      {"ssim", json_real(c.ssim.ssim)},
                      {"ssim_precision", ssim_precision_name(c.ssim.precision)},
                      {"ssim_seconds", c.ssim_seconds},
                      {"ssim_cpu_seconds", c.ssim_cpu_seconds},
                      {"channel_names", c.channel_names}};
  j["channel_ssim"] = nlohmann::json::array();
  for (double v : c.ssim.channel_ssim) j["channel_ssim"].push_back(json_real(v));
  j["channel_psnr_db"] = nlohmann::json::array();
  for (double v : c.quality.channel_psnr_db) j["channel_psnr_db"].push_back(json_real(v));
  return j;
}

// Columns channel, mse, psnr_db, ssim: one row per channel, then "all".
Table comparison_table(const ImageComparison& c) {
  Table t;
  t.columns = {"channel", "mse", "psnr_db", "ssim"};
  for (std::size_t i = 0; i < c.channel_names.size(); ++i)
    t.add_row({c.channel_names[i], c.quality.channel_mse[i], c.quality.channel_psnr_db[i], c.ssim.channel_ssim[i]});
  t.add_row({std::string("all"), c.quality.mse, c.quality.psnr_db, c.ssim.ssim});
  return t;
}

}  // namespace

Action setup_compare(CLI::App& sub) {
  auto args = std::make_shared<CompareArgs>();
  sub.add_option("ORIGINAL", args->original, "Reference image (PNG, JPEG, BMP, TGA, PNM; 8 or 16 bit)")->required();
  sub.add_option("OTHER", args->other, "Image to compare with it (same size, channels and bit depth)")->required();
  sub.add_option("--ssim-map", args->ssim_map,
                 "Also write the local SSIM map here as a gray PNG ((H-10)x(W-10), 0..1 scaled to 0..255)");
  sub.add_option("--ssim-precision", args->ssim_precision,
                 "Arithmetic of the SSIM filters: auto (the measured rule of docs/quality.md: double), "
                 "single (float lanes, about 1.5x faster, within 1e-6 of double on photographs but "
                 "not on every image) or double (default auto)")
      ->check(CLI::IsMember({"auto", "single", "double"}));
  sub.add_flag("--json", args->json, "Print the figures as one JSON object instead of a table");
  return [args]() {
    const ImageComparison c = compare_image_files(args->original, args->other, !args->ssim_map.empty(),
                                                  parse_ssim_precision(args->ssim_precision));
    if (!args->ssim_map.empty()) write_png(args->ssim_map, ssim_map_image(c.ssim));
    if (args->json) {
      std::cout.precision(17);
      std::cout << comparison_json(*args, c).dump(2) << "\n";
      return 0;
    }
    std::cout << args->original << " vs " << args->other << " (L = " << c.data_range
              << "; SSIM: Gaussian window 11x11, sigma 1.5, valid region, mean of channels, "
              << ssim_precision_name(c.ssim.precision) << " precision)\n"
              << render_console(comparison_table(c), 6);
    if (!args->ssim_map.empty()) std::cout << "wrote " << args->ssim_map << "\n";
    return 0;
  };
}

}  // namespace pcasweep::cli
