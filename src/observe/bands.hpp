// pcasweep/observe/bands.hpp — co-registered single-channel images as bands.
//
// Contract: for B single-channel images of the same width W, height H and bit
// depth (the bands of one scene), each pixel is one observation and the bands
// are its variables: X is (W·H)×B with X(y·W + x, b) = band b at (x, y).
// fold() writes column b back as band b, so fold(observe(s)) == s exactly.
#pragma once

#include "observe/layout.hpp"

namespace pcasweep {

class BandLayout : public Layout {
 public:
  // sources: the band images (B >= 2, one channel each), names: their file
  // names (same count), used in errors. Throws Error(usage) for fewer than 2
  // bands or fewer than 2 pixels, Error(data) naming the first file with more
  // than one channel or whose size or bit depth differs from the first band's.
  BandLayout(const std::vector<Image>& sources, const std::vector<std::string>& names);

  std::string name() const override { return "bands"; }
  std::string describe() const override;
  Eigen::Index observation_count() const override { return Eigen::Index(width_) * height_; }
  Eigen::Index dimension() const override { return bands_; }
  std::vector<std::string> variable_names() const override;
  // sources: B band images of this geometry. Returns X, (W·H)×B.
  Eigen::MatrixXd observe(const std::vector<Image>& sources) const override;
  // X: (W·H)×B. Returns B single-channel rasters.
  std::vector<Raster> fold(const Eigen::MatrixXd& X) const override;

 private:
  Eigen::Index bands_;
  int width_, height_;
  std::vector<std::string> names_;
};

}  // namespace pcasweep
