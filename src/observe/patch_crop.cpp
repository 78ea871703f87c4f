#include "observe/patch_crop.hpp"

#include <algorithm>

#include "core/error.hpp"

namespace pcasweep {

PatchCrop patch_crop(const PatchLayout& layout, int x, int y, int width, int height) {
  const PatchOptions& o = layout.options();
  PatchCrop c;
  c.x = std::clamp(x, 0, layout.width() - 1);
  c.y = std::clamp(y, 0, layout.height() - 1);
  c.width = std::clamp(width, 1, layout.width() - c.x);
  c.height = std::clamp(height, 1, layout.height() - c.y);
  // Patch i covers [i·s, i·s + p): it overlaps [a, b) when i·s < b and i·s + p > a.
  const auto range = [](int a, int b, int p, int s, int count, int& lo, int& hi) {
    lo = std::max(0, (a - p + s) / s);  // smallest i with i·s + p > a
    if (lo * s + p <= a) ++lo;
    hi = std::min(count, (b - 1) / s + 1);  // one past the largest i with i·s < b
  };
  range(c.x, c.x + c.width, o.patch_width, o.stride_x, layout.patches_across(), c.px0, c.px1);
  range(c.y, c.y + c.height, o.patch_height, o.stride_y, layout.patches_down(), c.py0, c.py1);
  return c;
}

RowBlock observe_crop(const PatchLayout& layout, const Image& image, const PatchCrop& crop) {
  RowBlock band;
  layout.observe_band(image, crop.py0, crop.py1, band);
  const int rows = crop.py1 - crop.py0, across = crop.px1 - crop.px0, planes = layout.planes();
  RowBlock out(Eigen::Index(crop.patches()) * planes, layout.dimension());
  Eigen::Index at = 0;
  for (int plane = 0; plane < planes; ++plane)
    for (int py = crop.py0; py < crop.py1; ++py)
      for (int px = crop.px0; px < crop.px1; ++px) out.row(at++) = band.row(layout.band_row(plane, py, px, crop.py0, rows));
  (void)across;
  return out;
}

std::vector<double> fold_crop(const PatchLayout& layout, const PatchCrop& crop, const RowBlock& xhat) {
  const PatchOptions& o = layout.options();
  const int c = layout.channels(), planes = layout.planes(), across = crop.px1 - crop.px0;
  const int ph = o.patch_height, pw = o.patch_width, sy = o.stride_y, sx = o.stride_x;
  if (xhat.rows() != Eigen::Index(crop.patches()) * planes || xhat.cols() != layout.dimension())
    throw usage_error("fold_crop: reconstruction has the wrong shape");
  std::vector<double> sum(std::size_t(crop.width) * crop.height * c, 0.0);
  std::vector<double> weight(std::size_t(crop.width) * crop.height, 0.0);
  // PatchFolder's order for every pixel: patch rows ascending, then patch columns.
  for (int py = crop.py0; py < crop.py1; ++py)
    for (int px = crop.px0; px < crop.px1; ++px)
      for (int r = 0; r < ph; ++r) {
        const int y = py * sy + r - crop.y;
        if (y < 0 || y >= crop.height) continue;
        for (int t = 0; t < pw; ++t) {
          const int x = px * sx + t - crop.x;
          if (x < 0 || x >= crop.width) continue;
          const std::size_t pixel = std::size_t(y) * crop.width + x;
          weight[pixel] += 1.0;
          for (int ch = 0; ch < c; ++ch) {
            const int plane = planes == 1 ? 0 : ch;
            const Eigen::Index row = (Eigen::Index(plane) * (crop.py1 - crop.py0) + (py - crop.py0)) * across + (px - crop.px0);
            const Eigen::Index var = planes == 1 ? (Eigen::Index(r) * pw + t) * c + ch : Eigen::Index(r) * pw + t;
            sum[pixel * c + ch] += xhat(row, var);
          }
        }
      }
  const bool overlapping = sy < ph || sx < pw;
  for (std::size_t p = 0; p < weight.size(); ++p)
    for (int ch = 0; ch < c; ++ch)
      if (overlapping) sum[p * c + ch] /= weight[p];
  return sum;
}

}  // namespace pcasweep
