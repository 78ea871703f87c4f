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
#include "pipeline/sweep_study.hpp"
#include "present/batch_outputs.hpp"
#include "present/batch_tables.hpp"
#include "present/signal_outputs.hpp"
#include "present/sweep_outputs.hpp"
#include "present/sweep_tables.hpp"

#ifndef PCASWEEP_SAMPLES_DIR
#define PCASWEEP_SAMPLES_DIR "samples"
#endif

namespace pcasweep::cli {

namespace {
namespace fs = std::filesystem;

struct DemoArgs {
  std::string out = "demo-out";
  std::string samples = PCASWEEP_SAMPLES_DIR;
  ImageOptionText image;
};

// The regular files of `folder` whose path `keep` accepts, sorted.
std::vector<std::string> files_in(const std::string& folder, bool (*keep)(const fs::path&)) {
  std::vector<std::string> files;
  for (const auto& entry : fs::directory_iterator(folder))
    if (entry.is_regular_file() && keep(entry.path())) files.push_back(entry.path());
  std::sort(files.begin(), files.end());
  return files;
}

// One sample image: sweep's own call (pipeline/sweep_study.hpp) with the demo's fixed
// settings: every default k, the plain reconstruction (no codec, no RD study, no rules for k).
void demo_image(const std::string& path, const ImageStudySettings& image, const std::string& out) {
  SweepStudySettings settings;
  settings.image = image;
  const std::string dir = (fs::path(out) / output_stem(path)).string();
  SweepFolderImages images(dir, false, settings.output.png);
  SweepStudy study = study_image_sweep({path}, settings, &images);
  SweepFileOptions files;
  files.component_images = false;
  write_sweep_files(study, image_settings_json(image), files, images.folder());
  const ImageAnalysis& a = study.analysis;
  std::cout << "\n== " << path << ": " << a.image().width << "x" << a.image().height << ", " << a.image().channels
            << " channel(s), " << a.image().bit_depth << "-bit; " << a.layout->describe()
            << "; N = " << a.observations() << ", d = " << a.dimension() << "\n"
            << render_console(sweep_table(study.rows, {}), 4) << "wrote " << dir << "/\n";
}

// One recording (the pump vibration log): the signal sweep's call with default
// windows (64 frames, no overlap, joint channels) and every default k.
void demo_recording(const std::string& path, const std::string& out) {
  const SignalStudySettings settings;
  SignalFolderRecordings recordings((fs::path(out) / output_stem(path)).string());
  const SignalSweepStudy study = study_signal_sweep(path, settings, {}, &recordings);
  write_signal_sweep_tables(study.analysis, study.rows, signal_settings_json(settings), recordings.folder());
  std::cout << "\n== " << describe_analysis(study.analysis) << "\n"
            << render_console(signal_sweep_table(study.rows, {}, false), 4) << "wrote "
            << recordings.folder().dir() << "/\n";
}

// Runs `step` on each path; a failure is printed and counted. Returns the failures.
template <typename Step>
int each_sample(const std::vector<std::string>& paths, const Step& step) {
  int failures = 0;
  for (const auto& path : paths) {
    try {
      step(path);
    } catch (const Error& e) {
      std::cerr << "pcasweep: " << e.what() << "\n";
      ++failures;
    }
  }
  return failures;
}

// The same sample images as one batch (pipeline/batch_study.hpp): a k for all of them and
// report.html. Returns 1 when a file failed.
int demo_batch(const std::vector<std::string>& images, const ImageStudySettings& settings, const std::string& out) {
  BatchSettings batch;
  batch.image = settings;
  batch.threads = 1;
  batch.target.psnr_db = kDefaultBatchTargetPsnr;  // as `batch` with no --target-psnr
  batch.settings_json = image_settings_json(settings);
  batch.settings_json["inputs"] = images;
  batch.settings_json["layout_text"] = patch_layout_text(settings.patch);  // as `batch` words it
  CollectedInputs inputs;
  inputs.files = images;
  const BatchStudy study = study_batch(inputs, batch);
  const std::string batch_dir = (fs::path(out) / "batch").string();
  write_batch_outputs(study, batch, batch_dir);
  std::cout << "\nbatch: " << batch_summary_line(study.result, study.figures, batch.target) << "\n"
            << "report: " << (fs::absolute(fs::path(batch_dir) / "report.html")).string() << "\n";
  return study.result.failures.empty() ? 0 : 1;
}

}  // namespace

Action setup_demo(CLI::App& sub) {
  auto args = std::make_shared<DemoArgs>();
  sub.add_option("--out,-o", args->out, "Folder for the outputs, one subfolder per sample (default demo-out)");
  sub.add_option("--samples", args->samples, "Folder holding the samples (default: the bundled samples/)");
  add_image_options(sub, args->image);
  return [args]() {
    if (!fs::is_directory(args->samples)) throw data_error(args->samples + ": no such samples folder");
    const auto images = files_in(args->samples, [](const fs::path& p) { return has_image_extension(p.string()); });
    if (images.empty()) throw data_error(args->samples + ": no images in the samples folder");
    // Recordings: the .wav (its .csv twin holds the same samples).
    const auto recordings = files_in(args->samples, [](const fs::path& p) { return p.extension() == ".wav"; });
    const ImageStudySettings settings = image_settings(args->image);
    const auto start = std::chrono::steady_clock::now();
    int failures = each_sample(images, [&](const std::string& path) { demo_image(path, settings, args->out); });
    failures += each_sample(recordings, [&](const std::string& path) { demo_recording(path, args->out); });
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    const std::size_t samples = images.size() + recordings.size();
    std::cout << "\n" << samples - failures << " of " << samples << " samples swept in " << format_real(seconds, 3)
              << " s; outputs in " << args->out << "/\n"
              << "(stored_values_estimate and ratio_estimate count numbers kept, not bytes; the quality columns "
                 "are measured on the plain reconstruction)\n";
    failures += demo_batch(images, settings, args->out);
    return failures ? 1 : 0;
  };
}

}  // namespace pcasweep::cli
