// pcasweep/observe/patch_folder.hpp — patch observations back into image rows, band by band.
//
// Contract: a PatchFolder is built for one PatchLayout and receives the
// reconstructed observations of consecutive bands of patch rows, top to
// bottom (PatchLayout::observe_band's row order). It adds every patch onto a
// canvas of the mirror-extended image in a fixed order — patch row, then patch
// column, ascending — divides each sample by the number of patches covering
// it (overlaps are averaged) and hands out the image rows that no later patch
// row can touch, cropped to the image (the mirror padding is dropped). It
// holds only the rows still open: at most (patch height − stride) rows plus
// the current band, never the whole image. PatchLayout::fold() is one band of
// every patch row through this class, so the streaming sweep and the
// in-memory path fold with the same arithmetic: the samples are bit for bit
// equal for any split into bands.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "observe/patches.hpp"

namespace pcasweep {

class PatchFolder {
 public:
  // layout: must outlive the folder.
  explicit PatchFolder(const PatchLayout& layout);

  // band: rows × d, the reconstruction of patch rows [py0, py1) in
  // observe_band order ((py1−py0)·nx·planes rows). py0 must be the first
  // patch row not yet added. Throws Error(usage) otherwise or on a wrong shape.
  void add(int py0, int py1, const PatchLayout::Band& band);

  // Image rows completed and not yet taken.
  int ready_rows() const { return ready_end_ - next_row_; }
  // The first image row not yet taken (0..height).
  int next_row() const { return next_row_; }

  // Moves the next `rows` completed rows (rows <= ready_rows()) into `out`:
  // rows × width × channels real samples, interleaved, unrounded.
  void take(double* out, int rows);
  // The same rows rounded half away from zero and clipped to [0, max_value]
  // (observe/raster.hpp's quantize() rule; NaN becomes 0 and counts as
  // clipped), as `out`: rows × width × channels samples. Adds the number of
  // clipped samples to *clipped when given.
  void take_quantized(std::uint16_t* out, int rows, double max_value, std::size_t* clipped = nullptr);

 private:
  template <class Emit>
  void emit(int rows, Emit&& emit_row);

  const PatchLayout& layout_;
  int padded_width_, channels_, width_, height_;
  bool overlapping_;
  int next_patch_row_ = 0;   // first patch row not yet added
  int next_row_ = 0;         // first image row not yet taken
  int ready_end_ = 0;        // image rows [next_row_, ready_end_) are complete
  int canvas_first_ = 0;     // image row of the canvas's first row
  int canvas_rows_ = 0;      // rows held on the canvas
  std::vector<double> canvas_;         // canvas_rows_ × padded_width × channels sums
  std::vector<double> cover_x_;        // patches covering each padded column
  std::vector<double> cover_y_;        // patches covering each padded row
};

}  // namespace pcasweep
