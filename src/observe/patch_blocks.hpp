// pcasweep/observe/patch_blocks.hpp — one image's patches as blocks of observations.
//
// Contract: PatchBlocks is the ObservationBlocks view of PatchLayout::observe()
// for one image: block b is a band of consecutive patch rows
// (PatchLayout::observe_band), about kTargetRows observations, so the
// solvers and the codec read the patches band by band and never hold N×d.
// Its X is observe()'s X row for row (segments() places each plane of a band).
#pragma once

#include "observe/observation_blocks.hpp"
#include "observe/patches.hpp"

namespace pcasweep {

class PatchBlocks : public ObservationBlocks {
 public:
  // Observations per block aimed at (a band is whole patch rows, at least one).
  static constexpr Eigen::Index kTargetRows = 4096;

  // layout, image: must outlive this object; image must have layout's geometry.
  // band_patch_rows: patch rows per block (0: from kTargetRows).
  PatchBlocks(const PatchLayout& layout, const Image& image, int band_patch_rows = 0);

  Eigen::Index rows() const override { return layout_.observation_count(); }
  Eigen::Index cols() const override { return layout_.dimension(); }
  Eigen::Index block_count() const override { return (layout_.patches_down() + band_ - 1) / band_; }
  std::vector<std::pair<Eigen::Index, Eigen::Index>> segments(Eigen::Index b) const override;
  void fill(Eigen::Index b, RowBlock& out) const override;

  // Patch rows per block, and block b's first and one-past-last patch row.
  int band_patch_rows() const { return band_; }
  int first_patch_row(Eigen::Index b) const { return int(b) * band_; }
  int end_patch_row(Eigen::Index b) const;

 private:
  const PatchLayout& layout_;
  const Image& image_;
  int band_;
};

// Patch rows per band holding about `target_rows` observations of `layout` (at least 1).
int band_patch_rows(const PatchLayout& layout, Eigen::Index target_rows = PatchBlocks::kTargetRows);

}  // namespace pcasweep
