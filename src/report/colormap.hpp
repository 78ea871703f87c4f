// pcasweep/report/colormap.hpp — numbers to colours a colour-blind reader can tell apart.
//
// Contract: a perceptually ordered, colour-blind-safe sequential map close to
// viridis (dark purple -> blue -> green -> yellow), interpolated linearly in
// sRGB between ten anchor colours (matplotlib's viridis sampled at 0, 1/9, …, 1;
// the anchors are quoted from memory, hence "viridis-like"). Lightness rises
// monotonically, so the map also reads in gray print.
#pragma once

#include <array>
#include <vector>

#include "io/image.hpp"

namespace pcasweep {

// t in [0, 1] (clamped; NaN -> 0). Returns 8-bit {red, green, blue}.
std::array<std::uint8_t, 3> viridis_like(double t);

// values: width*height, row-major. Maps values/scale through viridis_like
// (scale <= 0: every pixel gets the map's first colour). Returns an 8-bit RGB Image.
Image colour_map_image(const std::vector<double>& values, int width, int height, double scale);

// The colour of viridis_like(t) as "#rrggbb" for CSS and SVG.
std::string viridis_like_hex(double t);

}  // namespace pcasweep
