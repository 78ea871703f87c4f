// pcasweep compare ORIGINAL OTHER: MSE, PSNR and SSIM of one image against another.
#include <chrono>
#include <ctime>
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "io/image.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
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
    const Image a = read_image(args->original);
    const Image b = read_image(args->other);
    if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth) {
      throw usage_error(args->other + ": differs from " + args->original +
                        " in size, channels or bit depth; compare needs matching images");
    }
    const ImageQuality q = compare_images(a, b);
    const auto start = std::chrono::steady_clock::now();
    const std::clock_t cpu_start = std::clock();
    const SsimResult s = compute_ssim(a, b, !args->ssim_map.empty(), parse_ssim_precision(args->ssim_precision));
    const double ssim_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    const double ssim_cpu_seconds = double(std::clock() - cpu_start) / CLOCKS_PER_SEC;  // all threads
    if (!args->ssim_map.empty()) write_png(args->ssim_map, ssim_map_image(s));
    if (args->json) {
      nlohmann::json j = {{"original", args->original},
                          {"other", args->other},
                          {"data_range", a.max_value()},
                          {"mse", q.mse},
                          {"psnr_db", json_real(q.psnr_db)},
                          {"ssim", json_real(s.ssim)},
                          {"ssim_precision", ssim_precision_name(s.precision)},
                          {"ssim_seconds", ssim_seconds},
                          {"ssim_cpu_seconds", ssim_cpu_seconds},
                          {"channel_names", a.channel_names}};
      j["channel_ssim"] = nlohmann::json::array();
      for (double v : s.channel_ssim) j["channel_ssim"].push_back(json_real(v));
      j["channel_psnr_db"] = nlohmann::json::array();
      for (double v : q.channel_psnr_db) j["channel_psnr_db"].push_back(json_real(v));
      std::cout.precision(17);
      std::cout << j.dump(2) << "\n";
      return 0;
    }
    Table t;
    t.columns = {"channel", "mse", "psnr_db", "ssim"};
    for (std::size_t c = 0; c < a.channel_names.size(); ++c)
      t.add_row({a.channel_names[c], q.channel_mse[c], q.channel_psnr_db[c], s.channel_ssim[c]});
    t.add_row({std::string("all"), q.mse, q.psnr_db, s.ssim});
    std::cout << args->original << " vs " << args->other << " (L = " << a.max_value()
              << "; SSIM: Gaussian window 11x11, sigma 1.5, valid region, mean of channels, "
              << ssim_precision_name(s.precision) << " precision)\n"
              << render_console(t, 6);
    if (!args->ssim_map.empty()) std::cout << "wrote " << args->ssim_map << "\n";
    return 0;
  };
}

}  // namespace pcasweep::cli
