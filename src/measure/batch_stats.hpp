// pcasweep/measure/batch_stats.hpp — quality across many files, and the k that serves most of them.
//
// Contract: pure arithmetic on per-file figures (no files, no images).
//   percentile_linear   numpy.percentile's default ("linear", Hyndman & Fan
//                       type 7): sorted v, h = (n−1)·p/100, v[⌊h⌋] + (h−⌊h⌋)·(v[⌊h⌋+1] − v[⌊h⌋]);
//                       +∞ entries (PSNR of an exact copy) sort last; an
//                       interpolation that touches one returns +∞.
//   spread_of           count, min, 5th percentile, median, mean.
//   recommend_k         the smallest k (ks ascending) at which at least
//                       `coverage` of the files meet the target (PSNR ≥ target
//                       and SSIM ≥ target, each if set); a missing figure (NaN)
//                       counts as not meeting. The files failing at that k are
//                       listed worst first: lowest PSNR first, then lowest SSIM.
#pragma once

#include <cstddef>
#include <limits>
#include <vector>

#include "measure/quality_target.hpp"

namespace pcasweep {

// values: any order, NaNs ignored; p in [0, 100]. Returns NaN for no values.
double percentile_linear(std::vector<double> values, double p);

struct Spread {
  std::size_t count = 0;  // values that were not NaN
  double min = std::numeric_limits<double>::quiet_NaN();
  double p5 = std::numeric_limits<double>::quiet_NaN();
  double median = std::numeric_limits<double>::quiet_NaN();
  double mean = std::numeric_limits<double>::quiet_NaN();
};

// values: NaNs ignored. Returns the spread (all NaN when nothing is left).
Spread spread_of(const std::vector<double>& values);

struct FileQuality {
  double psnr_db = std::numeric_limits<double>::quiet_NaN();
  double ssim = std::numeric_limits<double>::quiet_NaN();
};

// A quality target (measure/quality_target.hpp) that a share of the files must meet.
struct CoverageTarget : QualityTarget {
  double coverage = 0.95;  // share of files in (0, 1]
};

// True when q meets every goal of the target that is set (meets_quality).
bool meets_target(const FileQuality& q, const CoverageTarget& target);

struct KCoverage {
  int k = 0;
  std::size_t meeting = 0;
  std::size_t total = 0;
  double share = 0.0;  // meeting / total (0 when total = 0)
};

struct Recommendation {
  bool found = false;
  int k = 0;                          // valid when found
  std::size_t k_index = 0;            // index into ks
  std::vector<KCoverage> per_k;       // one per k, ascending
  std::vector<std::size_t> failing;   // file indices failing at k, worst first (when found)
};

// ks: m values ascending. quality: m rows (one per k) of F files each.
// Returns the recommendation; throws std::invalid_argument on ragged input.
Recommendation recommend_k(const std::vector<int>& ks, const std::vector<std::vector<FileQuality>>& quality,
                           const CoverageTarget& target);

// The files (indices) failing the target in `row` (F entries), worst first.
std::vector<std::size_t> failing_worst_first(const std::vector<FileQuality>& row, const CoverageTarget& target);

}  // namespace pcasweep
