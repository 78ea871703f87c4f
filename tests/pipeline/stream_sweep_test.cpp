// The streaming sweep (codec/patch_sweep.hpp: bands of patch rows, SSIM
// carried between bands, rows written as they are made) against the in-memory
// path (the whole N×d matrix, reconstruct/'s ReconstructionSweep,
// Layout::fold, quantize, compare_image_sets and compute_ssim_sets on whole
// images) on images small enough for both. The in-memory path's own
// references are numpy/scikit-image (tests/reference/skimage_patches_check.py,
// ssim_check.py); here the two paths must agree: written images bit for bit,
// metrics to 1e-9.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>

#include "../support/synthetic.hpp"
#include "../support/temp_dir.hpp"
#include "io/png.hpp"
#include "pipeline/image_study.hpp"
#include "present/sweep_outputs.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;

namespace {

struct Case {
  int width, height, channels, bit_depth, patch, stride;
  ColourMode colour;
};

// Odd sizes, overlapping strides, 16-bit, both colour modes, and an image tall
// enough for several bands (PatchBlocks::kTargetRows observations each).
const Case kCases[] = {
    {61, 43, 3, 8, 8, 8, ColourMode::joint},     {61, 43, 3, 8, 8, 4, ColourMode::joint},
    {47, 39, 1, 16, 8, 5, ColourMode::joint},    {53, 37, 3, 16, 6, 6, ColourMode::channels},
    {45, 41, 4, 8, 5, 3, ColourMode::channels},  {96, 700, 1, 8, 4, 4, ColourMode::joint},
};

bool same_metric(double a, double b) {
  if (std::isinf(a) || std::isinf(b)) return a == b;
  if (std::isnan(a) || std::isnan(b)) return std::isnan(a) && std::isnan(b);
  return std::abs(a - b) <= 1e-9 * std::max(1.0, std::abs(b));
}

}  // namespace

TEST_CASE("streaming sweep = in-memory sweep: written images bit for bit, metrics to 1e-9") {
  for (const Case& c : kCases) {
    CAPTURE(c.width);
    CAPTURE(c.stride);
    CAPTURE(c.bit_depth);
    const Image image = scene_image(c.width, c.height, c.channels, c.bit_depth, 77);
    const PatchOptions patch{c.patch, c.patch, c.stride, c.stride, c.colour};
    SolverSettings exact;
    exact.choice = SolverChoice::exact;
    ImageAnalysis held = analyze_sources({"t.png"}, {image}, std::make_unique<PatchLayout>(image, patch, "t.png"), exact, true);
    ImageAnalysis streamed = analyze_sources({"t.png"}, {image}, std::make_unique<PatchLayout>(image, patch, "t.png"), exact);
    REQUIRE(held.X.size() > 0);
    REQUIRE(streamed.streamed());
    // The same basis for both (the solvers' agreement is tested in blocked_operator_test.cpp).
    streamed.basis = held.basis;
    const int d = int(held.basis.dimension());
    const std::vector<int> ks = {1, 2, 3, d / 2, d};
    for (bool coded : {false, true}) {
      CAPTURE(coded);
      SweepCoding coding;
      coding.enabled = coded;
      coding.quality = 70;
      std::vector<Image> a_images, b_images;
      const auto a = sweep_ks(held, ks, [&](int, std::size_t, const Image& im) { a_images.push_back(im); }, coding);
      const auto b = sweep_ks(streamed, ks, [&](int, std::size_t, const Image& im) { b_images.push_back(im); }, coding);
      REQUIRE(a.size() == ks.size());
      REQUIRE(b.size() == ks.size());
      REQUIRE(a_images.size() == ks.size());
      REQUIRE(b_images.size() == ks.size());
      for (std::size_t i = 0; i < ks.size(); ++i) {
        CAPTURE(ks[i]);
        CHECK(a_images[i].samples == b_images[i].samples);
        CHECK(same_metric(a[i].quality.mse, b[i].quality.mse));
        CHECK(same_metric(a[i].quality.psnr_db, b[i].quality.psnr_db));
        CHECK(same_metric(a[i].quality.relative_error, b[i].quality.relative_error));
        CHECK(a[i].quality.max_abs_error == b[i].quality.max_abs_error);
        CHECK(same_metric(a[i].ssim, b[i].ssim));
        for (std::size_t ch = 0; ch < a[i].channel_ssim.size(); ++ch) CHECK(same_metric(a[i].channel_ssim[ch], b[i].channel_ssim[ch]));
        CHECK(a[i].clipped_samples == b[i].clipped_samples);
        CHECK(a[i].bytes == b[i].bytes);
        CHECK(a[i].coded_components == b[i].coded_components);
      }
    }
  }
}

TEST_CASE("write_sweep streams PNG files that read back as the measured images") {
  const Image image = scene_image(70, 52, 3, 16, 5);
  const PatchOptions patch{8, 8, 4, 4, ColourMode::joint};
  const ImageAnalysis a = analyze_sources({"frame.png"}, {image}, std::make_unique<PatchLayout>(image, patch, "frame.png"),
                                          SolverSettings{});
  pcasweep::testing::TempDir dir;
  const std::vector<int> ks = {1, 8, 192};
  std::vector<Image> measured;
  sweep_ks(a, ks, [&](int, std::size_t, const Image& im) { measured.push_back(im); });
  const auto rows = write_sweep(a, ks, dir.path().string(), nlohmann::json::object(), nlohmann::json::object(), true);
  for (std::size_t i = 0; i < ks.size(); ++i) {
    const auto png = dir.path() / ("frame.k" + std::to_string(ks[i]) + ".png");
    REQUIRE(std::filesystem::exists(png));
    CHECK(read_png_file(png.string()).samples == measured[i].samples);
    CHECK(std::filesystem::exists(dir.path() / ("frame.k" + std::to_string(ks[i]) + ".ssim.png")));
  }
  // No temporary is left behind.
  for (const auto& e : std::filesystem::directory_iterator(dir.path()))
    CHECK(e.path().filename().string().find(".tmp") == std::string::npos);
}
