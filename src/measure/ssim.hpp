// pcasweep/measure/ssim.hpp — structural similarity (SSIM) of two images, whole or streamed in bands.
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
// Identical inputs give exactly 1.
//
// How it is computed (docs/quality.md, "SSIM"): the same fraction, with its
// denominators written as μx² + μy² = 2μxμy + (μx − μy)² and
// σx² + σy² = 2σxy + σd², d = x − y, so the four filtered moments are
// x − s, d, d² and (x − s)(y − s), s an integer near the local mean of the
// original (per column tile and channel): σd² is formed from the small
// difference d, not as a difference of large second moments. Every image is
// processed as bands of rows (one implementation for whole images and
// streams), in column tiles that stay in cache, in float or double lanes.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "io/image.hpp"

namespace pcasweep {

// Window radius and size of the Gaussian window (11×11).
inline constexpr int kSsimRadius = 5;
inline constexpr int kSsimWindow = 2 * kSsimRadius + 1;

// Arithmetic of the filters and of the index.
//   automatic         the rule of ssim_precision_for(): single where it was
//                     measured to agree with double and scikit-image to 1e-6,
//                     which is nowhere in general: double for every data range
//                     (the measurements are beside the rule in ssim.cpp)
//   single_precision  float lanes (8 per AVX2 vector)
//   double_precision  double lanes (4 per AVX2 vector)
enum class SsimPrecision { automatic, single_precision, double_precision };

// The precision `requested` resolves to for data range L: single_precision
// or double_precision, never automatic. The rule and the agreement measured
// behind it are written beside its definition in ssim.cpp and in docs/quality.md.
SsimPrecision ssim_precision_for(SsimPrecision requested, double data_range);

// "auto", "single" or "double" (the names of --ssim-precision).
const char* ssim_precision_name(SsimPrecision precision);
// Parses "auto", "single" or "double". Throws Error(usage) otherwise.
SsimPrecision parse_ssim_precision(const std::string& text);

struct SsimResult {
  double ssim = 0.0;                  // mean of channel_ssim (NaN if the image is under 11×11)
  std::vector<double> channel_ssim;   // per channel, in channel order
  // Optional map (filled only when asked): map_height×map_width values, row-major,
  // each the mean over channels of the local SSIM; map_height = H−10, map_width = W−10.
  int map_width = 0;
  int map_height = 0;
  std::vector<float> map;
  // The precision actually used (single_precision or double_precision).
  SsimPrecision precision = SsimPrecision::double_precision;
};

// SSIM of two images of one geometry, fed as bands of rows, top to bottom.
//
// Work memory is O(width·channels·11) for the carried filter state plus, only
// when on_map_row is given, one map row per input row of the current band
// (at most 128): never O(width·height). Results do not depend on how the rows
// are cut into bands nor on the thread count (bit for bit): each output value
// is computed by the same operations in the same order, and the sums run
// column tile by column tile, row by row, in a fixed order.
// Threads: add_rows() spreads column tiles over the OpenMP threads when it is
// called outside a parallel region and the band is large enough; inside a
// parallel region it runs serially in the calling thread (one accumulator per
// thread is the intended use; one accumulator must not be fed from two
// threads at once). Movable, not copyable.
class SsimAccumulator {
 public:
  // width×height pixels (≥ 1 each), channels ≥ 1, data_range L > 0 (255 or
  // 65535). precision: automatic resolves through ssim_precision_for().
  // on_map_row (optional): called with each row of the local-SSIM map as soon
  // as the band that completes it has been added: (map row index 0..H−11,
  // W−10 floats: the mean over channels of the local SSIM). Never called for
  // images under 11×11. The pointer is valid during the call only.
  // Throws Error(usage) for a non-positive size, channel count or data range.
  SsimAccumulator(int width, int height, int channels, double data_range,
                  SsimPrecision precision = SsimPrecision::automatic,
                  std::function<void(int row, const float* values)> on_map_row = {});
  ~SsimAccumulator();
  SsimAccumulator(SsimAccumulator&&) noexcept;
  SsimAccumulator& operator=(SsimAccumulator&&) noexcept;
  SsimAccumulator(const SsimAccumulator&) = delete;
  SsimAccumulator& operator=(const SsimAccumulator&) = delete;

  // original, other: `rows` consecutive rows (width·channels interleaved
  // samples each, rows back to back) of the two images, continuing where the
  // previous call stopped. rows = 0 does nothing. Samples above L are not
  // checked. Throws Error(usage) for rows < 0, null pointers, or rows past
  // the image's height (nothing is consumed then).
  void add_rows(const std::uint16_t* original, const std::uint16_t* other, int rows);

  // After all `height` rows: the mean SSIM and the per-channel values (NaN
  // under 11×11); no map (use on_map_row). Throws Error(usage) before the
  // last row has been added.
  SsimResult result() const;

  SsimPrecision precision() const;  // single_precision or double_precision: what is used
  int rows_added() const;           // rows consumed so far, 0..height
  int width() const;
  int height() const;
  int channels() const;

  struct Impl;

 private:
  std::unique_ptr<Impl> impl_;
};

// original, other: same width, height, channels and bit depth (Error(usage) otherwise).
// Returns the SSIM with L = original.max_value(); fills the map if `want_map`.
// precision: as for SsimAccumulator (the whole image is one band of rows).
SsimResult compute_ssim(const Image& original, const Image& other, bool want_map = false,
                        SsimPrecision precision = SsimPrecision::automatic);

// SSIM of one channel held as plain samples.
// a, b: height×width samples, row-major, `stride` samples between
// horizontally adjacent pixels (the channel count for interleaved data),
// width·stride samples between rows, first sample at a[0] / b[0].
// data_range: L. map (optional): receives (height−10)×(width−10) local values
// (resized here; cleared under 11×11). Returns the mean (NaN if too small).
// Throws Error(usage) for stride < 1 or a non-positive size.
double ssim_channel(const std::uint16_t* a, const std::uint16_t* b, int width, int height, int stride,
                    double data_range, std::vector<float>* map = nullptr,
                    SsimPrecision precision = SsimPrecision::automatic);

// Mean SSIM over several pairs, each pair weighted by its valid-region area
// (every map value counts once). Per-channel values pooled the same way.
// Throws Error(usage) for lists of different or zero length, or pairs whose
// channels differ from the first's or that do not match each other.
SsimResult compute_ssim_sets(const std::vector<Image>& originals, const std::vector<Image>& others,
                             SsimPrecision precision = SsimPrecision::automatic);

// The map of `result` as an 8-bit gray image of map_width×map_height:
// local SSIM clipped to [0, 1] and scaled to 0..255 (negative values show as 0).
// Throws Error(usage) if the result holds no map.
Image ssim_map_image(const SsimResult& result);

// The 11 normalised Gaussian weights (σ = 1.5, radius 5) used by the window.
std::vector<double> ssim_gaussian_weights();

}  // namespace pcasweep
