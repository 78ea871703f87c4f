// tests/support/synthetic.hpp — deterministic test images, built in memory.
//
// Contract: every function here is a pure function of its arguments (its own
// 64-bit generator, no std::*_distribution, whose output differs between
// standard libraries), so a test sees the same samples on every machine.
// The "scene" images are real-ish on purpose: a smooth gradient, a few
// sinusoids, hard edges and per-sample noise, so that every principal
// component carries some variance and PCA has non-trivial work to do.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <string>

#include "io/image.hpp"
#include "core/random.hpp"

namespace pcasweep::testing {

// SplitMix64 (Steele, Lea & Flood 2014): a tiny, well-mixed, portable generator.
class SplitMix64 {
 public:
  explicit SplitMix64(std::uint64_t seed) : stream_(seed) {}
  std::uint64_t next() { return stream_.next(); }
  // Uniform in [0, 1).
  double uniform() { return double(next() >> 11) * (1.0 / 9007199254740992.0); }

 private:
  SplitMix64Stream stream_;
};

// A width×height image with `channels` channels at `bit_depth` (8 or 16):
// gradient + sinusoids + a bright rectangle + a dark diagonal stroke + noise,
// clipped to the full range; channels differ (phase and weights) so colour
// modes see correlated but not identical channels.
inline Image scene_image(int width, int height, int channels, int bit_depth, std::uint64_t seed = 7) {
  Image image = make_image(width, height, channels, bit_depth);
  const double top = bit_depth == 16 ? 65535.0 : 255.0;
  SplitMix64 rng(seed);
  for (int y = 0; y < height; ++y)
    for (int x = 0; x < width; ++x)
      for (int c = 0; c < channels; ++c) {
        const double u = double(x) / width, v = double(y) / height;
        double s = 0.25 + 0.35 * v + 0.1 * u;                               // sky-to-ground gradient
        s += 0.12 * std::sin(0.9 * x + 0.4 * y + 1.3 * c);                  // fine texture
        s += 0.08 * std::cos(0.23 * x - 0.31 * y * (1 + c));                // coarser waves
        if (x > width / 3 && x < width / 2 && y > height / 4 && y < height / 2) s += 0.3;  // a building
        if (std::abs(x - 2 * y) <= 1) s -= 0.35;                            // a wire
        if (c == channels - 1 && (channels == 2 || channels == 4)) s = 0.55 + 0.4 * u;  // alpha-like ramp
        s += 0.05 * (rng.uniform() - 0.5);                                  // sensor noise
        const double value = std::round(std::clamp(s, 0.0, 1.0) * top);
        image.at(x, y, c) = static_cast<std::uint16_t>(value);
      }
  return image;
}

// The same picture with every pixel's channels set equal (R = G = B): a gray
// image stored as RGB.
inline Image gray_as_rgb(const Image& gray) {
  Image rgb = gray;
  rgb.channels = 3;
  rgb.channel_names = default_channel_names(3);
  rgb.samples.resize(std::size_t(gray.width) * gray.height * 3);
  for (int y = 0; y < gray.height; ++y)
    for (int x = 0; x < gray.width; ++x)
      for (int c = 0; c < 3; ++c) rgb.at(x, y, c) = gray.at(x, y, 0);
  return rgb;
}

}  // namespace pcasweep::testing
