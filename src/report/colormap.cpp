#include "report/colormap.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace pcasweep {

namespace {
// viridis at 10 evenly spaced points (from memory of matplotlib's table).
constexpr std::uint8_t kAnchors[10][3] = {{0x44, 0x01, 0x54}, {0x48, 0x28, 0x78}, {0x3e, 0x49, 0x89},
                                          {0x31, 0x68, 0x8e}, {0x26, 0x82, 0x8e}, {0x1f, 0x9e, 0x89},
                                          {0x35, 0xb7, 0x79}, {0x6e, 0xce, 0x58}, {0xb5, 0xde, 0x2b},
                                          {0xfd, 0xe7, 0x25}};
}  // namespace

std::array<std::uint8_t, 3> viridis_like(double t) {
  if (!(t > 0.0)) t = 0.0;
  if (t > 1.0) t = 1.0;
  const double x = t * 9.0;
  const int i = std::min(8, int(x));
  const double f = x - i;
  std::array<std::uint8_t, 3> out{};
  for (int c = 0; c < 3; ++c)
    out[c] = std::uint8_t(std::lround(kAnchors[i][c] + f * (double(kAnchors[i + 1][c]) - kAnchors[i][c])));
  return out;
}

Image colour_map_image(const std::vector<double>& values, int width, int height, double scale) {
  Image img = make_image(width, height, 3, 8);
  for (std::size_t p = 0; p < std::size_t(width) * height; ++p) {
    const auto rgb = viridis_like(scale > 0 ? values[p] / scale : 0.0);
    for (int c = 0; c < 3; ++c) img.samples[p * 3 + c] = rgb[c];
  }
  return img;
}

std::string viridis_like_hex(double t) {
  const auto rgb = viridis_like(t);
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", rgb[0], rgb[1], rgb[2]);
  return buf;
}

}  // namespace pcasweep
