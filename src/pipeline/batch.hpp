// pcasweep/pipeline/batch.hpp — the sweep over a collection of images.
//
// Contract: run_batch() takes the files collect_inputs() found and sweeps
// each one, streaming: a file is read, observed, solved (per-file basis) or
// projected on the shared basis, reconstructed at every k, measured, and
// then dropped; only its typed rows (one SweepRow per k) are kept, so memory
// does not grow with the number of files beyond those small rows.
//   per-file basis: analyze_image + sweep_ks per file (pipeline/image_study.hpp).
//   shared basis:   the training files' scatter is accumulated file by file
//                   (solve/scatter_sum.hpp) and solved once (exact solver);
//                   every file is then projected on that basis. Per-file
//                   stored_values count only the file's coefficients (N·k);
//                   the basis (k·d + d values) is counted once for the batch.
// A file that cannot be read or swept is recorded with its reason and the
// batch goes on. Files are swept in parallel by `threads` workers and the
// linear algebra inside each file runs on one thread (OpenMP and Eigen), so
// the cores are not oversubscribed (measured faster: docs/batch.md).
// The figures across files are pipeline/batch_figures.hpp, the report's
// pictures pipeline/batch_visuals.hpp; present/batch_outputs.hpp writes them.
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "io/inputs.hpp"
#include "measure/batch_stats.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep {

enum class BasisMode { per_file, shared };

struct BatchSettings {
  ImageStudySettings image;
  std::vector<int> ks;                     // empty: default_ks(d) of each file
  BasisMode basis = BasisMode::per_file;
  std::vector<std::string> train_files;    // shared: the training files (empty: use train_fraction)
  double train_fraction = 0.2;             // shared: share of the batch drawn for training
  std::uint64_t seed = 1;                  // shared: draws the training subset
  int threads = 1;                         // file workers (>= 1)
  CoverageTarget target;                   // --target-psnr, --target-ssim, --coverage
  int report_sample = 6;                   // files shown with images in report.html
  int live_viewers = 3;                    // of those, how many get a slider
  bool write_report = true;
  // Per-file basis only: encode every k (codec/, own basis) at coding.quality and
  // measure the decoded image, filling the bytes and bits_per_pixel columns.
  // Off by default: the quality columns are then those of the unquantised
  // reconstruction, which is also what the report's live slider rebuilds.
  SweepCoding coding;
  nlohmann::json settings_json;            // echoed into summary.json
};

struct FileResult {
  std::string path;
  bool ok = false;
  std::string error;             // one line, when !ok
  bool training = false;         // shared basis: the file is in the training subset
  int width = 0, height = 0, channels = 0, bit_depth = 0;
  std::vector<std::string> channel_names;  // the image's, one per channel
  std::int64_t observations = 0, dimension = 0, rank = 0;
  double seconds = 0.0;
  std::vector<SweepRow> rows;    // sweep_ks() of the file, one per k, ascending
};

// The file's row at k; for k beyond its largest k, its last row (the file is
// then reconstructed with every component it has). nullptr otherwise.
const SweepRow* row_at(const FileResult& file, int k);

// PSNR and SSIM at k (NaN when the file has no row for k).
FileQuality quality_at(const FileResult& file, int k);

struct SharedBasisInfo {
  std::vector<std::string> training_files;  // in the order accumulated
  std::vector<std::string> training_extra;  // training files that are not in the batch
  std::int64_t observations = 0, dimension = 0;
  int bit_depth = 0;                        // of the training files; every file must match
  Basis basis;
  SolveReport solve_report;  // the exact solver over the accumulated scatter, and why
};

struct BatchResult {
  CollectedInputs inputs;
  std::vector<FileResult> files;            // in input order
  std::optional<SharedBasisInfo> shared;
  std::vector<InputNote> failures;          // inputs.failed + files that failed, with reasons
  double seconds = 0.0;
  int threads_used = 1;
  std::string parallel_mode;                // "files": files in parallel, one thread inside each
  int exit_code() const { return failures.empty() ? 0 : 1; }
};

// The files that were swept (ok), in input order.
std::vector<const FileResult*> swept_files(const BatchResult& result);

struct BatchProgress {
  std::size_t done = 0, total = 0, failed = 0;
  std::string phase;  // "training" or "sweep"
  std::string last;   // the file just finished
};
using BatchProgressFn = std::function<void(const BatchProgress&)>;

// Validates the settings (throws Error(usage) before anything is written),
// then sweeps every file. `progress` (optional) is called after each file,
// from one thread at a time. Returns the per-file results; never throws for
// a bad file (it lands in `failures`), throws Error if nothing can be done
// (no files, no training file readable).
BatchResult run_batch(const CollectedInputs& inputs, const BatchSettings& settings,
                      const BatchProgressFn& progress = {});

}  // namespace pcasweep
