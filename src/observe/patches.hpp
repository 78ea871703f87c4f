// pcasweep/observe/patches.hpp — one image cut into (possibly overlapping) patches.
//
// Contract: for an image of W×H with c channels, patches of ph×pw taken every
// sy rows and sx columns. The image is first extended at the bottom and right
// by mirror reflection (…, x[n-2], x[n-1], x[n-2], …: the edge sample is not
// repeated) to the smallest size that the patch grid covers exactly; fold()
// crops it back, so there are no dark borders.
//   joint colour:    one observation per patch, d = ph·pw·c, variable order
//                    (row, column, channel) within the patch.
//   channels colour: each channel's patches are separate observations sharing
//                    one basis, d = ph·pw, N = patches·c (channel-major).
// Overlapping patches (stride < patch) are averaged when folded back.
// Streaming: observe_band() cuts one band of patch rows at a time and
// PatchFolder (observe/patch_folder.hpp) folds bands back into image rows, so
// an image can be swept without ever holding its N×d observation matrix.
#pragma once

#include <memory>

#include "observe/layout.hpp"
#include "observe/observation_blocks.hpp"

namespace pcasweep {

enum class ColourMode { joint, channels };

struct PatchOptions {
  int patch_height = 8;
  int patch_width = 8;
  int stride_y = 0;  // 0 = patch_height (non-overlapping)
  int stride_x = 0;  // 0 = patch_width
  ColourMode colour = ColourMode::joint;
};

// Parses "8" or "8x16" (rows x columns). Throws Error(usage) naming `option`.
void parse_size_pair(const std::string& text, const std::string& option, int& rows, int& cols);

class PatchLayout : public Layout {
 public:
  // geometry: the image to be cut (only its size and channels are kept).
  // Throws Error(usage) for a zero patch/stride or a patch larger than the image,
  // naming `source_name`.
  PatchLayout(const Image& geometry, const PatchOptions& options, const std::string& source_name);

  std::string name() const override { return "patches"; }
  std::string describe() const override;
  Eigen::Index observation_count() const override;
  Eigen::Index dimension() const override;
  std::vector<std::string> variable_names() const override;
  Eigen::MatrixXd observe(const std::vector<Image>& sources) const override;
  std::vector<Raster> fold(const Eigen::MatrixXd& X) const override;
  // One patch: pw×ph with c channels (joint colour) or 1 (channels share a basis).
  ObservationShape observation_shape() const override {
    return {options_.patch_width, options_.patch_height, options_.colour == ColourMode::joint ? channels_ : 1};
  }
  const PatchLayout* patch_geometry() const override { return this; }

  // Observations of one band of patch rows, stored row-major so that one patch
  // (d values) is contiguous.
  using Band = RowBlock;
  // image: the geometry this layout was built for; patch rows [py0, py1) with
  // 0 <= py0 < py1 <= patches_down(). Fills `band` with (py1−py0)·nx·planes()
  // rows × d: plane after plane, within a plane patch row after patch row,
  // left to right — observe()'s row order restricted to those patch rows
  // (band_row() maps one to the other). Reuses band's storage when it fits.
  // Throws Error(usage) for another geometry or a bad range.
  void observe_band(const Image& image, int py0, int py1, Band& band) const;
  // Row of observation (plane, patch row py, patch column px) in a band of
  // `band_rows` patch rows starting at py0.
  Eigen::Index band_row(int plane, int py, int px, int py0, int band_rows) const {
    return (Eigen::Index(plane) * band_rows + (py - py0)) * nx_ + px;
  }
  // Row of the same observation in observe()'s X: plane·(nx·ny) + py·nx + px.
  Eigen::Index observation_row(int plane, int py, int px) const {
    return Eigen::Index(plane) * (Eigen::Index(nx_) * ny_) + Eigen::Index(py) * nx_ + px;
  }
  // 1 for joint colour (a patch holds every channel), c for channels colour.
  int planes() const { return options_.colour == ColourMode::joint ? 1 : channels_; }
  int width() const { return width_; }
  int height() const { return height_; }
  int channels() const { return channels_; }

  const PatchOptions& options() const { return options_; }
  int padded_width() const { return padded_w_; }
  int padded_height() const { return padded_h_; }
  int patches_across() const { return nx_; }
  int patches_down() const { return ny_; }

 private:
  PatchOptions options_;
  int width_, height_, channels_;
  int padded_w_, padded_h_;
  int nx_, ny_;
};

// Index into [0, n) for a position p on the mirror-extended axis (period 2n−2).
int reflect_index(long p, int n);

}  // namespace pcasweep
