#include "observe/patch_folder.hpp"

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <cstring>

#include "core/error.hpp"
#include "observe/raster.hpp"

namespace pcasweep {

namespace {
// Number of windows [i·stride, i·stride + size), i = 0..count−1, covering each position of [0, length).
std::vector<double> coverage(int length, int size, int stride, int count) {
  std::vector<double> cover(std::size_t(length), 0.0);
  for (int i = 0; i < count; ++i)
    for (int t = 0; t < size; ++t) cover[std::size_t(i) * stride + t] += 1.0;
  return cover;
}
}  // namespace

PatchFolder::PatchFolder(const PatchLayout& layout)
    : layout_(layout),
      padded_width_(layout.padded_width()),
      channels_(layout.channels()),
      width_(layout.width()),
      height_(layout.height()) {
  const PatchOptions& o = layout.options();
  overlapping_ = o.stride_y < o.patch_height || o.stride_x < o.patch_width;
  cover_x_ = coverage(layout.padded_width(), o.patch_width, o.stride_x, layout.patches_across());
  cover_y_ = coverage(layout.padded_height(), o.patch_height, o.stride_y, layout.patches_down());
}

void PatchFolder::add(int py0, int py1, const PatchLayout::Band& band) {
  const PatchOptions& o = layout_.options();
  const int nx = layout_.patches_across(), ny = layout_.patches_down(), planes = layout_.planes();
  const int ph = o.patch_height, pw = o.patch_width, sy = o.stride_y, sx = o.stride_x;
  if (py0 != next_patch_row_ || py1 <= py0 || py1 > ny) throw usage_error("PatchFolder: patch rows out of order");
  const int band_rows = py1 - py0;
  if (band.rows() != Eigen::Index(band_rows) * nx * planes || band.cols() != layout_.dimension()) {
    throw usage_error("PatchFolder: band has the wrong shape");
  }
  const int y_lo = py0 * sy, y_hi = (py1 - 1) * sy + ph;
  const std::size_t row_len = std::size_t(padded_width_) * channels_;
  // The canvas starts at the first row not yet taken; y_lo is never above it
  // (rows below py0·sy were completed by earlier bands).
  const int needed = y_hi - canvas_first_;
  if (needed > canvas_rows_) {
    canvas_.resize(std::size_t(needed) * row_len, 0.0);
    canvas_rows_ = needed;
  }
  const int c = channels_;
#pragma omp parallel for schedule(static) if (!omp_in_parallel() && (y_hi - y_lo) >= 8)
  for (int y = y_lo; y < y_hi; ++y) {
    double* row = canvas_.data() + std::size_t(y - canvas_first_) * row_len;
    // Patch rows of this band that cover image row y, ascending.
    const int py_a = std::max(py0, (y - ph + sy) / sy), py_b = std::min(py1 - 1, y / sy);
    for (int py = py_a; py <= py_b; ++py) {
      const int r = y - py * sy;
      if (r < 0 || r >= ph) continue;
      for (int px = 0; px < nx; ++px) {
        double* out = row + std::size_t(px) * sx * c;
        if (planes == 1) {
          const double* in = band.row(layout_.band_row(0, py, px, py0, band_rows)).data() + std::size_t(r) * pw * c;
          for (int t = 0; t < pw * c; ++t) out[t] += in[t];
        } else {
          for (int ch = 0; ch < c; ++ch) {
            const double* in = band.row(layout_.band_row(ch, py, px, py0, band_rows)).data() + std::size_t(r) * pw;
            for (int t = 0; t < pw; ++t) out[std::size_t(t) * c + ch] += in[t];
          }
        }
      }
    }
  }
  next_patch_row_ = py1;
  ready_end_ = py1 == ny ? height_ : std::min(height_, py1 * sy);
}

template <class Emit>
void PatchFolder::emit(int rows, Emit&& emit_row) {
  if (rows < 0 || rows > ready_rows()) throw usage_error("PatchFolder: more rows taken than are complete");
  const std::size_t row_len = std::size_t(padded_width_) * channels_;
  const int first = next_row_;
#pragma omp parallel for schedule(static) if (!omp_in_parallel() && rows >= 8)
  for (int i = 0; i < rows; ++i) {
    const int y = first + i;
    emit_row(i, canvas_.data() + std::size_t(y - canvas_first_) * row_len, cover_y_[std::size_t(y)]);
  }
  next_row_ += rows;
  // Drop the taken rows from the front of the canvas.
  const int drop = next_row_ - canvas_first_;
  const int keep = canvas_rows_ - drop;
  if (keep > 0) std::memmove(canvas_.data(), canvas_.data() + std::size_t(drop) * row_len, std::size_t(keep) * row_len * sizeof(double));
  canvas_rows_ = std::max(keep, 0);
  canvas_.resize(std::size_t(canvas_rows_) * row_len);
  canvas_first_ = next_row_;
}

void PatchFolder::take(double* out, int rows) {
  const std::size_t out_len = std::size_t(width_) * channels_;
  emit(rows, [&](int i, const double* row, double cover_y) {
    double* o = out + std::size_t(i) * out_len;
    if (!overlapping_) {
      std::memcpy(o, row, out_len * sizeof(double));
      return;
    }
    for (int x = 0; x < width_; ++x) {
      const double w = cover_y * cover_x_[std::size_t(x)];
      for (int ch = 0; ch < channels_; ++ch) o[std::size_t(x) * channels_ + ch] = row[std::size_t(x) * channels_ + ch] / w;
    }
  });
}

namespace {
// Rounds half away from zero and clips n samples into 0..max_value, NaN to 0;
// returns how many were clipped (NaN, below 0 or above max_value after
// rounding; −0 is not clipped). Branch-free so that GCC vectorises it: the
// same values as round_half_away followed by the comparisons one by one.
// scale: nullptr, or per-sample divisors (overlapping patches' coverage).
std::size_t quantize_run(const double* __restrict in, const double* __restrict scale, std::uint16_t* __restrict out,
                         std::size_t n, double max_value) {
  std::size_t clipped = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double x = scale ? in[i] / scale[i] : in[i];
    const double a = std::fabs(x);
    double f = std::floor(a);
    f += (a - f >= 0.5) ? 1.0 : 0.0;
    double r = std::copysign(f, x);
    clipped += (r >= 0.0 && r <= max_value) ? 0 : 1;  // NaN fails both comparisons
    r = r >= 0.0 ? r : 0.0;                           // negative and NaN -> 0
    r = r <= max_value ? r : max_value;
    out[i] = static_cast<std::uint16_t>(r);
  }
  return clipped;
}
}  // namespace

void PatchFolder::take_quantized(std::uint16_t* out, int rows, double max_value, std::size_t* clipped) {
  const std::size_t out_len = std::size_t(width_) * channels_;
  std::vector<std::size_t> clips(std::size_t(std::max(rows, 0)), 0);
  std::vector<double> scale;  // overlapping: cover_x per sample; each row multiplies it by cover_y
  if (overlapping_) {
    scale.resize(out_len);
    for (int x = 0; x < width_; ++x)
      for (int ch = 0; ch < channels_; ++ch) scale[std::size_t(x) * channels_ + ch] = cover_x_[std::size_t(x)];
  }
  emit(rows, [&](int i, const double* row, double cover_y) {
    std::uint16_t* o = out + std::size_t(i) * out_len;
    if (!overlapping_) {
      clips[std::size_t(i)] = quantize_run(row, nullptr, o, out_len, max_value);
      return;
    }
    // The divisor cover_y·cover_x, formed per sample exactly as before.
    std::vector<double> w(out_len);
    for (std::size_t t = 0; t < out_len; ++t) w[t] = cover_y * scale[t];
    clips[std::size_t(i)] = quantize_run(row, w.data(), o, out_len, max_value);
  });
  if (clipped)
    for (std::size_t n : clips) *clipped += n;
}

}  // namespace pcasweep
