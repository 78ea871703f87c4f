// pcasweep batch INPUTS... --out DIR: the sweep over a collection, with a recommendation and report.html.
#include <iostream>
#include <memory>
#include <thread>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/progress.hpp"
#include "core/error.hpp"
#include "pipeline/batch_study.hpp"
#include "present/batch_outputs.hpp"
#include "present/output_folder.hpp"
#include "present/batch_tables.hpp"

namespace pcasweep::cli {

namespace {
struct BatchArgs {
  std::vector<std::string> inputs;
  std::string out;
  bool recursive = false;
  std::string ks;
  std::string basis = "per-file";
  std::vector<std::string> train;
  double train_fraction = 0.2;
  int threads = 0;
  double coverage = 95.0;
  double target_psnr = kDefaultBatchTargetPsnr;
  double target_ssim = -1.0;
  int report_sample = 6;
  bool no_report = false;
  int quality = 0;
  bool quiet = false;
  ImageOptionText image;
};


void add_batch_options(CLI::App& sub, BatchArgs& a) {
  sub.add_option("INPUTS", a.inputs,
                 "Files, folders, glob patterns (quote them: 'scans/*.png') and @list files (one path per line, "
                 "# comments; relative paths from the list's folder)")
      ->required();
  sub.add_option("--out,-o", a.out, "Folder for the outputs (created if missing)")->required();
  sub.add_flag("--recursive,-r", a.recursive, "Also take files in subfolders of the folders given");
  sub.add_option("--k", a.ks, "Components to keep, comma-separated (default: 1, 2, 4, ... below d, then d, per file)");
  sub.add_option("--basis", a.basis,
                 "per-file: each file its own basis (default); shared: one basis learned from a training subset and "
                 "applied to all")
      ->check(CLI::IsMember({"per-file", "shared"}));
  sub.add_option("--train", a.train,
                 "Shared basis: the training files (files, folders, patterns, @lists); give it after the inputs")
      ->expected(1, -1);
  sub.add_option("--train-fraction", a.train_fraction,
                 "Shared basis without --train: share of the files drawn at random for training (default 0.2)");
  sub.add_option("--threads,-j", a.threads,
                 "Files swept at once (default: the number of cores). Each file's linear algebra runs on one "
                 "thread, so the cores are not oversubscribed");
  sub.add_option("--coverage", a.coverage,
                 "Share of files that must meet the target, in percent (default 95; 0.95 is read as 95%)");
  sub.add_option("--target-psnr", a.target_psnr, "PSNR target in dB for the recommendation (default 40)");
  sub.add_option("--target-ssim", a.target_ssim, "SSIM target for the recommendation (default: none)");
  sub.add_option("--report-sample", a.report_sample,
                 "Files shown with images in report.html (default 6; evenly spaced, plus the worst)");
  sub.add_flag("--no-report", a.no_report, "Do not write report.html");
  sub.add_option("--quality", a.quality,
                 "Per-file basis: encode every k with the codec at this quality 1..100 and measure the decoded "
                 "image (fills bytes and bits_per_pixel; default: no coding, quality of the unquantised "
                 "reconstruction)")
      ->check(CLI::Range(1, 100));
  sub.add_flag("--quiet,-q", a.quiet, "No progress and no summary on success (failures are still reported)");
  add_image_options(sub, a.image);
}

// The target and coverage of the recommendation. Throws Error(usage).
CoverageTarget coverage_target(const BatchArgs& a) {
  if (!(a.coverage > 0.0 && a.coverage <= 100.0)) throw usage_error("--coverage must be in (0, 100] percent");
  CoverageTarget t;
  t.coverage = a.coverage <= 1.0 ? a.coverage : a.coverage / 100.0;
  t.psnr_db = a.target_psnr;
  if (a.target_ssim >= 0.0) {
    if (a.target_ssim > 1.0) throw usage_error("--target-ssim must be at most 1");
    t.ssim = a.target_ssim;
  }
  return t;
}

// The settings as summary.json echoes them.
nlohmann::json settings_json(const BatchArgs& a, const BatchSettings& s) {
  nlohmann::json j = image_settings_json(s.image);
  j["inputs"] = a.inputs;
  j["recursive"] = a.recursive;
  j["k"] = a.ks.empty() ? nlohmann::json("default") : nlohmann::json(s.ks);
  j["basis"] = a.basis;
  if (s.basis == BasisMode::shared) {
    if (a.train.empty()) j["train_fraction"] = s.train_fraction;
    else j["train"] = a.train;
    j["seed"] = s.seed;
  }
  j["threads"] = s.threads;
  j["quality"] = a.quality > 0 ? nlohmann::json(a.quality) : nlohmann::json();
  j["layout_text"] = patch_layout_text(s.image.patch);
  return j;
}

// The parsed options as the batch's settings. Throws Error(usage).
BatchSettings batch_settings(const BatchArgs& a) {
  BatchSettings s;
  s.image = image_settings(a.image);
  if (!a.ks.empty()) s.ks = parse_k_list(a.ks);
  if (s.image.layout != "patches") throw usage_error("batch: only --layout patches is supported, not '" + s.image.layout + "'");
  s.basis = a.basis == "shared" ? BasisMode::shared : BasisMode::per_file;
  if (!a.train.empty() && s.basis != BasisMode::shared) throw usage_error("--train needs --basis shared");
  s.train_files = a.train;
  s.train_fraction = a.train_fraction;
  s.seed = a.image.seed;  // --seed (shared with the randomized solver) also draws the training subset
  const unsigned cores = std::max(1u, std::thread::hardware_concurrency());
  if (a.threads < 0) throw usage_error("--threads must be at least 1");
  s.threads = a.threads == 0 ? int(cores) : a.threads;
  s.target = coverage_target(a);
  if (a.report_sample < 0) throw usage_error("--report-sample must be 0 or more");
  s.report_sample = a.report_sample;
  s.write_report = !a.no_report;
  if (a.quality > 0) {
    s.coding.enabled = true;
    s.coding.quality = a.quality;
  }
  s.settings_json = settings_json(a, s);
  return s;
}

// The inputs' image files; skipped inputs are noted on stderr. Throws
// Error(data), after listing the unreadable inputs, when there is none.
CollectedInputs batch_inputs(const BatchArgs& a) {
  CollectOptions co;
  co.recursive = a.recursive;
  co.supported = has_image_extension;
  CollectedInputs inputs = collect_inputs(a.inputs, co);
  if (!a.quiet)
    for (const auto& n : inputs.skipped) std::cerr << "pcasweep: note: skipped " << n.path << ": " << n.reason << "\n";
  if (inputs.files.empty()) {
    for (const auto& f : inputs.failed) std::cerr << "pcasweep: " << f.path << ": " << f.reason << "\n";
    throw data_error("no image files among the inputs");
  }
  return inputs;
}

void print_outcome(const BatchArgs& a, const BatchStudy& study, const BatchSettings& s) {
  const BatchResult& result = study.result;
  if (!a.quiet) std::cout << "pcasweep batch: " << batch_summary_line(result, study.figures, s.target) << "\n";
  if (!result.failures.empty()) {
    std::cerr << "pcasweep: " << result.failures.size() << " input(s) failed:\n";
    for (const auto& f : result.failures) std::cerr << "  " << f.path << ": " << f.reason << "\n";
  }
  if (!a.quiet)
    std::cout << "wrote " << a.out << "/ (batch.csv, aggregate.csv, failing_files.csv, failures.csv, summary.json"
              << (s.write_report ? ", report.html" : "") << ")\n";
}

int run_batch_command(const BatchArgs& a) {
  const BatchSettings s = batch_settings(a);
  const CollectedInputs inputs = batch_inputs(a);
  const OutputFolder out(a.out);  // an unwritable --out stops the batch now, not after the sweep
  ProgressDisplay progress(ProgressDisplay::detect(a.quiet));
  const BatchStudy study = study_batch(inputs, s, [&](const BatchProgress& p) { progress.update(p); });
  progress.finish();
  write_batch_outputs(study, s, a.out);
  print_outcome(a, study, s);
  return study.result.exit_code();
}

}  // namespace

Action setup_batch(CLI::App& sub) {
  auto a = std::make_shared<BatchArgs>();
  add_batch_options(sub, *a);
  return [a]() { return run_batch_command(*a); };
}

}  // namespace pcasweep::cli
