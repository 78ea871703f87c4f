// pcasweep-bench ssim [--width 6000] [--height 4000] [--channels 3] [--bits 8,16]
//                     [--threads 1,2] [--repeat 3] [--band 0]
//
// Whole-image SSIM cost (docs/performance.md, "SSIM cost"): the implementation
// before streaming (double precision, whole images; copied verbatim below as
// `legacy`) against SsimAccumulator in double and in single precision, on a
// synthetic pair (smooth scene plus texture and sensor noise; the other image
// the same plus noise of sd 2% of L, i.e. a fair reconstruction), with 1 and 2
// OpenMP threads. One JSON object per (bits, threads, implementation): median
// wall time of `repeat` runs, ms per megapixel, the SSIM and its difference
// from the legacy double value. --band N (N > 0) feeds the accumulators N rows
// at a time (the streaming sweep's pattern) instead of the whole image.
// Also reported per bits: "parallel_accumulators", two accumulators fed at
// once from an OpenMP parallel region (one per thread, each serial inside),
// and the QualityAccumulator (MSE/PSNR) against the former two-pass code.
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <iostream>
#include <limits>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "core/thread_guard.hpp"
#include "core/random.hpp"
#include "io/image.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"

namespace pcasweep::bench {

namespace legacy {
// ---- The double-precision implementation of src/measure/ssim.cpp before the
// ---- streaming rewrite, kept verbatim for the comparison.

inline void filter_row(const double* in, double* out, int n, const double* g) {
  for (int x = 0; x < n; ++x) out[x] = g[kSsimRadius] * in[x + kSsimRadius];
  for (int t = 0; t < kSsimRadius; ++t) {
    const double w = g[t];
    const double* lo = in + t;
    const double* hi = in + (kSsimWindow - 1 - t);
    for (int x = 0; x < n; ++x) out[x] += w * (lo[x] + hi[x]);
  }
}

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

inline double local_ssim(double mx, double my, double sxx, double syy, double sxy, double c1, double c2) {
  const double pxx = mx * mx, pyy = my * my, pxy = mx * my;
  const double vx = sxx - pxx, vy = syy - pyy, cov = sxy - pxy;
  const double num = (2.0 * pxy + c1) * (2.0 * cov + c2);
  const double den = ((pxx + pyy) + c1) * ((vx + vy) + c2);
  return num / den;
}

double ssim_channel(const std::uint16_t* a, const std::uint16_t* b, int width, int height, int stride,
                    double data_range) {
  if (width < kSsimWindow || height < kSsimWindow) return std::numeric_limits<double>::quiet_NaN();
  const std::vector<double> gv = ssim_gaussian_weights();
  const double* g = gv.data();
  const int out_w = width - 2 * kSsimRadius, out_h = height - 2 * kSsimRadius;
  const double c1 = (0.01 * data_range) * (0.01 * data_range);
  const double c2 = (0.03 * data_range) * (0.03 * data_range);
  constexpr int kBlock = 64;
  const int blocks = (out_h + kBlock - 1) / kBlock;
  std::vector<double> block_sums(std::size_t(blocks), 0.0);
#pragma omp parallel
  {
    const int max_rows = kBlock + 2 * kSsimRadius;
    std::vector<double> in(std::size_t(5) * width);
    std::vector<double> horiz(std::size_t(5) * max_rows * out_w);
    std::vector<double> vert(std::size_t(5) * out_w);
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
          filter_row(in.data() + std::size_t(m) * width, horiz.data() + (std::size_t(m) * max_rows + r) * out_w,
                     out_w, g);
        }
      }
      double sum = 0.0;
      for (int oy = y0; oy < y1; ++oy) {
        const int r0 = oy - y0;
        for (int m = 0; m < 5; ++m) {
          const double* rowp[kSsimWindow];
          for (int t = 0; t < kSsimWindow; ++t) rowp[t] = horiz.data() + (std::size_t(m) * max_rows + r0 + t) * out_w;
          filter_column(rowp, vert.data() + std::size_t(m) * out_w, out_w, g);
        }
        const double* mx = vert.data();
        const double* my = mx + out_w;
        const double* sxx = my + out_w;
        const double* syy = sxx + out_w;
        const double* sxy = syy + out_w;
        double row_sum = 0.0;
        for (int x = 0; x < out_w; ++x) row_sum += local_ssim(mx[x], my[x], sxx[x], syy[x], sxy[x], c1, c2);
        sum += row_sum;
      }
      block_sums[std::size_t(blk)] = sum;
    }
  }
  double total = 0.0;
  for (double s : block_sums) total += s;
  return total / (double(out_w) * double(out_h));
}

// compute_ssim of before: the mean of the channels' values.
double compute_ssim(const Image& x, const Image& y) {
  double sum = 0.0;
  for (int ch = 0; ch < x.channels; ++ch)
    sum += ssim_channel(x.samples.data() + ch, y.samples.data() + ch, x.width, x.height, x.channels, x.max_value());
  return sum / double(x.channels);
}

// compare_images of before (two passes per channel, double sums): the MSE.
double mse(const Image& a, const Image& b) {
  const int c = a.channels;
  const std::size_t n = std::size_t(a.width) * a.height;
  double total = 0.0;
  for (int ch = 0; ch < c; ++ch) {
    double s = 0.0;
#pragma omp parallel for reduction(+ : s) schedule(static)
    for (std::ptrdiff_t p = 0; p < std::ptrdiff_t(n); ++p) s += a.samples[std::size_t(p) * c + ch];
    const double mean = s / double(n);
    double sq = 0.0, cen = 0.0, mx = 0.0;
#pragma omp parallel for reduction(+ : sq, cen) reduction(max : mx) schedule(static)
    for (std::ptrdiff_t p = 0; p < std::ptrdiff_t(n); ++p) {
      const double x = a.samples[std::size_t(p) * c + ch];
      const double e = x - double(b.samples[std::size_t(p) * c + ch]);
      sq += e * e;
      cen += (x - mean) * (x - mean);
      mx = std::max(mx, std::abs(e));
    }
    total += sq;
    if (cen < 0 || mx < 0) total = -1;  // keep the loops' work observable
  }
  return total / (double(n) * c);
}
}  // namespace legacy

namespace {

using Clock = std::chrono::steady_clock;

// Approximately normal (sum of 4 uniforms, centred, sd 1), from a hash of i.
double noise(std::uint64_t i) {
  double s = 0;
  for (int k = 0; k < 4; ++k) s += double(splitmix64(i * 4 + std::uint64_t(k)) >> 11) / 9007199254740992.0;
  return (s - 2.0) * std::sqrt(3.0);
}

// A scene: gradient, waves, blocks, fine texture, sensor noise; the pair's
// second image adds noise of sd 2% of L.
void make_pair(int w, int h, int c, int bits, Image& x, Image& y) {
  const double top = bits == 16 ? 65535.0 : 255.0;
  x = make_image(w, h, c, bits);
  y = x;
  for (int r = 0; r < h; ++r)
    for (int col = 0; col < w; ++col)
      for (int ch = 0; ch < c; ++ch) {
        const std::uint64_t i = (std::uint64_t(r) * w + col) * c + ch;
        const double u = double(col) / w, v = double(r) / h;
        double s = 0.3 + 0.3 * v + 0.15 * u + 0.1 * std::sin(0.05 * col + 0.7 * ch) * std::cos(0.03 * r);
        s += 0.06 * std::sin(0.9 * col + 0.4 * r + ch);
        if ((col / 200 + r / 150) % 3 == 0) s += 0.15;
        s += 0.01 * noise(i);
        const double a = std::round(std::clamp(s, 0.0, 1.0) * top);
        const double b = std::round(std::clamp(a + 0.02 * top * noise(i + 0x5151515151ull), 0.0, top));
        x.samples[i] = std::uint16_t(a);
        y.samples[i] = std::uint16_t(b);
      }
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const std::size_t m = v.size() / 2;
  return v.size() % 2 ? v[m] : 0.5 * (v[m - 1] + v[m]);
}

template <class F>
double time_median(int repeat, F&& f) {
  std::vector<double> t;
  for (int i = 0; i < repeat; ++i) {
    const auto start = Clock::now();
    f();
    t.push_back(std::chrono::duration<double>(Clock::now() - start).count());
  }
  return median(t);
}

std::vector<int> int_list(const std::string& text) {
  std::vector<int> out;
  std::stringstream ss(text);
  std::string item;
  while (std::getline(ss, item, ',')) out.push_back(std::stoi(item));
  return out;
}

double accumulate(const Image& x, const Image& y, SsimPrecision p, int band) {
  SsimAccumulator acc(x.width, x.height, x.channels, x.max_value(), p);
  const std::size_t row = std::size_t(x.width) * x.channels;
  const int step = band > 0 ? band : x.height;
  for (int r = 0; r < x.height; r += step) {
    const int n = std::min(step, x.height - r);
    acc.add_rows(x.samples.data() + r * row, y.samples.data() + r * row, n);
  }
  return acc.result().ssim;
}

}  // namespace

int mode_ssim(int width, int height, int channels, const std::string& bits_list, const std::string& threads_list,
              int repeat, int band) {
  const double mp = double(width) * height / 1e6;
  for (int bits : int_list(bits_list)) {
    Image x, y;
    make_pair(width, height, channels, bits, x, y);
    for (int threads : int_list(threads_list)) {
      const ThreadGuard guard({.openmp = threads});
      double legacy_value = 0;
      const double t_legacy = time_median(repeat, [&] { legacy_value = legacy::compute_ssim(x, y); });
      struct Variant {
        const char* name;
        SsimPrecision p;
      };
      nlohmann::json base = {{"mode", "ssim"}, {"width", width}, {"height", height}, {"channels", channels},
                             {"bits", bits},   {"threads", threads}, {"band_rows", band}, {"megapixels", mp}};
      nlohmann::json j = base;
      j["implementation"] = "legacy double";
      j["seconds"] = t_legacy;
      j["ms_per_megapixel"] = 1e3 * t_legacy / mp;
      j["ssim"] = legacy_value;
      std::cout << j.dump() << std::endl;
      for (const Variant v : {Variant{"accumulator double", SsimPrecision::double_precision},
                              Variant{"accumulator single", SsimPrecision::single_precision}}) {
        double value = 0;
        const double t = time_median(repeat, [&] { value = accumulate(x, y, v.p, band); });
        j = base;
        j["implementation"] = v.name;
        j["seconds"] = t;
        j["ms_per_megapixel"] = 1e3 * t / mp;
        j["ssim"] = value;
        j["minus_legacy"] = value - legacy_value;
        j["speedup_over_legacy"] = t_legacy / t;
        std::cout << j.dump() << std::endl;
      }
      if (threads > 1) {
        // One accumulator per thread, several reconstructions at once (each
        // serial inside the parallel region): per-image cost = wall / threads.
        for (const SsimPrecision p : {SsimPrecision::double_precision, SsimPrecision::single_precision}) {
          std::vector<double> values(static_cast<std::size_t>(threads), 0.0);
          const double t = time_median(repeat, [&] {
#pragma omp parallel for schedule(static) num_threads(threads)
            for (int k = 0; k < threads; ++k) values[std::size_t(k)] = accumulate(x, y, p, band);
          });
          j = base;
          j["implementation"] = std::string("parallel_accumulators ") + ssim_precision_name(p);
          j["images"] = threads;
          j["seconds"] = t;
          j["ms_per_megapixel"] = 1e3 * t / (mp * threads);
          j["ssim"] = values[0];
          std::cout << j.dump() << std::endl;
        }
      }
      double legacy_mse = 0, mse = 0;
      const double tq_legacy = time_median(repeat, [&] { legacy_mse = legacy::mse(x, y); });
      const double tq = time_median(repeat, [&] { mse = compare_images(x, y).mse; });
      j = base;
      j["implementation"] = "quality (MSE/PSNR)";
      j["legacy_seconds"] = tq_legacy;
      j["seconds"] = tq;
      j["legacy_ms_per_megapixel"] = 1e3 * tq_legacy / mp;
      j["ms_per_megapixel"] = 1e3 * tq / mp;
      j["mse"] = mse;
      j["mse_minus_legacy"] = mse - legacy_mse;
      std::cout << j.dump() << std::endl;
    }
  }
  return 0;
}

}  // namespace pcasweep::bench
