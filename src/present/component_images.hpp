// pcasweep/present/component_images.hpp — principal components drawn as pictures.
//
// Contract: when one observation is itself a small image (a patch, a whole
// picture: Layout::observation_shape() non-empty), each basis column (d
// values, the layout's interleaved order) can be shown as that image. One
// scaling for every caller: symmetric around zero,
//   sample = round(127.5 + 127.5·v / max|v|), clipped to 0..255 (8-bit),
// max over the channels shown, so mid-gray is 0 and the largest |entry|
// reaches 0 or 255. Alpha is not shown (2 -> 1, 4 -> 3 channels). Pure
// functions, except write_component_images, which writes files.
#pragma once

#include <Eigen/Dense>
#include <vector>

#include "io/image.hpp"
#include "observe/layout.hpp"
#include "present/output_folder.hpp"

namespace pcasweep {

// column: d values, d == shape.width·shape.height·shape.channels. scale ≥ 1
// enlarges by nearest neighbour (values below 1 count as 1). Returns an 8-bit
// image, (shape.width·scale)×(shape.height·scale), channels without alpha.
// Throws Error(usage) when the column does not have d values.
Image component_image(const Eigen::Ref<const Eigen::VectorXd>& column, const Layout::ObservationShape& shape,
                      int scale = 1);

// components: d×r (orthonormal columns, leading first). Returns the first
// min(limit, r) columns as component_image()s; empty when `shape` is not an
// image (width 0) or does not hold d values.
std::vector<Image> component_images(const Eigen::MatrixXd& components, const Layout::ObservationShape& shape,
                                    int limit, int scale);

// The smallest whole enlargement that makes the longer side at least 64
// pixels, at most 8× (8×8 patches: 8×, 25×25 faces: 3×, large pictures: 1×).
int component_display_scale(const Layout::ObservationShape& shape);

// Writes the first min(limit, r) columns of `components` (d×r) as
// <folder>/components/component_<i>.png (i from 1, two digits), enlarged by
// component_display_scale(). Returns the number written (0 when the
// observations are not images, as for bands; no folder is made then).
// Throws Error(data) when the folder or a file cannot be written.
int write_component_images(const OutputFolder& folder, const Eigen::MatrixXd& components,
                           const Layout::ObservationShape& shape, int limit = 16);

}  // namespace pcasweep
