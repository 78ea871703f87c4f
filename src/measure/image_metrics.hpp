// pcasweep/measure/image_metrics.hpp — how far a written image is from its original.
//
// Contract: both images have the same size, channels and bit depth; the
// figures are computed on their integer samples (what is on disk).
//   mse            mean over all samples of (x − x̂)²
//   rmse           √mse
//   psnr_db        10·log10(L²/mse), L = 255 or 65535; +∞ when mse = 0
//   max_abs_error  max |x − x̂|
//   relative_error ‖x − x̂‖_F / ‖x − x̄‖_F, x̄ the original's per-channel mean
//                  (the error relative to the centred data; 0 for a perfect copy,
//                  1 for replacing every sample by its channel mean)
// Per-channel mse and psnr_db are kept in channel order.
#pragma once

#include <string>
#include <vector>

#include "io/image.hpp"

namespace pcasweep {

struct ImageQuality {
  double mse = 0.0;
  double rmse = 0.0;
  double psnr_db = 0.0;
  double max_abs_error = 0.0;
  double relative_error = 0.0;
  std::vector<double> channel_mse;
  std::vector<double> channel_psnr_db;
};

// PSNR in dB for a given MSE and data range L: 10·log10(L²/mse); +∞ for mse == 0.
double psnr_from_mse(double mse, double data_range);

// original, reconstruction: same geometry. Throws Error(usage) otherwise.
ImageQuality compare_images(const Image& original, const Image& reconstruction);

// The same figures pooled over several pairs (originals[i] vs reconstructions[i]):
// mse is the mean over every sample of every pair; relative_error uses each
// original's own per-channel mean. All pairs must share channels and bit depth.
ImageQuality compare_image_sets(const std::vector<Image>& originals, const std::vector<Image>& reconstructions);

}  // namespace pcasweep
