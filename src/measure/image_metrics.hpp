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
// Every sum is an exact integer (QualityAccumulator): Σ(x − x̂)², Σx and Σx²
// per channel, so the figures do not depend on the order of the samples, on
// how an image is cut into bands, or on the thread count (bit for bit).
#pragma once

#include <cstddef>
#include <cstdint>
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

// Pooled MSE/PSNR/max error/relative error of image pairs fed as bands of rows
// (or whole), exactly: the sums are 64/128-bit integers, so any split into
// add() calls, any merge order and any thread count give the same bits.
// One accumulator holds one image (its add() calls are that image's samples,
// in any order, and relative_error centres them on that image's channel
// means); merge() pools other images, each keeping its own means, as
// compare_image_sets() does. Work memory O(channels) (and one entry per
// merged image). add() spreads large calls over the OpenMP threads when
// called outside a parallel region, and runs serially inside one. Copyable.
class QualityAccumulator {
 public:
  // channels ≥ 1; bit_depth 8 (L = 255) or 16 (L = 65535). Throws Error(usage) otherwise.
  QualityAccumulator(int channels, int bit_depth);

  // original, written: `samples` interleaved samples each (a whole number of
  // pixels: samples % channels == 0), channel 0 first. Throws Error(usage)
  // for a partial pixel or null pointers with samples > 0.
  void add(const std::uint16_t* original, const std::uint16_t* written, std::size_t samples);

  // Pools the images of `other` into this one. Throws Error(usage) on a
  // different channel count or bit depth.
  void merge(const QualityAccumulator& other);

  // The figures as compare_images() defines them (an empty accumulator gives
  // mse 0, psnr +∞, relative error 0).
  ImageQuality result() const;

  int channels() const { return channels_; }
  int bit_depth() const { return bit_depth_; }
  std::uint64_t pixels() const;  // pixels pooled so far (all images)

  // Exact per-image sums of the original's samples, per channel.
  __extension__ typedef unsigned __int128 Wide;
  struct OriginalSums {
    std::uint64_t pixels = 0;
    std::vector<std::uint64_t> sum;     // Σx per channel
    std::vector<Wide> sum_squares;      // Σx² per channel
    bool operator<(const OriginalSums& o) const;
  };

 private:
  int channels_;
  int bit_depth_;
  std::vector<Wide> squared_;           // Σ(x − x̂)² per channel, every image
  std::uint32_t max_abs_ = 0;
  OriginalSums own_;                    // the image fed through add()
  std::vector<OriginalSums> merged_;    // images pooled in by merge()
};

// original, reconstruction: same geometry. Throws Error(usage) otherwise.
ImageQuality compare_images(const Image& original, const Image& reconstruction);

// The same figures pooled over several pairs (originals[i] vs reconstructions[i]):
// mse is the mean over every sample of every pair; relative_error uses each
// original's own per-channel mean. All pairs must share channels and bit depth
// (Error(usage) otherwise, or for lists of different or zero length).
ImageQuality compare_image_sets(const std::vector<Image>& originals, const std::vector<Image>& reconstructions);

}  // namespace pcasweep
