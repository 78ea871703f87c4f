#include "measure/image_metrics.hpp"

#include <cmath>
#include <limits>

#include "core/error.hpp"

namespace pcasweep {

double psnr_from_mse(double mse, double data_range) {
  if (mse <= 0.0) return std::numeric_limits<double>::infinity();
  return 10.0 * std::log10(data_range * data_range / mse);
}

namespace {

// Running sums over any number of image pairs with the same channel count.
struct ErrorSums {
  explicit ErrorSums(int channels) : squared(channels, 0.0), centred(channels, 0.0) {}
  std::vector<double> squared;   // Σ(x − x̂)² per channel
  std::vector<double> centred;   // Σ(x − x̄)² per channel, x̄ the original's channel mean
  double max_abs = 0.0;
  std::size_t pixels = 0;

  void add(const Image& a, const Image& b) {
    if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth ||
        a.channels != int(squared.size())) {
      throw usage_error("cannot compare images of different size, channels or bit depth");
    }
    const int c = a.channels;
    const std::size_t n = std::size_t(a.width) * a.height;
    // Two passes per channel: the original's mean, then the squared sums
    // (no cancellation from Σx² − (Σx)²/n).
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
      squared[ch] += sq;
      centred[ch] += cen;
      max_abs = std::max(max_abs, mx);
    }
    pixels += n;
  }

  ImageQuality result(double data_range) const {
    ImageQuality q;
    double total_sq = 0.0, total_centred = 0.0;
    for (std::size_t ch = 0; ch < squared.size(); ++ch) {
      const double m = pixels ? squared[ch] / double(pixels) : 0.0;
      q.channel_mse.push_back(m);
      q.channel_psnr_db.push_back(psnr_from_mse(m, data_range));
      total_sq += squared[ch];
      total_centred += centred[ch];
    }
    const double count = double(pixels) * double(squared.size());
    q.mse = count > 0 ? total_sq / count : 0.0;
    q.rmse = std::sqrt(q.mse);
    q.psnr_db = psnr_from_mse(q.mse, data_range);
    q.max_abs_error = max_abs;
    q.relative_error =
        total_centred > 0.0 ? std::sqrt(total_sq / total_centred) : (total_sq > 0.0 ? 1.0 : 0.0);
    return q;
  }
};

}  // namespace

ImageQuality compare_images(const Image& a, const Image& b) {
  ErrorSums sums(a.channels);
  sums.add(a, b);
  return sums.result(a.max_value());
}

ImageQuality compare_image_sets(const std::vector<Image>& originals, const std::vector<Image>& reconstructions) {
  if (originals.empty() || originals.size() != reconstructions.size()) {
    throw usage_error("cannot compare image sets of different lengths");
  }
  ErrorSums sums(originals.front().channels);
  for (std::size_t i = 0; i < originals.size(); ++i) sums.add(originals[i], reconstructions[i]);
  return sums.result(originals.front().max_value());
}

}  // namespace pcasweep
