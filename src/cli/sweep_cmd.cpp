// pcasweep sweep IMAGE --out DIR: reconstruct at several k and measure each.
#include <cstdio>
#include <iostream>
#include <memory>
#include <sstream>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/k_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/sweep_study.hpp"
#include "present/k_rules.hpp"
#include "present/sweep_outputs.hpp"
#include "present/sweep_tables.hpp"

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

// The settings as summary.json echoes them.
nlohmann::json settings_json(const SweepArgs& args, const SweepStudySettings& s, const SweepStudy& study) {
  nlohmann::json j = image_settings_json(s.image);
  j["k_rules"] = k_settings_json(*s.k_rules, args.krules.log_scale);
  j["quality"] = args.quality;
  j["measured_on"] = study.coded ? "decoded file" : "reconstruction rounded to the bit depth";
  j["png_level"] = args.png_level;
  return j;
}

// "rate-distortion (rd.csv, rd.svg): <sentence> (study: ...)\n", or nothing without the RD study.
std::string rd_line(const SweepFiles& files) {
  if (!files.rd) return {};
  const RdReport& rd = *files.rd;
  int coded_points = 0;
  for (int n : rd.cost.coded_pass_points) coded_points += n;
  char cost[200];
  std::snprintf(cost, sizeof cost, " (study: %d PCA/DCT points in %zu pass(es) and %d JPEG points, %.1f s)",
                coded_points, rd.cost.coded_pass_points.size(), rd.cost.jpeg_points, rd.cost.total_seconds);
  return "rate-distortion (rd.csv, rd.svg): " + rd.sentence + cost + "\n";
}

// What the console shows after a sweep.
std::string sweep_report(const SweepArgs& args, const SweepStudy& study, const SweepFiles& files) {
  const ImageAnalysis& a = study.analysis;
  std::ostringstream o;
  o << args.input << ": " << a.image().width << "x" << a.image().height << ", " << a.image().channels
    << " channel(s), " << a.image().bit_depth << "-bit" << (a.alpha_dropped ? ", alpha dropped" : "") << "; "
    << a.layout->describe() << "; N = " << a.observations() << ", d = " << a.dimension() << "\n"
    << solver_lines(a.basis, a.solve_report) << render_console(sweep_table(study.rows, {}), 4)
    << (study.coded ? "(stored_values_estimate and ratio_estimate count numbers kept, not bytes; bytes is the "
                      "size of the coded file <stem>.k<K>.pcsc at --quality " +
                          std::to_string(args.quality) + ", and the quality columns are measured on its decoding)\n"
                    : std::string("(stored_values_estimate and ratio_estimate count numbers kept, not bytes; "
                                  "the quality columns are measured on the plain reconstruction)\n"))
    << rd_line(files) << render_k_choice(*study.choice)
    << (files.components_written > 0 ? "components: " + std::to_string(files.components_written) +
                                           " leading components as images in " + args.out +
                                           "/components/ (mid-gray = 0)\n"
                                     : std::string())
    << "wrote " << args.out << "/\n";
  return o.str();
}

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
    SweepStudySettings settings;
    settings.image = image_settings(args->image);
    settings.ks = args->ks.empty() ? std::vector<int>{} : parse_k_list(args->ks);
    settings.k_rules = k_settings(args->krules);
    settings.rate_distortion = !args->no_rd;
    settings.coding.enabled = !args->no_codec;
    settings.coding.quality = args->quality;
    settings.output.png.level = args->png_level;
    std::vector<std::string> paths{args->input};
    paths.insert(paths.end(), args->more.begin(), args->more.end());
    SweepFolderImages images(args->out, args->ssim_map, settings.output.png);
    SweepStudy study = study_image_sweep(paths, settings, &images);
    SweepFileOptions file_options;
    file_options.log_scale = args->krules.log_scale;
    const SweepFiles files = write_sweep_files(study, settings_json(*args, settings, study), file_options, images.folder());
    if (!args->quiet) std::cout << sweep_report(*args, study, files);
    return 0;
  };
}

}  // namespace pcasweep::cli
