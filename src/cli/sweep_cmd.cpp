// pcasweep sweep IMAGE --out DIR: reconstruct at several k and measure each.
#include <cstdio>
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/k_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/codec_study.hpp"
#include "pipeline/image_set.hpp"
#include "present/component_images.hpp"
#include "present/k_charts.hpp"
#include "present/k_rules.hpp"
#include "present/rd_outputs.hpp"

namespace pcasweep::cli {

namespace {
struct SweepArgs {
  std::string input;
  std::vector<std::string> more;  // further images for --layout whole/bands
  std::string out;
  std::string ks;
  bool quiet = false;
  ImageOptionText image;
  KOptionText krules;
  bool ssim_map = false;
  int quality = 90;
  bool no_rd = false;
  bool no_codec = false;
  int png_level = 1;
};
}  // namespace

Action setup_sweep(CLI::App& sub) {
  auto args = std::make_shared<SweepArgs>();
  add_input_arguments(sub, args->input, args->more);
  sub.add_option("--out,-o", args->out, "Folder for the outputs (created if missing)")->required();
  sub.add_option("--k", args->ks,
                 "Components to keep, comma-separated, each 1..d (default: 1, 2, 4, ... below d, then d; "
                 "d = patch rows x columns x channels)");
  sub.add_flag("--quiet,-q", args->quiet, "Print nothing on success");
  add_image_options(sub, args->image);
  add_k_options(sub, args->krules);
  sub.add_flag("--ssim-map", args->ssim_map,
               "Also write <stem>.k<K>.ssim.png for each k: the local SSIM map, gray, 0..1 scaled to 0..255, "
               "(H-10)x(W-10)");
  sub.add_option("--quality", args->quality,
                 "Codec quality 1..100 for the bytes columns: every k is encoded at this quality "
                 "(water level at 10 + 0.4·Q dB) and measured after decoding (default 90)")
      ->check(CLI::Range(1, 100));
  sub.add_flag("--no-codec", args->no_codec,
               "Measure the plain reconstruction at each k (rounded and clipped, as <stem>.k<K>.png) instead of "
               "the decoded file; no bytes columns. At k = d this is the input, bit for bit");
  sub.add_flag("--no-rd", args->no_rd,
               "Skip the rate-distortion comparison (rd.csv, rd.svg, jpeg/: PCA vs JPEG vs DCT vs the bound)");
  sub.add_option("--png-level", args->png_level,
                 "zlib effort for the <stem>.k<K>.png files, 0..9: 0 stores them uncompressed, 1 (default) is the "
                 "fastest compressing level (zlib's run-length strategy, measured faster and smaller than level 1's "
                 "default), 6 zlib's default, 9 the smallest and slowest (docs/performance.md, \"PNG writing\")")
      ->check(CLI::Range(0, 9));
  auto signal = std::make_shared<SignalOptionText>();
  add_signal_options(sub, *signal);  // after the image options: reuses their --layout if any
  return [args, signal, app = &sub]() {
    if (signal_input_requested(*app, *signal, args->input))
      return run_signal_sweep(args->input, args->out, args->ks, args->quiet, signal_settings(*signal, app));
    const ImageStudySettings settings = image_settings(args->image);
    const KChoiceSettings k_options = k_settings(args->krules);
    std::vector<int> ks = args->ks.empty() ? std::vector<int>{} : parse_k_list(args->ks);
    std::vector<std::string> paths{args->input};
    paths.insert(paths.end(), args->more.begin(), args->more.end());
    ImageAnalysis analysis = analyze_image_files(paths, settings, ks);
    if (ks.empty()) ks = default_ks_for(analysis);
    check_ks_against(ks, analysis);
    const KChoice choice = choose_k(analysis, k_options);
    nlohmann::json settings_json = image_settings_json(settings);
    settings_json["k_rules"] = k_settings_json(k_options, args->krules.log_scale);
    SweepCoding coding;
    coding.enabled = !args->no_codec;
    coding.quality = args->quality;
    settings_json["quality"] = args->quality;
    nlohmann::json extra = {{"choose_k", k_choice_json(choice)}};
    const bool codable = analysis.sources.size() == 1 && analysis.patches() != nullptr;
    settings_json["measured_on"] =
        args->no_codec || !codable ? "reconstruction rounded to the bit depth" : "decoded file";
    std::string rd_line;
    if (codable && !args->no_rd) {
      const RdReport rd = write_rate_distortion(analysis, RdSettings{}, args->out);
      extra["rate_distortion"] = rd.json;
      int coded_points = 0;
      for (int n : rd.cost.coded_pass_points) coded_points += n;
      char cost[200];
      std::snprintf(cost, sizeof cost, " (study: %d PCA/DCT points in %zu pass(es) and %d JPEG points, %.1f s)",
                    coded_points, rd.cost.coded_pass_points.size(), rd.cost.jpeg_points, rd.cost.total_seconds);
      rd_line = "rate-distortion (rd.csv, rd.svg): " + rd.sentence + cost + "\n";
    }
    SweepOutput output;
    output.png.level = args->png_level;
    settings_json["png_level"] = args->png_level;
    const auto rows = write_sweep(analysis, ks, args->out, settings_json, extra, args->ssim_map, coding, output);
    write_k_charts(analysis.basis, choice, args->krules.log_scale, args->input, args->out);
    const int components_written = write_component_images(OutputFolder(args->out), analysis.basis.components,
                                                            analysis.layout->observation_shape());
    if (!args->quiet) {
      std::cout << args->input << ": " << analysis.image().width << "x" << analysis.image().height << ", "
                << analysis.image().channels << " channel(s), " << analysis.image().bit_depth << "-bit"
                << (analysis.alpha_dropped ? ", alpha dropped" : "") << "; " << analysis.layout->describe()
                << "; N = " << analysis.observations() << ", d = " << analysis.dimension() << "\n"
                << solver_lines(analysis.basis, analysis.solve_report)
                << render_console(sweep_table(rows, {}), 4)
                << (args->no_codec || !codable
                        ? std::string("(stored_values_estimate and ratio_estimate count numbers kept, not bytes; "
                                      "the quality columns are measured on the plain reconstruction)\n")
                        : "(stored_values_estimate and ratio_estimate count numbers kept, not bytes; bytes is the "
                          "size of the coded file <stem>.k<K>.pcsc at --quality " +
                              std::to_string(args->quality) +
                              ", and the quality columns are measured on its decoding)\n")
                << rd_line
                << render_k_choice(choice)
                << (components_written > 0 ? "components: " + std::to_string(components_written) +
                                                 " leading components as images in " + args->out +
                                                 "/components/ (mid-gray = 0)\n"
                                           : std::string())
                << "wrote " << args->out << "/\n";
    }
    return 0;
  };
}

}  // namespace pcasweep::cli
