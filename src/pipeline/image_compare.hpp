// pcasweep/pipeline/image_compare.hpp — one image measured against another, as one call for `compare`.
//
// Contract: reads both files (io/), checks that they match, and measures MSE and
// PSNR per channel (measure/image_metrics.hpp) and SSIM (measure/ssim.hpp),
// timing the SSIM. Returns typed results; writes nothing.
#pragma once

#include <string>
#include <vector>

#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"

namespace pcasweep {

struct ImageComparison {
  double data_range = 0.0;                 // L: 255 or 65535
  std::vector<std::string> channel_names;  // of the original
  ImageQuality quality;                    // MSE, PSNR, per channel and pooled
  SsimResult ssim;                         // with its local map when asked for
  double ssim_seconds = 0.0;               // wall time of the SSIM
  double ssim_cpu_seconds = 0.0;           // CPU time of the SSIM, all threads
};

// original, other: image files of the same size, channels and bit depth (Error(usage)
// naming `other` otherwise). keep_map: keep SSIM's local map ((H−10)×(W−10)).
// Throws Error(data) for unreadable files.
ImageComparison compare_image_files(const std::string& original, const std::string& other, bool keep_map,
                                    SsimPrecision precision);

}  // namespace pcasweep
