// SSIM (measure/ssim): definition checks. The comparison with scikit-image lives in
// tests/reference/ssim_check.py.
#include <doctest/doctest.h>

#include <cmath>
#include <random>

#include "measure/ssim.hpp"

using namespace pcasweep;

namespace {
Image make(int w, int h, int c, int bits, unsigned seed) {
  Image im;
  im.width = w, im.height = h, im.channels = c, im.bit_depth = bits;
  im.samples.resize(std::size_t(w) * h * c);
  std::mt19937 rng(seed);
  std::uniform_int_distribution<int> u(0, bits == 16 ? 65535 : 255);
  for (auto& s : im.samples) s = std::uint16_t(u(rng));
  return im;
}
}  // namespace

TEST_CASE("SSIM window: 11 Gaussian weights, sigma 1.5, normalised, symmetric") {
  // Wang et al. 2004: 11×11 circular-symmetric Gaussian, σ = 1.5, normalised to unit sum.
  const auto w = ssim_gaussian_weights();
  REQUIRE(w.size() == 11);
  double sum = 0;
  for (double v : w) sum += v;
  CHECK(sum == doctest::Approx(1.0).epsilon(1e-15));
  for (int i = 0; i < 5; ++i) CHECK(w[std::size_t(i)] == w[std::size_t(10 - i)]);
  CHECK(w[4] / w[5] == doctest::Approx(std::exp(-1.0 / 4.5)));  // exp(−1/(2σ²))
}

TEST_CASE("SSIM of an image with itself is exactly 1 (8-bit RGB and 16-bit gray)") {
  const Image a = make(40, 30, 3, 8, 1);
  const SsimResult s = compute_ssim(a, a, true);
  CHECK(s.ssim == 1.0);
  for (double c : s.channel_ssim) CHECK(c == 1.0);
  CHECK(s.map_width == 30);
  CHECK(s.map_height == 20);
  for (float v : s.map) CHECK(v == 1.0f);
  const Image b = make(23, 19, 1, 16, 2);
  CHECK(compute_ssim(b, b).ssim == 1.0);
}

TEST_CASE("SSIM of two constant images follows the formula by hand") {
  // Constant x = a, y = b: μx = a, μy = b, variances and covariance 0, so
  // SSIM = (2ab + C1)/(a² + b² + C1) · C2/C2, C1 = (0.01·255)² (from the definition).
  Image x = make(16, 16, 1, 8, 3), y = x;
  std::fill(x.samples.begin(), x.samples.end(), 100);
  std::fill(y.samples.begin(), y.samples.end(), 140);
  const double c1 = (0.01 * 255) * (0.01 * 255);
  const double expected = (2.0 * 100 * 140 + c1) / (100.0 * 100 + 140.0 * 140 + c1);
  CHECK(compute_ssim(x, y).ssim == doctest::Approx(expected).epsilon(1e-12));
}

TEST_CASE("SSIM is NaN under 11x11 and rejects mismatched images") {
  const Image small = make(10, 40, 1, 8, 4);
  CHECK(std::isnan(compute_ssim(small, small).ssim));
  const Image a = make(20, 20, 1, 8, 5), b = make(20, 21, 1, 8, 6);
  CHECK_THROWS(compute_ssim(a, b));
}

TEST_CASE("SSIM map image: (H-10)x(W-10), gray, 255 where identical") {
  const Image a = make(25, 15, 1, 8, 7);
  const Image m = ssim_map_image(compute_ssim(a, a, true));
  CHECK(m.width == 15);
  CHECK(m.height == 5);
  CHECK(m.channels == 1);
  for (auto v : m.samples) CHECK(v == 255);
}
