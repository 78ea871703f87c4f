// pcasweep/pipeline/batch_figures.hpp — the numbers across the files of a batch.
//
// Contract: batch_figures() reads only the typed rows of a BatchResult
// (pipeline/batch.hpp): no files, no rendering. For every swept k (the union
// of the files' ks) and subset ("all"; with a shared basis also "training"
// and "held_out") it gives the spread of PSNR and SSIM across files
// (measure/batch_stats.hpp: min, numpy's linear 5th percentile, median,
// mean), the size totals and how many files meet the target. A file whose
// largest k is below k counts with its last row (it is kept whole there).
// Size totals: per-file stored values (shared basis: the file's N·k
// coefficients, plus the basis k·d + d counted once), raw samples W·H·c.
// The recommendation is recommend_k over the swept files at every k.
#pragma once

#include <cstddef>
#include <limits>
#include <string>
#include <vector>

#include "measure/batch_stats.hpp"
#include "pipeline/batch.hpp"

namespace pcasweep {

// The figures of one subset of files at one k.
struct KAggregate {
  std::string subset;            // "all", "training" or "held_out"
  int k = 0;
  std::size_t files = 0;         // files with a row at k
  Spread psnr_db, ssim;          // across those files
  double stored_values = 0.0;    // total (shared basis counted once)
  double raw_samples = 0.0;      // total W·H·c
  double bytes = std::numeric_limits<double>::quiet_NaN();                // total coded bytes (codec columns)
  double bits_per_pixel_mean = std::numeric_limits<double>::quiet_NaN();  // mean of 8·bytes/(W·H)
  std::size_t meeting = 0;       // files meeting the target
  double share() const { return double(meeting) / double(files); }
};

// A file below the target at the recommended k.
struct FailingFile {
  std::string path;
  FileQuality quality;           // at the recommended k
};

struct BatchFigures {
  std::vector<int> ks;                   // every k any swept file has, ascending
  bool has_ssim = false;                 // some file has an SSIM figure (not NaN)
  bool has_bytes = false;                // some file was coded (bytes >= 0)
  std::vector<KAggregate> aggregates;    // by subset ("all" first), then k; empty subsets left out
  Recommendation recommendation;         // indices are into swept_files()
  std::vector<FailingFile> failing;      // at the recommended k, worst first (empty when not found)
  double raw_samples = 0.0;              // total over the swept files
  double recommended_stored_values = 0.0;  // total at the recommended k (when found)
  double recommended_bytes = std::numeric_limits<double>::quiet_NaN();  // total coded bytes there (has_bytes)
};

// result: a finished batch; target: the recommendation's goal. Returns the
// figures above. Throws nothing for an empty batch (all lists empty).
BatchFigures batch_figures(const BatchResult& result, const CoverageTarget& target);

// Total stored values at k over the swept files, the shared basis (k·d + d)
// counted once. NaN when a file has no row at k.
double stored_total(const BatchResult& result, int k);

}  // namespace pcasweep
