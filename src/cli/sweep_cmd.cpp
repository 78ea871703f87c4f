// pcasweep sweep IMAGE --out DIR: reconstruct at several k and measure each.
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/image_set.hpp"

namespace pcasweep::cli {

namespace {
struct SweepArgs {
  std::string input;
  std::vector<std::string> more;  // further images for --layout whole/bands
  std::string out;
  std::string ks;
  bool quiet = false;
  ImageOptionText image;
};
}  // namespace

Action setup_sweep(CLI::App& sub) {
  auto args = std::make_shared<SweepArgs>();
  sub.add_option("IMAGE", args->input,
                 "Image (PNG, JPEG, BMP, TGA, PNM; 8 or 16 bit) or recording (WAV, FLAC, Ogg, AIFF, CSV, raw; "
                 "see --window) to analyse")
      ->required();
  sub.add_option("MORE", args->more,
                 "Further images, for --layout whole (same size, each one observation) or bands (gray, "
                 "co-registered, one per band)");
  sub.add_option("--out,-o", args->out, "Folder for the outputs (created if missing)")->required();
  sub.add_option("--k", args->ks,
                 "Components to keep, comma-separated, each 1..d (default: 1, 2, 4, ... below d, then d; "
                 "d = patch rows x columns x channels)");
  sub.add_flag("--quiet,-q", args->quiet, "Print nothing on success");
  add_image_options(sub, args->image);
  auto signal = std::make_shared<SignalOptionText>();
  add_signal_options(sub, *signal);  // after the image options: reuses their --layout if any
  return [args, signal, app = &sub]() {
    if (signal_input_requested(*app, *signal, args->input))
      return run_signal_sweep(args->input, args->out, args->ks, args->quiet, signal_settings(*signal, app));
    const ImageStudySettings settings = image_settings(args->image);
    std::vector<int> ks = args->ks.empty() ? std::vector<int>{} : parse_k_list(args->ks);
    std::vector<std::string> paths{args->input};
    paths.insert(paths.end(), args->more.begin(), args->more.end());
    ImageAnalysis analysis = analyze_image_files(paths, settings, ks);
    if (ks.empty()) ks = default_ks_for(analysis);
    check_ks_against(ks, analysis);
    const auto rows = write_sweep(analysis, ks, args->out, image_settings_json(settings));
    const int components_written = write_component_images(analysis, args->out);
    if (!args->quiet) {
      std::cout << args->input << ": " << analysis.image().width << "x" << analysis.image().height << ", "
                << analysis.image().channels << " channel(s), " << analysis.image().bit_depth << "-bit"
                << (analysis.alpha_dropped ? ", alpha dropped" : "") << "; " << analysis.layout->describe()
                << "; N = " << analysis.X.rows() << ", d = " << analysis.X.cols() << "\n"
                << solver_lines(analysis.basis)
                << render_console(sweep_table(rows, {}), 4)
                << "(stored_values and ratio are an estimate of size in numbers kept, not bytes)\n"
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
