// pcasweep/codec/rd_curve.hpp — points of a rate–distortion curve, and the
// numerical steps of the rate–distortion study that need no streaming pass:
// a JPEG point, the codec quality nearest a rate, the Gaussian bound in bits
// per pixel, and reading a curve at a rate.
//
// Contract: every function here is pure but jpeg_rd_point, which encodes and
// decodes in memory (libjpeg-turbo, io/jpeg.hpp). Rates are in bits per pixel
// (file bytes × 8 / (W·H)); PSNR in dB on the decoded image (the bound: its
// model). pipeline/codec_study.hpp runs the study over them.
#pragma once

#include <Eigen/Dense>
#include <cmath>
#include <cstdint>
#include <string>
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

}  // namespace pcasweep
