// pcasweep demo --out DIR: the sweep on every bundled Tern Point sample.
#include <algorithm>
#include <chrono>
#include <filesystem>
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/batch_study.hpp"
#include "present/batch_outputs.hpp"
#include "present/batch_tables.hpp"

#ifndef PCASWEEP_SAMPLES_DIR
#define PCASWEEP_SAMPLES_DIR "samples"
#endif

namespace pcasweep::cli {

namespace {
struct DemoArgs {
  std::string out = "demo-out";
  std::string samples = PCASWEEP_SAMPLES_DIR;
  ImageOptionText image;
};
}  // namespace

Action setup_demo(CLI::App& sub) {
  auto args = std::make_shared<DemoArgs>();
  sub.add_option("--out,-o", args->out, "Folder for the outputs, one subfolder per sample (default demo-out)");
  sub.add_option("--samples", args->samples, "Folder holding the samples (default: the bundled samples/)");
  add_image_options(sub, args->image);
  return [args]() {
    namespace fs = std::filesystem;
    if (!fs::is_directory(args->samples)) throw data_error(args->samples + ": no such samples folder");
    std::vector<std::string> images;
    for (const auto& entry : fs::directory_iterator(args->samples))
      if (entry.is_regular_file() && has_image_extension(entry.path().string())) images.push_back(entry.path());
    std::sort(images.begin(), images.end());
    if (images.empty()) throw data_error(args->samples + ": no images in the samples folder");
    const ImageStudySettings settings = image_settings(args->image);
    const auto start = std::chrono::steady_clock::now();
    int failures = 0;
    for (const auto& path : images) {
      try {
        ImageAnalysis a = analyze_image(path, settings);
        const auto ks = default_ks(a.basis.dimension());
        const std::string dir = (fs::path(args->out) / output_stem(path)).string();
        const auto rows = write_sweep(a, ks, dir, image_settings_json(settings));
        std::cout << "\n== " << path << ": " << a.image().width << "x" << a.image().height << ", "
                  << a.image().channels << " channel(s), " << a.image().bit_depth << "-bit; " << a.layout->describe()
                  << "; N = " << a.observations() << ", d = " << a.dimension() << "\n"
                  << render_console(sweep_table(rows, {}), 4) << "wrote " << dir << "/\n";
      } catch (const Error& e) {
        std::cerr << "pcasweep: " << e.what() << "\n";
        ++failures;
      }
    }
    // Recordings (the pump vibration log, .wav; its .csv twin holds the same samples):
    // default windows (64 frames, no overlap, joint channels), every default k.
    std::vector<std::string> recordings;
    for (const auto& entry : fs::directory_iterator(args->samples))
      if (entry.is_regular_file() && entry.path().extension() == ".wav") recordings.push_back(entry.path());
    std::sort(recordings.begin(), recordings.end());
    for (const auto& path : recordings) {
      try {
        const SignalStudySettings signal;
        const SignalAnalysis a = analyze_signal(path, signal);
        const std::string dir = (fs::path(args->out) / output_stem(path)).string();
        const auto rows = write_signal_sweep(a, default_ks(a.basis.rank()), dir, signal_settings_json(signal));
        std::cout << "\n== " << describe_analysis(a) << "\n"
                  << render_console(signal_sweep_table(rows, {}, false), 4) << "wrote " << dir << "/\n";
      } catch (const Error& e) {
        std::cerr << "pcasweep: " << e.what() << "\n";
        ++failures;
      }
    }
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::cout << "\n" << images.size() + recordings.size() - failures << " of " << images.size() + recordings.size()
              << " samples swept in "
              << format_real(seconds, 3) << " s; outputs in " << args->out << "/\n"
              << "(stored_values_estimate and ratio_estimate count numbers kept, not bytes; the quality columns are measured on the plain reconstruction)\n";
    // The same samples as one batch (pipeline/batch.hpp): a k for all of them and report.html.
    BatchSettings batch;
    batch.image = settings;
    batch.threads = 1;
    batch.settings_json = image_settings_json(settings);
    batch.settings_json["inputs"] = images;
    batch.settings_json["layout_text"] = "8x8 patches (default), per-file basis";
    CollectedInputs inputs;
    inputs.files = images;
    const BatchStudy study = study_batch(inputs, batch);
    const std::string batch_dir = (fs::path(args->out) / "batch").string();
    write_batch_outputs(study, batch, batch_dir);
    std::cout << "\nbatch: " << batch_summary_line(study.result, study.figures, batch.target) << "\n"
              << "report: " << (fs::absolute(fs::path(batch_dir) / "report.html")).string() << "\n";
    if (!study.result.failures.empty()) ++failures;
    return failures ? 1 : 0;
  };
}

}  // namespace pcasweep::cli
