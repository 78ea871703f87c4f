#include "observe/raster.hpp"

#include <cmath>

namespace pcasweep {

Image quantize(const Raster& raster, const Image& like, std::size_t* clipped) {
  Image out;
  out.width = raster.width;
  out.height = raster.height;
  out.channels = raster.channels;
  out.bit_depth = like.bit_depth;
  out.channel_names = like.channel_names;
  out.samples.resize(raster.samples.size());
  const double top = like.max_value();
  std::size_t clip_count = 0;
#pragma omp parallel for reduction(+ : clip_count) schedule(static)
  for (std::ptrdiff_t i = 0; i < std::ptrdiff_t(raster.samples.size()); ++i) {
    double v = round_half_away(raster.samples[i]);
    if (v < 0.0) { v = 0.0; ++clip_count; }
    else if (v > top) { v = top; ++clip_count; }
    else if (std::isnan(v)) { v = 0.0; ++clip_count; }
    out.samples[i] = static_cast<std::uint16_t>(v);
  }
  if (clipped) *clipped = clip_count;
  return out;
}

Raster to_raster(const Image& image) {
  Raster r;
  r.width = image.width;
  r.height = image.height;
  r.channels = image.channels;
  r.samples.assign(image.samples.begin(), image.samples.end());
  return r;
}

}  // namespace pcasweep
