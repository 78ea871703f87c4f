// Tests for measure/image_metrics: worked values of the standard definitions.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>

#include "../support/synthetic.hpp"
#include "core/error.hpp"
#include "measure/image_metrics.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;

namespace {

Image flat(int width, int height, int channels, int bits, std::uint16_t value) {
  Image image = make_image(width, height, channels, bits, value);
  return image;
}

}  // namespace

// Source: the standard PSNR definition, 10·log10(L²/MSE) with L = 255 for
// 8-bit samples; 10·log10(255²) = 48.1308036087 dB (the worked value quoted in
// issue 2 as 48.1308 dB). Identical images have MSE 0 and PSNR +∞ by convention.
TEST_CASE("metrics: an 8-bit pair whose MSE is 1 has PSNR 48.1308 dB") {
  const Image original = scene_image(37, 23, 3, 8, 2);
  Image shifted = original;
  // ±1 on every sample (down where the sample is 255, up elsewhere): MSE exactly 1.
  for (auto& s : shifted.samples) s = s == 255 ? 254 : s + 1;
  const ImageQuality q = compare_images(original, shifted);
  CHECK(q.mse == 1.0);
  CHECK(q.rmse == 1.0);
  CHECK(q.max_abs_error == 1.0);
  CHECK(q.psnr_db == doctest::Approx(48.1308).epsilon(1e-6));
  CHECK(std::abs(q.psnr_db - 48.1308036087) < 1e-9);
  for (double p : q.channel_psnr_db) CHECK(std::abs(p - 48.1308036087) < 1e-9);
  CHECK(std::abs(psnr_from_mse(1.0, 255.0) - 48.1308036087) < 1e-9);

  const ImageQuality same = compare_images(original, original);
  CHECK(same.mse == 0.0);
  CHECK(same.max_abs_error == 0.0);
  CHECK(same.relative_error == 0.0);
  CHECK(std::isinf(same.psnr_db));
  CHECK(same.psnr_db > 0.0);
}

// Source: the same definition with L = 65535 for 16-bit samples:
// 20·log10(65535) = 96.3294660753 dB (computed by hand from the formula, not
// a published worked value).
TEST_CASE("metrics: 16-bit PSNR uses the data range 65535") {
  const Image a = flat(8, 4, 1, 16, 1000);
  const Image b = flat(8, 4, 1, 16, 1001);
  const ImageQuality q = compare_images(a, b);
  CHECK(q.mse == 1.0);
  CHECK(std::abs(q.psnr_db - 96.3294660753) < 1e-9);
  // MSE 100 (error 10 everywhere) costs exactly 20 dB.
  const ImageQuality q10 = compare_images(a, flat(8, 4, 1, 16, 1010));
  CHECK(q10.mse == 100.0);
  CHECK(std::abs(q10.psnr_db - (96.3294660753 - 20.0)) < 1e-9);
}

// Source: definitions in measure/image_metrics.hpp, worked by hand on a 2×2
// gray image: original 0, 10, 20, 30 (mean 15), reconstruction 1, 10, 22, 27.
// Errors -1, 0, -2, 3: MSE = (1 + 0 + 4 + 9)/4 = 3.5, max |e| = 3,
// ‖x − x̄‖² = 225 + 25 + 25 + 225 = 500, relative error = √(14/500).
TEST_CASE("metrics: MSE, RMSE, max error and relative error on a worked 2x2 example") {
  Image a = flat(2, 2, 1, 8, 0);
  Image b = a;
  a.samples = {0, 10, 20, 30};
  b.samples = {1, 10, 22, 27};
  const ImageQuality q = compare_images(a, b);
  CHECK(q.mse == doctest::Approx(3.5).epsilon(1e-15));
  CHECK(q.rmse == doctest::Approx(std::sqrt(3.5)).epsilon(1e-15));
  CHECK(q.max_abs_error == 3.0);
  CHECK(q.relative_error == doctest::Approx(std::sqrt(14.0 / 500.0)).epsilon(1e-15));
  CHECK(q.psnr_db == doctest::Approx(10.0 * std::log10(255.0 * 255.0 / 3.5)).epsilon(1e-15));
}

// Source: definitions in measure/image_metrics.hpp: overall MSE is the mean over
// all samples, so with per-channel MSEs 0, 4 and 16 it is 20/3; each channel's
// PSNR uses its own MSE.
TEST_CASE("metrics: per-channel figures and their pooling") {
  const Image a = flat(5, 3, 3, 8, 100);
  Image b = a;
  for (std::size_t p = 0; p < 15; ++p) {
    b.samples[p * 3 + 1] = 102;  // channel 1 off by 2
    b.samples[p * 3 + 2] = 96;   // channel 2 off by 4
  }
  const ImageQuality q = compare_images(a, b);
  REQUIRE(q.channel_mse.size() == 3);
  CHECK(q.channel_mse[0] == 0.0);
  CHECK(q.channel_mse[1] == 4.0);
  CHECK(q.channel_mse[2] == 16.0);
  CHECK(std::isinf(q.channel_psnr_db[0]));
  CHECK(q.channel_psnr_db[2] == doctest::Approx(10.0 * std::log10(255.0 * 255.0 / 16.0)).epsilon(1e-15));
  CHECK(q.mse == doctest::Approx(20.0 / 3.0).epsilon(1e-15));
  CHECK(q.max_abs_error == 4.0);
}

// Source: measure/image_metrics.hpp contract: images of different geometry
// cannot be compared.
TEST_CASE("metrics: mismatched images are refused") {
  CHECK_THROWS_AS(compare_images(flat(4, 4, 1, 8, 0), flat(4, 5, 1, 8, 0)), Error);
  CHECK_THROWS_AS(compare_images(flat(4, 4, 1, 8, 0), flat(4, 4, 3, 8, 0)), Error);
  CHECK_THROWS_AS(compare_images(flat(4, 4, 1, 8, 0), flat(4, 4, 1, 16, 0)), Error);
}
