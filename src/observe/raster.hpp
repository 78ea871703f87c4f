// pcasweep/observe/raster.hpp — real-valued images between fold and write.
//
// Contract: a Raster is what a layout folds observations back into: real
// samples (not yet rounded), same interleaved row-major order as Image.
// quantize() rounds half away from zero and clips to [0, 2^bit_depth − 1];
// that is exactly what gets written and measured.
#pragma once

#include <cmath>
#include <vector>

#include "io/image.hpp"

namespace pcasweep {

struct Raster {
  int width = 0;
  int height = 0;
  int channels = 0;
  std::vector<double> samples;  // width*height*channels, interleaved
};

// Rounds half away from zero: the same value as std::round for every double
// (±0, NaN and ±∞ included), but inlined (floor is one instruction with
// SSE4.1, std::round is a library call). a − floor(a) is exact for a ≥ 0, so
// the comparison with 0.5 decides ties exactly. Takes x; returns the rounded value.
inline double round_half_away(double x) {
  const double a = std::fabs(x);
  double r = std::floor(a);
  if (a - r >= 0.5) r += 1.0;
  return std::copysign(r, x);
}

// Rounds and clips `raster` into an Image with `like`'s bit depth and channel names.
// Returns the image and, through `clipped` (if given), how many samples were clipped.
Image quantize(const Raster& raster, const Image& like, std::size_t* clipped = nullptr);

// Copies an Image's samples into a Raster (exact: integers are exact in double).
Raster to_raster(const Image& image);

}  // namespace pcasweep
