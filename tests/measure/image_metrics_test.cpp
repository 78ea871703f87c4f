// Tests for measure/image_metrics: worked values of the standard definitions.
#include <doctest/doctest.h>

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "../support/synthetic.hpp"
#include "core/error.hpp"
#include "core/thread_guard.hpp"
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

// ---- QualityAccumulator: exact integer sums ----

namespace {

// A scene and a copy with errors up to ±spread (clipped), deterministic.
void noisy_pair(int w, int h, int c, int bits, std::uint64_t seed, int spread, Image& x, Image& y) {
  x = scene_image(w, h, c, bits, seed);
  y = x;
  pcasweep::testing::SplitMix64 rng(seed + 99);
  const int top = bits == 16 ? 65535 : 255;
  for (auto& s : y.samples) {
    const int e = int(rng.next() % std::uint64_t(2 * spread + 1)) - spread;
    s = std::uint16_t(std::clamp(int(s) + e, 0, top));
  }
}

void check_same(const ImageQuality& a, const ImageQuality& b) {
  CHECK(a.mse == b.mse);
  CHECK(a.rmse == b.rmse);
  CHECK(a.psnr_db == b.psnr_db);
  CHECK(a.max_abs_error == b.max_abs_error);
  CHECK(a.relative_error == b.relative_error);
  CHECK(a.channel_mse == b.channel_mse);
  CHECK(a.channel_psnr_db == b.channel_psnr_db);
}

}  // namespace

// Requirement: banded and whole give bit-identical results (integer sums).
TEST_CASE("quality accumulator: any split into bands gives the whole-image figures bit for bit") {
  for (int c : {1, 2, 3, 4, 5})
    for (int bits : {8, 16}) {
      CAPTURE(c);
      CAPTURE(bits);
      Image x, y;
      noisy_pair(53, 31, c, bits, std::uint64_t(c * 3 + bits), bits == 16 ? 3000 : 12, x, y);
      const ImageQuality whole = compare_images(x, y);
      for (std::size_t band_pixels : {std::size_t(1), std::size_t(7), std::size_t(53), std::size_t(64 * 53), std::size_t(1000)}) {
        QualityAccumulator acc(c, bits);
        const std::size_t step = band_pixels * std::size_t(c), n = x.samples.size();
        for (std::size_t i = 0; i < n; i += step)
          acc.add(x.samples.data() + i, y.samples.data() + i, std::min(step, n - i));
        CHECK(acc.pixels() == std::uint64_t(53 * 31));
        check_same(acc.result(), whole);
      }
    }
}

// Source: the definitions in measure/image_metrics.hpp, evaluated here with
// plain long double loops (exact for these integer sums) on images large
// enough to cross the accumulator's 2^20-sample blocks and its two-thread split.
// Three channels use 12 lanes, which do not divide 2^20: a block that ended
// inside a lane group once moved every later lane onto another channel and
// read past the end (PSNR of a 24 MP JPEG came out at 9 dB instead of 40).
TEST_CASE("quality accumulator: exact sums on large 1- and 3-channel images, 1 and 2 threads, bands, inside a parallel region") {
  for (int c : {1, 3}) {
    CAPTURE(c);
    Image x, y;
    // 3 channels: one row is 3300 samples, so 64-row bands (211200 samples) and the
    // whole image (3.3e6 samples) both end blocks at sizes that are not multiples of 2^20.
    noisy_pair(1100, 1000, c, 16, 5, 20000, x, y);
    std::vector<long double> sq(std::size_t(c), 0);
    long double mx = 0;
    std::vector<long double> chan_sum(std::size_t(c), 0), chan_sum2(std::size_t(c), 0);
    for (std::size_t i = 0; i < x.samples.size(); ++i) {
      const long double a = x.samples[i], e = a - (long double)y.samples[i];
      sq[i % std::size_t(c)] += e * e, mx = std::max(mx, std::abs(e));
      chan_sum[i % std::size_t(c)] += a, chan_sum2[i % std::size_t(c)] += a * a;
    }
    const long double pixels = (long double)(x.samples.size() / std::size_t(c));
    long double total_sq = 0, centred = 0;
    for (int ch = 0; ch < c; ++ch) {
      total_sq += sq[std::size_t(ch)];
      centred += chan_sum2[std::size_t(ch)] - chan_sum[std::size_t(ch)] * chan_sum[std::size_t(ch)] / pixels;
    }
    const auto on_threads = [&](int threads) {
      const ThreadGuard guard({.openmp = threads});
      return compare_images(x, y);
    };
    const ImageQuality one = on_threads(1);
    const ImageQuality two = on_threads(2);
    check_same(one, two);
    CHECK(one.mse == double(total_sq / (pixels * c)));
    for (int ch = 0; ch < c; ++ch) CHECK(one.channel_mse[std::size_t(ch)] == double(sq[std::size_t(ch)] / pixels));
    CHECK(one.max_abs_error == double(mx));
    CHECK(one.relative_error == doctest::Approx(double(std::sqrt(total_sq / centred))).epsilon(1e-14));
    // Bands of 64 rows, as the JPEG baseline of the rate-distortion study feeds them.
    QualityAccumulator banded(c, 16);
    const std::size_t band = std::size_t(x.width) * std::size_t(c) * 64;
    for (std::size_t i = 0; i < x.samples.size(); i += band)
      banded.add(x.samples.data() + i, y.samples.data() + i, std::min(band, x.samples.size() - i));
    check_same(banded.result(), one);
    std::vector<ImageQuality> inside(2);
#pragma omp parallel for num_threads(2) schedule(static)
    for (int k = 0; k < 2; ++k) inside[std::size_t(k)] = compare_images(x, y);
    check_same(inside[0], one);
    check_same(inside[1], one);
  }
}

TEST_CASE("quality accumulator: merge pools like compare_image_sets, in any order") {
  Image a, b, c, d;
  noisy_pair(40, 30, 3, 8, 1, 10, a, b);
  noisy_pair(25, 50, 3, 8, 2, 30, c, d);
  const ImageQuality pooled = compare_image_sets({a, c}, {b, d});
  QualityAccumulator first(3, 8), second(3, 8);
  first.add(a.samples.data(), b.samples.data(), a.samples.size());
  second.add(c.samples.data(), d.samples.data(), c.samples.size());
  QualityAccumulator ab = first, ba = second;
  ab.merge(second);
  ba.merge(first);
  check_same(ab.result(), pooled);
  check_same(ba.result(), pooled);
  CHECK(ab.pixels() == 40 * 30 + 25 * 50);
  // Pooling keeps each image's own channel means for relative_error (the
  // contract of compare_image_sets): the same as summing each image's
  // ‖x − x̄‖² computed alone.
  const double ca = std::pow(compare_images(a, b).relative_error, -2) * compare_images(a, b).mse * 3600;
  const double cc = std::pow(compare_images(c, d).relative_error, -2) * compare_images(c, d).mse * 3750;
  const double total_sq = pooled.mse * (3600 + 3750);
  CHECK(pooled.relative_error == doctest::Approx(std::sqrt(total_sq / (ca + cc))).epsilon(1e-12));
  CHECK_THROWS_AS(ab.merge(QualityAccumulator(1, 8)), Error);
  CHECK_THROWS_AS(ab.merge(QualityAccumulator(3, 16)), Error);
}

TEST_CASE("quality accumulator: identical images give PSNR +inf; bad input is refused") {
  const Image a = scene_image(19, 13, 4, 16, 3);
  QualityAccumulator acc(4, 16);
  acc.add(a.samples.data(), a.samples.data(), a.samples.size());
  const ImageQuality q = acc.result();
  CHECK(q.mse == 0.0);
  CHECK(q.relative_error == 0.0);
  CHECK(std::isinf(q.psnr_db));
  CHECK(q.psnr_db > 0.0);
  for (double p : q.channel_psnr_db) CHECK(std::isinf(p));
  CHECK_THROWS_AS(acc.add(a.samples.data(), a.samples.data(), 6), Error);  // 1.5 pixels
  CHECK_THROWS_AS(QualityAccumulator(0, 8), Error);
  CHECK_THROWS_AS(QualityAccumulator(3, 12), Error);
  CHECK(std::isinf(QualityAccumulator(3, 8).result().psnr_db));  // nothing added: mse 0
}
