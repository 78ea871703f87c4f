// pcasweep/codec/rd_curve.hpp — points of a rate–distortion curve, and the
// numerical steps of the rate–distortion study that need no streaming pass:
// a JPEG point, the codec quality nearest a rate, the Gaussian bound in bits
// per pixel, reading a curve at a rate, and measuring the PCA, DCT and JPEG
// curves' points.
//
// Contract: the curve functions are pure; jpeg_rd_point and measure_jpeg encode
// and decode in memory (libjpeg-turbo, io/jpeg.hpp), CodedCurves through our
// codec in streaming passes. Nothing here writes a file. Rates are in bits per pixel
// (file bytes × 8 / (W·H)); PSNR in dB on the decoded image (the bound: its
// model). pipeline/codec_study.hpp runs the study over them.
#pragma once

#include <Eigen/Dense>
#include <cmath>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "codec/image_codec.hpp"
#include "io/image.hpp"
#include "observe/patches.hpp"

namespace pcasweep {

// One point of a rate–distortion curve.
struct RdPoint {
  std::string method;       // "pca", "dct", "jpeg", "gaussian_bound"
  int quality = 0;          // --quality (pca, dct) or JPEG quality; 0 for the bound
  int coded = 0;            // components that got bits (pca, dct)
  std::int64_t bytes = 0;   // file size (0 for the bound: it is a model)
  double bits_per_pixel = 0.0;
  double psnr_db = 0.0;     // measured on the decoded image (the bound: model)
  double ssim = NAN;        // measured on the decoded image; NaN for the bound
  std::string file;         // JPEG file written, relative to the output folder
};

// The study's points, chosen so that few suffice (each is a whole coded file, decoded and
// measured once): for PCA and DCT one --quality per target rate, the quality whose Gaussian
// model rate (quantize.hpp) is nearest to it; for JPEG a fixed grid of its qualities; then,
// for each rate the report reads (0.5, 1, 2 bits per pixel) that a curve does not bracket,
// one more point beyond the curve's end (a second, smaller pass).
struct RdSettings {
  std::vector<double> target_bits_per_pixel = {0.25, 0.5, 1.0, 2.0, 4.0};
  std::vector<int> jpeg_qualities = {10, 30, 50, 70, 85, 95};
  std::vector<double> reported_bits_per_pixel = {0.5, 1.0, 2.0};
  int zstd_level = 19;
};

// What a rate-distortion study took (wall seconds on the running machine and
// threads), reported beside its points: one entry per streaming pass over the
// image (the PCA and DCT points; a second entry for the refinement pass) and
// the JPEG points.
struct RdCost {
  std::vector<double> coded_pass_seconds;  // each PCA/DCT pass
  std::vector<int> coded_pass_points;      // points measured in each of those passes
  double jpeg_seconds = 0.0;               // every JPEG quality: encode, decode, measure (in parallel)
  int jpeg_points = 0;
  double total_seconds = 0.0;              // the whole study, bound and sorting included
};

// One JPEG file the study encoded (and measured), kept for the presentation stage to write.
struct RdJpegFile {
  int quality = 0;    // JPEG quality, as in its RdPoint
  std::string bytes;  // the whole file
};

// JPEG at `quality` (1..100, libjpeg-turbo, 4:2:0, optimised Huffman): encoded into `bytes`,
// then decoded and measured row by row (PSNR and SSIM; 16-bit originals against the 8-bit
// decoding scaled by 257). `name` labels errors. Throws Error(data) when a coder fails.
RdPoint jpeg_rd_point(const Image& image, int quality, const std::string& name, std::string& bytes);

// The --quality (1..100) whose Gaussian model rate (codec/quantize.hpp) in bits per pixel,
// for the first k columns of `basis`, is nearest (in log) to `bpp`.
int quality_for_rate(const PatchLayout& layout, int bit_depth, const DecoderBasis& basis, int k, double bpp);

// The Gaussian bound (codec/gaussian_rd.hpp) from `eigenvalues` (r), `total_variance` and
// `dimension` (d), each rate per observation turned into bits per pixel (observations·R / pixels).
std::vector<RdPoint> gaussian_bound_points(const Eigen::VectorXd& eigenvalues, double total_variance,
                                           Eigen::Index dimension, double max_value, double observations,
                                           double pixels);

// True when the measured curve of `method` has points at or below and at or above `bpp`.
bool curve_brackets(const std::vector<RdPoint>& points, const std::string& method, double bpp);

// Each curve by increasing rate, curves in the order pca, dct, jpeg, gaussian_bound (stable).
void sort_curves(std::vector<RdPoint>& points);

// PSNR of `method` at `bpp`, linearly interpolated between the two measured points that
// bracket it (NaN outside the curve). `coded` receives the components of the nearer point.
double psnr_at_rate(const std::vector<RdPoint>& points, const std::string& method, double bpp, int* coded = nullptr);

// (method: 0 pca, 1 dct; --quality): the coded points a pass measures.
using Wanted = std::vector<std::pair<int, int>>;

// The PCA curve (own basis, every computed component available) and the DCT curve
// (all d columns) of one image cut into patches: both decoder bases fixed once, their
// points coded, decoded and measured through the codec, every point of a pass in one
// streaming pass over the image (codec/patch_sweep.hpp). References are kept, not copied.
class CodedCurves {
 public:
  // basis: the image's own (r components); moments: the patches' mean and scatter when
  // known (else computed here, one pass). Throws Error as decoder_basis() does.
  CodedCurves(const PatchLayout& layout, const Image& image, const Basis& basis, const PatchMoments* moments,
              const std::string& name, int zstd_level);

  // For each method, the --quality nearest each target rate, in increasing quality, once each.
  Wanted first_pass(const RdSettings& settings) const;

  // For each method, one point 15 qualities beyond its lowest (highest) when a reported
  // rate lies below (above) the whole measured curve.
  Wanted refinement(const std::vector<RdPoint>& points, const RdSettings& settings) const;

  // Codes, decodes and measures every wanted point in one pass; appends the points and
  // the pass's wall time and point count to `cost`. Throws Error(data) when the coder fails.
  void measure(const Wanted& wanted, std::vector<RdPoint>& points, RdCost& cost) const;

 private:
  const PatchLayout& layout_;
  const Image& image_;
  const std::string& name_;
  int zstd_level_;
  int k_[2];
  DecoderBasis bases_[2];
};

// JPEG at every quality of `qs`, in parallel (jpeg_rd_point): appends one point each (file
// left empty) and the encoded bytes to `files`, the wall time to `cost`. Rethrows the first failure.
void measure_jpeg(const Image& image, const std::string& name, const std::vector<int>& qs,
                  std::vector<RdPoint>& points, std::vector<RdJpegFile>& files, RdCost& cost);

}  // namespace pcasweep
