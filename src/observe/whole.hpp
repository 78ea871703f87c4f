// pcasweep/observe/whole.hpp — each image is one observation.
//
// Contract: for M images of the same width W, height H, channels c and bit
// depth, observation i is image i's samples in their interleaved row-major
// order: X is M×d with d = W·H·c, X(i, (y·W + x)·c + ch) = sample. fold()
// writes row i back as source i, so fold(observe(s)) == s exactly.
#pragma once

#include "observe/layout.hpp"

namespace pcasweep {

class WholeLayout : public Layout {
 public:
  // sources: the images (M >= 2), names: their file names (same count), used
  // in errors. Throws Error(usage) when fewer than 2 images are given and
  // Error(data) naming the first file whose width, height, channels or bit
  // depth differs from the first image's.
  WholeLayout(const std::vector<Image>& sources, const std::vector<std::string>& names);

  std::string name() const override { return "whole"; }
  std::string describe() const override;
  Eigen::Index observation_count() const override { return count_; }
  Eigen::Index dimension() const override { return Eigen::Index(width_) * height_ * channels_; }
  std::vector<std::string> variable_names() const override;
  // sources: M images of this geometry. Returns X, M×(W·H·c).
  Eigen::MatrixXd observe(const std::vector<Image>& sources) const override;
  // X: M×(W·H·c). Returns M rasters.
  std::vector<Raster> fold(const Eigen::MatrixXd& X) const override;
  ObservationShape observation_shape() const override { return {width_, height_, channels_}; }

 private:
  Eigen::Index count_;
  int width_, height_, channels_;
};

}  // namespace pcasweep
