// pcasweep/measure/error_map.hpp — where in the picture the error sits.
//
// Contract: for two images of the same geometry, the per-pixel absolute
// error averaged over channels, |x − x̂| in sample units, as width×height
// values, row-major. Computed on the integer samples (what is written).
#pragma once

#include <vector>

#include "io/image.hpp"

namespace pcasweep {

struct ErrorMap {
  int width = 0;
  int height = 0;
  std::vector<double> values;  // width*height, row-major: mean over channels of |x − x̂|
  double max_value = 0.0;      // largest entry (0 for identical images)
};

// original, reconstruction: same width, height, channels. Throws Error(usage) otherwise.
ErrorMap absolute_error_map(const Image& original, const Image& reconstruction);

}  // namespace pcasweep
