// pcasweep/observe/layout.hpp — the seam between sources and observations.
//
// Contract: a Layout is built for the geometry of its source images and
// knows both directions:
//   observe(sources) -> X, N×d, one observation per row (column-major double)
//   fold(X̂)          -> one Raster per source, the inverse of observe.
// fold(observe(s)) == s exactly (overlaps are averaged, padding cropped), so
// a reconstruction at k = d rounds back to the input bit for bit.
// Layouts never know how a basis is computed.
// Which layout it is, where a caller needs the patch geometry (the streamed
// sweep, the codec), is asked through patch_geometry(), never by casting.
// Recordings are cut by WindowLayout (observe/windows.hpp), a seam of its own:
// its sources are T×C sample matrices, not Images, and it folds back into one.
#pragma once

#include <Eigen/Dense>
#include <string>
#include <vector>

#include "io/image.hpp"
#include "observe/raster.hpp"

namespace pcasweep {

class PatchLayout;  // observe/patches.hpp

class Layout {
 public:
  virtual ~Layout() = default;
  // Short name for tables and JSON: "patches", "whole", "bands".
  virtual std::string name() const = 0;
  // Human description of the geometry, e.g. "8x8 patches, stride 8x8, joint colour".
  virtual std::string describe() const = 0;
  // N, the number of observations (rows of X).
  virtual Eigen::Index observation_count() const = 0;
  // d, the number of variables (columns of X).
  virtual Eigen::Index dimension() const = 0;
  // Names of the d variables, for diagnosis ("r0c0:red", ...). Size d.
  virtual std::vector<std::string> variable_names() const = 0;
  // sources: the images this layout was built for. Returns X, N×d.
  virtual Eigen::MatrixXd observe(const std::vector<Image>& sources) const = 0;
  // X: N×d (any real values). Returns one Raster per source, unrounded.
  virtual std::vector<Raster> fold(const Eigen::MatrixXd& X) const = 0;
  // When one observation (one row of X, d values) is itself a small image —
  // a patch, a whole picture — its geometry (width·height·channels == d, same
  // interleaved order as Image). Default: not an image, {0, 0, 0}.
  struct ObservationShape {
    int width = 0, height = 0, channels = 0;
  };
  virtual ObservationShape observation_shape() const { return {}; }
  // The patch geometry (patch and stride sizes, the grid, the mirror padding)
  // when this layout cuts one image into patches; null for every other layout.
  virtual const PatchLayout* patch_geometry() const { return nullptr; }
};

}  // namespace pcasweep
