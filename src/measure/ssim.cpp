#include "measure/ssim.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/error.hpp"

namespace pcasweep {

std::vector<double> ssim_gaussian_weights() {
  // Sampled Gaussian exp(−i²/(2σ²)), σ = 1.5, i = −5..5, normalised to sum 1
  // (the window of Wang et al. 2004; the same sampling and truncation as
  // scipy.ndimage.gaussian_filter with truncate = 3.5, which rounds
  // 3.5·1.5 + 0.5 down to radius 5).
  const double sigma = 1.5;
  std::vector<double> w(kSsimWindow);
  double sum = 0.0;
  for (int i = -kSsimRadius; i <= kSsimRadius; ++i) {
    w[std::size_t(i + kSsimRadius)] = std::exp(-0.5 * double(i) * double(i) / (sigma * sigma));
    sum += w[std::size_t(i + kSsimRadius)];
  }
  for (double& v : w) v /= sum;
  return w;
}

namespace {

// out[x] = Σ_t g[t]·in[x + t], t = 0..10, for x in [0, n). Uses the window's
// symmetry (g[t] = g[10 − t]) to halve the multiplications.
inline void filter_row(const double* in, double* out, int n, const double* g) {
  for (int x = 0; x < n; ++x) out[x] = g[kSsimRadius] * in[x + kSsimRadius];
  for (int t = 0; t < kSsimRadius; ++t) {
    const double w = g[t];
    const double* lo = in + t;
    const double* hi = in + (kSsimWindow - 1 - t);
    for (int x = 0; x < n; ++x) out[x] += w * (lo[x] + hi[x]);
  }
}

// out[x] = Σ_t g[t]·rows[t][x] over 11 rows (the vertical pass).
inline void filter_column(const double* const* rows, double* out, int n, const double* g) {
  const double* mid = rows[kSsimRadius];
  for (int x = 0; x < n; ++x) out[x] = g[kSsimRadius] * mid[x];
  for (int t = 0; t < kSsimRadius; ++t) {
    const double w = g[t];
    const double* lo = rows[t];
    const double* hi = rows[kSsimWindow - 1 - t];
    for (int x = 0; x < n; ++x) out[x] += w * (lo[x] + hi[x]);
  }
}

// The local index from the five window moments. Written so that identical
// inputs give exactly 1: every product that appears on both sides of the
// fraction is formed once, so round-off (and any fused multiply-add) treats
// both sides alike.
inline double local_ssim(double mx, double my, double sxx, double syy, double sxy, double c1, double c2) {
  const double pxx = mx * mx, pyy = my * my, pxy = mx * my;
  const double vx = sxx - pxx, vy = syy - pyy, cov = sxy - pxy;
  const double num = (2.0 * pxy + c1) * (2.0 * cov + c2);
  const double den = ((pxx + pyy) + c1) * ((vx + vy) + c2);
  return num / den;
}

}  // namespace

double ssim_channel(const std::uint16_t* a, const std::uint16_t* b, int width, int height, int stride,
                    double data_range, std::vector<float>* map) {
  if (width < kSsimWindow || height < kSsimWindow) {
    if (map) map->clear();
    return std::numeric_limits<double>::quiet_NaN();
  }
  const std::vector<double> gv = ssim_gaussian_weights();
  const double* g = gv.data();
  const int out_w = width - 2 * kSsimRadius, out_h = height - 2 * kSsimRadius;
  const double c1 = (0.01 * data_range) * (0.01 * data_range);
  const double c2 = (0.03 * data_range) * (0.03 * data_range);
  if (map) map->assign(std::size_t(out_w) * out_h, 0.0f);

  // Output rows are cut into blocks; each block filters the input rows it
  // needs horizontally (5 moments), then vertically. Blocks are independent,
  // so they run in parallel; their sums are added in block order, so the
  // result does not depend on the number of threads.
  constexpr int kBlock = 64;
  const int blocks = (out_h + kBlock - 1) / kBlock;
  std::vector<double> block_sums(std::size_t(blocks), 0.0);

#pragma omp parallel
  {
    const int max_rows = kBlock + 2 * kSsimRadius;
    std::vector<double> in(std::size_t(5) * width);              // x, y, x², y², xy of one input row
    std::vector<double> horiz(std::size_t(5) * max_rows * out_w); // horizontally filtered moments
    std::vector<double> vert(std::size_t(5) * out_w);             // one output row of moments
#pragma omp for schedule(dynamic, 1)
    for (int blk = 0; blk < blocks; ++blk) {
      const int y0 = blk * kBlock;
      const int y1 = std::min(out_h, y0 + kBlock);
      const int rows = (y1 - y0) + 2 * kSsimRadius;
      for (int r = 0; r < rows; ++r) {
        const std::size_t base = std::size_t(y0 + r) * width * stride;
        double* px = in.data();
        double* py = px + width;
        double* pxx = py + width;
        double* pyy = pxx + width;
        double* pxy = pyy + width;
        for (int x = 0; x < width; ++x) {
          const double va = a[base + std::size_t(x) * stride];
          const double vb = b[base + std::size_t(x) * stride];
          px[x] = va;
          py[x] = vb;
          pxx[x] = va * va;
          pyy[x] = vb * vb;
          pxy[x] = va * vb;
        }
        for (int m = 0; m < 5; ++m) {
          filter_row(in.data() + std::size_t(m) * width,
                     horiz.data() + (std::size_t(m) * max_rows + r) * out_w, out_w, g);
        }
      }
      double sum = 0.0;
      for (int oy = y0; oy < y1; ++oy) {
        const int r0 = oy - y0;
        for (int m = 0; m < 5; ++m) {
          const double* rowp[kSsimWindow];
          for (int t = 0; t < kSsimWindow; ++t)
            rowp[t] = horiz.data() + (std::size_t(m) * max_rows + r0 + t) * out_w;
          filter_column(rowp, vert.data() + std::size_t(m) * out_w, out_w, g);
        }
        const double* mx = vert.data();
        const double* my = mx + out_w;
        const double* sxx = my + out_w;
        const double* syy = sxx + out_w;
        const double* sxy = syy + out_w;
        float* mrow = map ? map->data() + std::size_t(oy) * out_w : nullptr;
        double row_sum = 0.0;
        for (int x = 0; x < out_w; ++x) {
          const double s = local_ssim(mx[x], my[x], sxx[x], syy[x], sxy[x], c1, c2);
          row_sum += s;
          if (mrow) mrow[x] = float(s);
        }
        sum += row_sum;
      }
      block_sums[std::size_t(blk)] = sum;
    }
  }
  double total = 0.0;
  for (double s : block_sums) total += s;
  return total / (double(out_w) * double(out_h));
}

namespace {
void check_pair(const Image& a, const Image& b) {
  if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth) {
    throw usage_error("cannot compute SSIM of images of different size, channels or bit depth");
  }
}
}  // namespace

SsimResult compute_ssim(const Image& original, const Image& other, bool want_map) {
  check_pair(original, other);
  SsimResult r;
  const int c = original.channels;
  std::vector<float> channel_map;
  for (int ch = 0; ch < c; ++ch) {
    const double s = ssim_channel(original.samples.data() + ch, other.samples.data() + ch, original.width,
                                  original.height, c, original.max_value(), want_map ? &channel_map : nullptr);
    r.channel_ssim.push_back(s);
    if (want_map && !channel_map.empty()) {
      if (r.map.empty()) {
        r.map.assign(channel_map.size(), 0.0f);
        r.map_width = original.width - 2 * kSsimRadius;
        r.map_height = original.height - 2 * kSsimRadius;
      }
      for (std::size_t i = 0; i < channel_map.size(); ++i) r.map[i] += channel_map[i] / float(c);
    }
  }
  double sum = 0.0;
  for (double s : r.channel_ssim) sum += s;
  r.ssim = c > 0 ? sum / double(c) : std::numeric_limits<double>::quiet_NaN();
  return r;
}

Image ssim_map_image(const SsimResult& result) {
  if (result.map.empty()) throw usage_error("no SSIM map was computed (the image is under 11x11 or none was asked)");
  Image img;
  img.width = result.map_width;
  img.height = result.map_height;
  img.channels = 1;
  img.bit_depth = 8;
  img.channel_names = {"gray"};
  img.samples.resize(result.map.size());
  for (std::size_t i = 0; i < result.map.size(); ++i) {
    const double v = std::clamp(double(result.map[i]), 0.0, 1.0);
    img.samples[i] = std::uint16_t(std::lround(v * 255.0));
  }
  return img;
}

SsimResult compute_ssim_sets(const std::vector<Image>& originals, const std::vector<Image>& others) {
  if (originals.empty() || originals.size() != others.size()) {
    throw usage_error("cannot compute SSIM of image sets of different lengths");
  }
  if (originals.size() == 1) return compute_ssim(originals.front(), others.front());
  const int c = originals.front().channels;
  std::vector<double> weighted(std::size_t(c), 0.0);
  double area = 0.0;
  for (std::size_t i = 0; i < originals.size(); ++i) {
    if (originals[i].channels != c) throw usage_error("cannot compute SSIM of image sets with different channels");
    const SsimResult one = compute_ssim(originals[i], others[i]);
    if (std::isnan(one.ssim)) continue;
    const double w = double(originals[i].width - 2 * kSsimRadius) * double(originals[i].height - 2 * kSsimRadius);
    for (int ch = 0; ch < c; ++ch) weighted[std::size_t(ch)] += w * one.channel_ssim[std::size_t(ch)];
    area += w;
  }
  SsimResult r;
  double sum = 0.0;
  for (int ch = 0; ch < c; ++ch) {
    const double v = area > 0 ? weighted[std::size_t(ch)] / area : std::numeric_limits<double>::quiet_NaN();
    r.channel_ssim.push_back(v);
    sum += v;
  }
  r.ssim = sum / double(c);
  return r;
}

}  // namespace pcasweep
