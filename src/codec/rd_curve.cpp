#include "codec/rd_curve.hpp"

#include <algorithm>
#include <limits>

#include "codec/gaussian_rd.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "io/jpeg.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"

namespace pcasweep {

RdPoint jpeg_rd_point(const Image& image, int quality, const std::string& name, std::string& bytes) {
  bytes = encode_jpeg(image, quality);
  JpegRowReader reader(bytes, name + " (JPEG q" + std::to_string(quality) + ")");
  if (reader.width() != image.width || reader.height() != image.height || reader.channels() != image.channels)
    throw data_error(name + ": the JPEG decoder returned another geometry");
  QualityAccumulator quality_acc(image.channels, image.bit_depth);
  SsimAccumulator ssim(image.width, image.height, image.channels, image.max_value());
  const std::size_t row = std::size_t(image.width) * image.channels;
  constexpr int kRows = 64;
  std::vector<std::uint16_t> decoded(row * kRows);
  for (int y = 0; y < image.height;) {
    const int got = reader.read_rows(decoded.data(), kRows);
    if (got <= 0) throw data_error(name + ": the JPEG decoder stopped early");
    if (image.bit_depth == 16)
      for (std::size_t i = 0; i < row * std::size_t(got); ++i) decoded[i] = std::uint16_t(decoded[i] * 257u);
    const std::uint16_t* original = image.samples.data() + row * std::size_t(y);
    quality_acc.add(original, decoded.data(), row * std::size_t(got));
    ssim.add_rows(original, decoded.data(), got);
    y += got;
  }
  RdPoint p;
  p.method = "jpeg";
  p.quality = quality;
  p.bytes = std::int64_t(bytes.size());
  p.bits_per_pixel = 8.0 * double(bytes.size()) / pixel_count(image);
  p.psnr_db = quality_acc.result().psnr_db;
  p.ssim = ssim.result().ssim;
  return p;
}

int quality_for_rate(const PatchLayout& layout, int bit_depth, const DecoderBasis& basis, int k, double bpp) {
  const double per_obs_to_bpp = double(layout.observation_count()) / (double(layout.width()) * layout.height());
  int best = 50;
  double best_gap = std::numeric_limits<double>::infinity();
  for (int q = 1; q <= 100; ++q) {
    const double theta = water_level_for_psnr(quality_psnr_db(q), bit_depth == 16 ? 65535.0 : 255.0);
    const double model = gaussian_rate_bits(basis.power.head(k), theta) * per_obs_to_bpp;
    const double gap = std::abs(std::log(std::max(model, 1e-9)) - std::log(bpp));
    if (gap < best_gap) {
      best_gap = gap;
      best = q;
    }
  }
  return best;
}

std::vector<RdPoint> gaussian_bound_points(const Eigen::VectorXd& eigenvalues, double total_variance,
                                           Eigen::Index dimension, double max_value, double observations,
                                           double pixels) {
  std::vector<RdPoint> points;
  for (const GaussianRdPoint& g : gaussian_rd_curve(eigenvalues, total_variance, dimension, max_value)) {
    RdPoint p;
    p.method = "gaussian_bound";
    p.bits_per_pixel = g.bits_per_observation * observations / pixels;
    p.psnr_db = g.psnr_db;
    p.coded = g.coded;
    points.push_back(p);
  }
  return points;
}

bool curve_brackets(const std::vector<RdPoint>& points, const std::string& method, double bpp) {
  bool below = false, above = false;
  for (const auto& p : points)
    if (p.method == method) {
      below = below || p.bits_per_pixel <= bpp;
      above = above || p.bits_per_pixel >= bpp;
    }
  return below && above;
}

void sort_curves(std::vector<RdPoint>& points) {
  const auto rank = [](const std::string& m) { return m == "pca" ? 0 : m == "dct" ? 1 : m == "jpeg" ? 2 : 3; };
  std::stable_sort(points.begin(), points.end(), [&](const RdPoint& x, const RdPoint& y) {
    return rank(x.method) != rank(y.method) ? rank(x.method) < rank(y.method) : x.bits_per_pixel < y.bits_per_pixel;
  });
}

double psnr_at_rate(const std::vector<RdPoint>& points, const std::string& method, double bpp, int* coded) {
  std::vector<const RdPoint*> curve;
  for (const auto& p : points)
    if (p.method == method && std::isfinite(p.psnr_db)) curve.push_back(&p);
  std::sort(curve.begin(), curve.end(), [](auto* x, auto* y) { return x->bits_per_pixel < y->bits_per_pixel; });
  for (std::size_t i = 1; i < curve.size(); ++i) {
    const RdPoint &lo = *curve[i - 1], &hi = *curve[i];
    if (lo.bits_per_pixel <= bpp && bpp <= hi.bits_per_pixel) {
      const double span = hi.bits_per_pixel - lo.bits_per_pixel;
      const double t = span > 0 ? (bpp - lo.bits_per_pixel) / span : 0.0;
      if (coded) *coded = t < 0.5 ? lo.coded : hi.coded;
      return lo.psnr_db + t * (hi.psnr_db - lo.psnr_db);
    }
  }
  return NAN;
}

}  // namespace pcasweep
