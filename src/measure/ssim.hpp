// pcasweep/measure/ssim.hpp — structural similarity (SSIM) of two images.
//
// Contract: SSIM as defined by Wang, Bovik, Sheikh & Simoncelli, "Image
// quality assessment: from error visibility to structural similarity", IEEE
// Trans. Image Processing 13(4), 2004:
//   local means, variances and covariance under an 11×11 Gaussian window,
//   σ = 1.5 (separable, truncated at radius 5, weights normalised to sum 1);
//   population (not sample) moments;
//   SSIM = ((2μxμy + C1)(2σxy + C2)) / ((μx² + μy² + C1)(σx² + σy² + C2)),
//   C1 = (K1·L)², C2 = (K2·L)², K1 = 0.01, K2 = 0.03, L = data range
//   (255 for 8-bit, 65535 for 16-bit).
// The index is averaged over the valid region only (no padding): for an
// H×W image the map is (H−10)×(W−10). Colour images: the mean of the
// per-channel values. Images smaller than 11×11 have no SSIM: NaN.
// Identical inputs give exactly 1. Work is separable and parallel over rows.
#pragma once

#include <vector>

#include "io/image.hpp"

namespace pcasweep {

// Window radius and size of the Gaussian window (11×11).
inline constexpr int kSsimRadius = 5;
inline constexpr int kSsimWindow = 2 * kSsimRadius + 1;

struct SsimResult {
  double ssim = 0.0;                  // mean of channel_ssim (NaN if the image is under 11×11)
  std::vector<double> channel_ssim;   // per channel, in channel order
  // Optional map (filled only when asked): map_height×map_width values, row-major,
  // each the mean over channels of the local SSIM; map_height = H−10, map_width = W−10.
  int map_width = 0;
  int map_height = 0;
  std::vector<float> map;
};

// original, other: same width, height, channels and bit depth (Error(usage) otherwise).
// Returns the SSIM with L = original.max_value(); fills the map if `want_map`.
SsimResult compute_ssim(const Image& original, const Image& other, bool want_map = false);

// SSIM of one channel held as plain samples.
// a, b: height×width samples, row-major, `stride` samples between
// horizontally adjacent pixels (the channel count for interleaved data),
// first sample at a[0] / b[0]. data_range: L. map (optional): receives
// (height−10)×(width−10) local values (resized here). Returns the mean (NaN if too small).
double ssim_channel(const std::uint16_t* a, const std::uint16_t* b, int width, int height, int stride,
                    double data_range, std::vector<float>* map = nullptr);

// Mean SSIM over several pairs, each pair weighted by its valid-region area
// (every map value counts once). Per-channel values pooled the same way.
SsimResult compute_ssim_sets(const std::vector<Image>& originals, const std::vector<Image>& others);

// The map of `result` as an 8-bit gray image of map_width×map_height:
// local SSIM clipped to [0, 1] and scaled to 0..255 (negative values show as 0).
// Throws Error(usage) if the result holds no map.
Image ssim_map_image(const SsimResult& result);

// The 11 normalised Gaussian weights (σ = 1.5, radius 5) used by the window.
std::vector<double> ssim_gaussian_weights();

}  // namespace pcasweep
