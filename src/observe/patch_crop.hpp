// pcasweep/observe/patch_crop.hpp — one rectangle of an image, through the patches that cover it.
//
// Contract: for a crop (x, y, width, height) inside the image, patch_crop()
// finds every patch of the layout's grid that overlaps it; observe_crop()
// cuts just those patches and fold_crop() folds their reconstruction back
// onto the crop. Because every patch that touches a crop pixel is included,
// and the patches are added in PatchFolder's order (patch row, then column)
// and divided by the same coverage counts, the folded crop equals the same
// rectangle of the whole-image fold sample for sample. The report uses it to
// show 1:1 crops and to rebuild a crop live in the browser from a few hundred
// patches instead of the whole image.
#pragma once

#include <vector>

#include "observe/observation_blocks.hpp"
#include "observe/patches.hpp"

namespace pcasweep {

struct PatchCrop {
  int x = 0, y = 0, width = 0, height = 0;  // the crop, in image pixels
  int px0 = 0, px1 = 0, py0 = 0, py1 = 0;   // patch columns [px0, px1) and rows [py0, py1) that overlap it
  int patches() const { return (px1 - px0) * (py1 - py0); }
};

// Clamps the rectangle to the image (at least 1×1). Returns the crop and its patch sub-grid.
PatchCrop patch_crop(const PatchLayout& layout, int x, int y, int width, int height);

// image: the layout's geometry. Returns the sub-grid's observations, patches()·planes rows × d:
// plane after plane, patch row after patch row, left to right (observe()'s order restricted).
RowBlock observe_crop(const PatchLayout& layout, const Image& image, const PatchCrop& crop);

// xhat: a reconstruction of observe_crop()'s rows. Returns the crop's samples,
// height × width × channels interleaved, unrounded.
std::vector<double> fold_crop(const PatchLayout& layout, const PatchCrop& crop, const RowBlock& xhat);

}  // namespace pcasweep
