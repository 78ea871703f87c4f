#include "observe/patch_blocks.hpp"

#include <algorithm>

#include "core/error.hpp"

namespace pcasweep {

int band_patch_rows(const PatchLayout& layout, Eigen::Index target_rows) {
  const Eigen::Index per_row = Eigen::Index(layout.patches_across()) * layout.planes();
  return int(std::clamp<Eigen::Index>(target_rows / std::max<Eigen::Index>(per_row, 1), 1, layout.patches_down()));
}

PatchBlocks::PatchBlocks(const PatchLayout& layout, const Image& image, int band_patch_rows_wanted)
    : layout_(layout), image_(image), band_(band_patch_rows_wanted > 0 ? band_patch_rows_wanted : pcasweep::band_patch_rows(layout)) {
  if (image.width != layout.width() || image.height != layout.height() || image.channels != layout.channels()) {
    throw usage_error("PatchBlocks: the image does not have the layout's geometry");
  }
}

int PatchBlocks::end_patch_row(Eigen::Index b) const {
  return std::min(layout_.patches_down(), int(b + 1) * band_);
}

std::vector<std::pair<Eigen::Index, Eigen::Index>> PatchBlocks::segments(Eigen::Index b) const {
  const int py0 = first_patch_row(b), py1 = end_patch_row(b);
  const Eigen::Index count = Eigen::Index(py1 - py0) * layout_.patches_across();
  std::vector<std::pair<Eigen::Index, Eigen::Index>> out;
  for (int plane = 0; plane < layout_.planes(); ++plane) out.emplace_back(layout_.observation_row(plane, py0, 0), count);
  return out;
}

void PatchBlocks::fill(Eigen::Index b, RowBlock& out) const {
  layout_.observe_band(image_, first_patch_row(b), end_patch_row(b), out);
}

}  // namespace pcasweep
