// Tests for observe/patches: cutting an image into patch observations and
// folding them back, alone and through a full k = d reconstruction.
#include <doctest/doctest.h>

#include <memory>

#include "../support/synthetic.hpp"
#include "core/error.hpp"
#include "observe/patches.hpp"
#include "observe/raster.hpp"
#include "pipeline/image_study.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;

namespace {

struct Geometry {
  int width, height, channels, bit_depth;
  int patch_h, patch_w, stride_y, stride_x;
  ColourMode colour;
};

std::string label(const Geometry& g) {
  return std::to_string(g.width) + "x" + std::to_string(g.height) + " c" + std::to_string(g.channels) + " " +
         std::to_string(g.bit_depth) + "-bit patch " + std::to_string(g.patch_h) + "x" + std::to_string(g.patch_w) +
         " stride " + std::to_string(g.stride_y) + "x" + std::to_string(g.stride_x) +
         (g.colour == ColourMode::joint ? " joint" : " channels");
}

// Overlapping and non-overlapping strides, odd sizes, square and rectangular
// patches, 8 and 16 bit, gray / gray+alpha / RGB / RGBA, both colour modes.
const Geometry kGeometries[] = {
    {37, 23, 1, 8, 8, 8, 8, 8, ColourMode::joint},       // odd size, non-overlapping, mirror-padded
    {37, 23, 1, 8, 8, 8, 3, 3, ColourMode::joint},       // overlapping
    {37, 23, 3, 8, 8, 8, 8, 8, ColourMode::joint},       // RGB joint
    {37, 23, 3, 8, 8, 8, 8, 8, ColourMode::channels},    // RGB channels
    {37, 23, 4, 8, 5, 7, 2, 3, ColourMode::joint},       // RGBA, rectangular, overlapping
    {37, 23, 4, 16, 4, 6, 4, 6, ColourMode::channels},   // 16-bit RGBA channels, rectangular
    {37, 23, 1, 16, 8, 8, 5, 7, ColourMode::joint},      // 16-bit gray, uneven overlap
    {37, 23, 2, 16, 6, 4, 6, 4, ColourMode::joint},      // 16-bit gray+alpha
    {37, 23, 3, 16, 8, 8, 4, 4, ColourMode::channels},   // 16-bit RGB channels, overlapping
    {32, 24, 3, 8, 8, 8, 8, 8, ColourMode::joint},       // exact multiple: no padding
    {9, 31, 1, 8, 9, 4, 1, 2, ColourMode::joint},        // patch as wide as the image, stride 1
};

ImageAnalysis analysis_of(const Image& image, const PatchOptions& options) {
  auto layout = std::make_unique<PatchLayout>(image, options, "synthetic.png");
  SolverSettings exact;
  exact.choice = SolverChoice::exact;
  return analyze_sources({"synthetic.png"}, {image}, std::move(layout), exact);
}

}  // namespace

// Source: the Layout contract (observe/layout.hpp) and DESIGN.md "Layout knows
// both directions": fold(observe(s)) == s exactly, overlaps averaged, padding cropped.
TEST_CASE("patches: fold(observe(image)) returns the image exactly") {
  for (const Geometry& g : kGeometries) {
    CAPTURE(label(g));
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth);
    PatchLayout layout(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour}, "synthetic.png");
    const Eigen::MatrixXd X = layout.observe({image});
    CHECK(X.rows() == layout.observation_count());
    CHECK(X.cols() == layout.dimension());
    const auto rasters = layout.fold(X);
    REQUIRE(rasters.size() == 1);
    const Raster& r = rasters.front();
    REQUIRE(r.samples.size() == image.samples.size());
    std::size_t differing = 0;
    for (std::size_t i = 0; i < r.samples.size(); ++i) differing += r.samples[i] != double(image.samples[i]);
    CHECK(differing == 0);
  }
}

// Source: the issue's first required check ("Round trip: at k = d the folded
// reconstruction equals the input exactly after rounding, for overlapping and
// non-overlapping strides, odd image sizes, 8 and 16 bit").
TEST_CASE("patches: reconstruction at k = d rounds back to the input bit for bit") {
  for (const Geometry& g : kGeometries) {
    CAPTURE(label(g));
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth, 11);
    const ImageAnalysis a = analysis_of(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour});
    const int d = int(a.basis.dimension());
    REQUIRE(a.basis.rank() == d);
    std::size_t differing = 0;
    int images_seen = 0;
    const auto rows = sweep_ks(a, {d}, [&](int k, std::size_t, const Image& written) {
      CHECK(k == d);
      ++images_seen;
      CHECK(written.bit_depth == image.bit_depth);
      CHECK(written.channels == image.channels);
      REQUIRE(written.samples.size() == image.samples.size());
      for (std::size_t i = 0; i < written.samples.size(); ++i) differing += written.samples[i] != image.samples[i];
    });
    CHECK(images_seen == 1);
    CHECK(differing == 0);
    REQUIRE(rows.size() == 1);
    CHECK(rows[0].quality.mse == 0.0);
    CHECK(rows[0].quality.max_abs_error == 0.0);
    CHECK(rows[0].clipped_samples == 0);
  }
}

// Source: the mirror-padding rule documented in observe/patches.hpp
// ("…, x[n-2], x[n-1], x[n-2], …: the edge sample is not repeated"), the
// same rule as numpy.pad(mode="reflect").
TEST_CASE("patches: the padding past the bottom and right edges is a mirror reflection") {
  const Image image = scene_image(37, 23, 3, 8);
  PatchLayout layout(image, {8, 8, 8, 8, ColourMode::joint}, "synthetic.png");
  CHECK(layout.padded_width() == 40);   // smallest multiple of 8 >= 37
  CHECK(layout.padded_height() == 24);  // smallest multiple of 8 >= 23
  CHECK(layout.patches_across() == 5);
  CHECK(layout.patches_down() == 3);
  const Eigen::MatrixXd X = layout.observe({image});
  const int nx = layout.patches_across();
  // The value the layout must see at padded position (px, py), channel c.
  auto expected = [&](int px, int py, int c) {
    const int x = px < 37 ? px : 2 * 36 - px;  // 37 -> 35, 38 -> 34, 39 -> 33
    const int y = py < 23 ? py : 2 * 22 - py;  // 23 -> 21
    return double(image.at(x, y, c));
  };
  int checked = 0;
  for (int py = 0; py < 24; ++py)
    for (int px = 0; px < 40; ++px)
      for (int c = 0; c < 3; ++c) {
        const int patch = (py / 8) * nx + (px / 8);
        const int cell = (py % 8) * 8 + (px % 8);
        if (X(patch, cell * 3 + c) != expected(px, py, c)) {
          FAIL_CHECK("padded (" << px << ", " << py << ", " << c << ") differs");
        }
        ++checked;
      }
  CHECK(checked == 40 * 24 * 3);
  // reflect_index itself, on an axis of 5 samples: 0 1 2 3 4 3 2 1 0 1 ...
  const int want[] = {0, 1, 2, 3, 4, 3, 2, 1, 0, 1, 2};
  for (int p = 0; p < 11; ++p) CHECK(reflect_index(p, 5) == want[p]);
  CHECK(reflect_index(7, 1) == 0);
}

// Source: the layout contract in observe/patches.hpp (joint: d = ph·pw·c with
// variable order row, column, channel; channels: d = ph·pw, N = patches·c,
// channel-major).
TEST_CASE("patches: observation order and counts for joint and channels colour") {
  const Image image = scene_image(16, 8, 3, 8);
  PatchLayout joint(image, {4, 8, 0, 0, ColourMode::joint}, "s.png");
  PatchLayout channels(image, {4, 8, 0, 0, ColourMode::channels}, "s.png");
  CHECK(joint.observation_count() == 4);   // 2 down x 2 across
  CHECK(joint.dimension() == 4 * 8 * 3);
  CHECK(channels.observation_count() == 4 * 3);
  CHECK(channels.dimension() == 4 * 8);
  const Eigen::MatrixXd J = joint.observe({image});
  const Eigen::MatrixXd C = channels.observe({image});
  // Patch 3 = second row, second column: origin (x = 8, y = 4). Cell (r=2, c=5), channel 1.
  CHECK(J(3, (2 * 8 + 5) * 3 + 1) == image.at(8 + 5, 4 + 2, 1));
  CHECK(C(1 * 4 + 3, 2 * 8 + 5) == image.at(8 + 5, 4 + 2, 1));
  const auto names = joint.variable_names();
  REQUIRE(names.size() == 96);
  CHECK(names[0] == "r0c0:red");
  CHECK(names[1] == "r0c0:green");
  CHECK(names[3] == "r0c1:red");
}

// Source: issue 2, "Bad input" (patch larger than the image, stride 0) and the
// Error contract in core/error.hpp (usage errors exit 2, message names the file).
TEST_CASE("patches: impossible geometry is a usage error naming the file") {
  const Image image = scene_image(10, 6, 1, 8);
  try {
    PatchLayout layout(image, {8, 8, 0, 0, ColourMode::joint}, "tiny.png");
    FAIL("a patch taller than the image was accepted");
  } catch (const Error& e) {
    CHECK(e.kind() == ErrorKind::usage);
    CHECK(std::string(e.what()).find("tiny.png") == 0);
  }
  CHECK_THROWS_AS(PatchLayout(image, {4, 4, -1, 4, ColourMode::joint}, "tiny.png"), Error);
  CHECK_THROWS_AS(PatchLayout(image, {4, 4, 5, 5, ColourMode::joint}, "tiny.png"), Error);  // would skip pixels
  int rows = 0, cols = 0;
  parse_size_pair("8x16", "--patch", rows, cols);
  CHECK(rows == 8);
  CHECK(cols == 16);
  parse_size_pair("5", "--patch", rows, cols);
  CHECK(rows == 5);
  CHECK(cols == 5);
  for (const char* bad : {"0", "8x0", "x8", "8x", "-3", "eight", "8x8x8", ""}) {
    CAPTURE(bad);
    CHECK_THROWS_AS(parse_size_pair(bad, "--patch", rows, cols), Error);
  }
}
