// Tests for the streaming side of observe/: bands of patch observations
// (PatchLayout::observe_band, PatchBlocks) and folding them back band by band
// (PatchFolder). The reference is the in-memory layout itself, whose own
// contract (fold(observe(s)) == s, overlaps averaged, mirror padding as
// numpy.pad(mode="reflect")) is checked in patches_test.cpp and against
// scikit-image in tests/reference/skimage_patches_check.py.
#include <doctest/doctest.h>

#include <array>
#include <cmath>

#include "../support/synthetic.hpp"
#include "observe/patch_blocks.hpp"
#include "observe/patch_crop.hpp"
#include "observe/patch_folder.hpp"
#include "observe/patches.hpp"
#include "observe/raster.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;
using pcasweep::testing::SplitMix64;

namespace {

struct Geometry {
  int width, height, channels, bit_depth, patch_h, patch_w, stride_y, stride_x;
  ColourMode colour;
};

// Odd sizes, overlapping and non-overlapping strides, both colour modes, 8 and 16 bit.
const Geometry kGeometries[] = {
    {37, 23, 1, 8, 8, 8, 8, 8, ColourMode::joint},    {37, 23, 3, 8, 8, 8, 3, 3, ColourMode::joint},
    {37, 23, 3, 8, 8, 8, 8, 8, ColourMode::channels}, {37, 29, 4, 16, 5, 7, 2, 3, ColourMode::joint},
    {41, 23, 3, 16, 8, 8, 4, 4, ColourMode::channels}, {9, 31, 1, 8, 9, 4, 1, 2, ColourMode::joint},
    {64, 40, 3, 8, 8, 8, 8, 8, ColourMode::joint},    {50, 33, 2, 16, 6, 4, 5, 3, ColourMode::joint},
};

// A split of [0, n) into consecutive bands of pseudo-random sizes 1..max_band.
std::vector<int> random_cuts(int n, int max_band, std::uint64_t seed) {
  SplitMix64 rng(seed);
  std::vector<int> cuts = {0};
  while (cuts.back() < n) cuts.push_back(std::min(n, cuts.back() + 1 + int(rng.uniform() * max_band)));
  return cuts;
}

// X (observe() order) of patch rows [py0, py1) in band order.
RowBlock band_of(const PatchLayout& layout, const Eigen::MatrixXd& X, int py0, int py1) {
  RowBlock band(Eigen::Index(py1 - py0) * layout.patches_across() * layout.planes(), X.cols());
  for (int plane = 0; plane < layout.planes(); ++plane)
    for (int py = py0; py < py1; ++py)
      for (int px = 0; px < layout.patches_across(); ++px)
        band.row(layout.band_row(plane, py, px, py0, py1 - py0)) = X.row(layout.observation_row(plane, py, px));
  return band;
}

}  // namespace

TEST_CASE("observe_band gives observe()'s rows, band for band") {
  for (const Geometry& g : kGeometries) {
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth, 3);
    const PatchLayout layout(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour}, "t.png");
    const Eigen::MatrixXd X = layout.observe({image});
    const std::vector<int> cuts = random_cuts(layout.patches_down(), 3, 17);
    std::size_t differing = 0, rows = 0;
    for (std::size_t i = 0; i + 1 < cuts.size(); ++i) {
      RowBlock band;
      layout.observe_band(image, cuts[i], cuts[i + 1], band);
      const RowBlock want = band_of(layout, X, cuts[i], cuts[i + 1]);
      REQUIRE(band.rows() == want.rows());
      differing += (band.array() != want.array()).count();
      rows += std::size_t(band.rows());
    }
    CHECK(differing == 0);
    CHECK(rows == std::size_t(X.rows()));
  }
}

TEST_CASE("PatchBlocks places every block's rows where observe() has them") {
  for (const Geometry& g : kGeometries) {
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth, 5);
    const PatchLayout layout(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour}, "t.png");
    const Eigen::MatrixXd X = layout.observe({image});
    for (int band : {1, 2, 5}) {
      const PatchBlocks blocks(layout, image, band);
      Eigen::MatrixXd rebuilt = Eigen::MatrixXd::Constant(X.rows(), X.cols(), -1.0);
      RowBlock block;
      for (Eigen::Index b = 0; b < blocks.block_count(); ++b) {
        blocks.fill(b, block);
        Eigen::Index at = 0;
        for (const auto& [first, count] : blocks.segments(b)) {
          rebuilt.middleRows(first, count) = block.middleRows(at, count);
          at += count;
        }
        CHECK(at == block.rows());
      }
      CHECK((rebuilt.array() != X.array()).count() == 0);
    }
  }
}

TEST_CASE("PatchFolder: any split into bands folds to fold()'s samples, bit for bit") {
  for (const Geometry& g : kGeometries) {
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth, 9);
    const PatchLayout layout(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour}, "t.png");
    // A reconstruction-like matrix: the observations plus irrational noise, so that
    // averaging overlaps and rounding both matter.
    Eigen::MatrixXd X = layout.observe({image});
    SplitMix64 rng(23);
    for (Eigen::Index i = 0; i < X.size(); ++i) X.data()[i] += 7.3 * (rng.uniform() - 0.5) / std::sqrt(2.0);
    const Raster whole = layout.fold(X).front();
    const Image quantized = quantize(whole, image);
    for (std::uint64_t seed : {1u, 2u, 3u}) {
      const std::vector<int> cuts = random_cuts(layout.patches_down(), 4, seed);
      PatchFolder folder(layout);
      std::vector<double> rows_out;
      std::vector<std::uint16_t> q_out;
      const std::size_t row_len = std::size_t(image.width) * image.channels;
      for (std::size_t i = 0; i + 1 < cuts.size(); ++i) {
        folder.add(cuts[i], cuts[i + 1], band_of(layout, X, cuts[i], cuts[i + 1]));
        const int ready = folder.ready_rows();
        // Alternate the two ways of taking rows; both must agree with the whole fold.
        if (i % 2 == 0) {
          std::vector<double> part(row_len * std::size_t(ready));
          folder.take(part.data(), ready);
          for (double v : part) rows_out.push_back(v);
          for (double v : part) {
            double r = std::round(v);
            r = std::isnan(r) || r < 0 ? 0 : std::min(r, image.max_value());
            q_out.push_back(std::uint16_t(r));
          }
        } else {
          std::vector<std::uint16_t> part(row_len * std::size_t(ready));
          folder.take_quantized(part.data(), ready, image.max_value());
          const std::size_t at = rows_out.size();
          for (std::size_t j = 0; j < part.size(); ++j) rows_out.push_back(whole.samples[at + j]);
          q_out.insert(q_out.end(), part.begin(), part.end());
        }
      }
      CHECK(folder.next_row() == image.height);
      REQUIRE(rows_out.size() == whole.samples.size());
      std::size_t differing = 0;
      for (std::size_t i = 0; i < rows_out.size(); ++i) differing += rows_out[i] != whole.samples[i];
      CHECK(differing == 0);
      CHECK(q_out == quantized.samples);
    }
  }
}

TEST_CASE("PatchFolder refuses bands out of order and more rows than are complete") {
  const Image image = scene_image(37, 23, 1, 8);
  const PatchLayout layout(image, {8, 8, 8, 8, ColourMode::joint}, "t.png");
  const Eigen::MatrixXd X = layout.observe({image});
  PatchFolder folder(layout);
  CHECK_THROWS(folder.add(1, 2, band_of(layout, X, 1, 2)));
  folder.add(0, 1, band_of(layout, X, 0, 1));
  CHECK(folder.ready_rows() == 8);
  std::vector<double> out(std::size_t(image.width) * 9);
  CHECK_THROWS(folder.take(out.data(), 9));
}

TEST_CASE("fold_crop equals the same rectangle of the whole fold, sample for sample") {
  for (const Geometry& g : kGeometries) {
    const Image image = scene_image(g.width, g.height, g.channels, g.bit_depth, 19);
    const PatchLayout layout(image, {g.patch_h, g.patch_w, g.stride_y, g.stride_x, g.colour}, "t.png");
    Eigen::MatrixXd X = layout.observe({image});
    SplitMix64 rng(5);
    for (Eigen::Index i = 0; i < X.size(); ++i) X.data()[i] += 5.1 * (rng.uniform() - 0.5) / std::sqrt(3.0);
    const Raster whole = layout.fold(X).front();
    for (const auto& [x, y, w, h] : {std::array<int, 4>{0, 0, 7, 5}, std::array<int, 4>{3, 2, 17, 11},
                                     std::array<int, 4>{g.width - 6, g.height - 4, 6, 4},
                                     std::array<int, 4>{0, 0, g.width, g.height}}) {
      const PatchCrop crop = patch_crop(layout, x, y, w, h);
      // The crop's patches, cut from the whole matrix (the reconstruction being folded).
      const RowBlock cut = observe_crop(layout, image, crop);
      RowBlock xhat(cut.rows(), cut.cols());
      Eigen::Index at = 0;
      for (int plane = 0; plane < layout.planes(); ++plane)
        for (int py = crop.py0; py < crop.py1; ++py)
          for (int px = crop.px0; px < crop.px1; ++px) xhat.row(at++) = X.row(layout.observation_row(plane, py, px));
      const std::vector<double> folded = fold_crop(layout, crop, xhat);
      std::size_t differing = 0;
      for (int yy = 0; yy < crop.height; ++yy)
        for (int xx = 0; xx < crop.width; ++xx)
          for (int ch = 0; ch < g.channels; ++ch)
            differing += folded[(std::size_t(yy) * crop.width + xx) * g.channels + ch] !=
                         whole.samples[(std::size_t(crop.y + yy) * g.width + crop.x + xx) * g.channels + ch];
      CHECK(differing == 0);
      // And the cut patches are the layout's own.
      Eigen::Index row = 0;
      std::size_t wrong = 0;
      const Eigen::MatrixXd clean = layout.observe({image});
      for (int plane = 0; plane < layout.planes(); ++plane)
        for (int py = crop.py0; py < crop.py1; ++py)
          for (int px = crop.px0; px < crop.px1; ++px)
            wrong += (cut.row(row++).array() != clean.row(layout.observation_row(plane, py, px)).array()).count();
      CHECK(wrong == 0);
    }
  }
}
