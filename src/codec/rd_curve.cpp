#include "codec/rd_curve.hpp"

#include <algorithm>
#include <chrono>
#include <exception>
#include <limits>

#include "codec/gaussian_rd.hpp"
#include "codec/patch_sweep.hpp"
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

namespace {

RdPoint coded_point(const std::string& method, int quality, const PatchSweepResult& r, const Image& image) {
  RdPoint p;
  p.method = method;
  p.quality = quality;
  p.coded = r.encoded.coded;
  p.bytes = std::int64_t(r.encoded.bytes.size());
  p.bits_per_pixel = 8.0 * double(p.bytes) / pixel_count(image);
  p.psnr_db = r.quality.psnr_db;
  p.ssim = r.ssim.ssim;
  return p;
}

using Clock = std::chrono::steady_clock;
double seconds_since(Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); }

const char* const kCodedMethod[2] = {"pca", "dct"};

}  // namespace

CodedCurves::CodedCurves(const PatchLayout& layout, const Image& image, const Basis& basis, const PatchMoments* moments,
                         const std::string& name, int zstd_level)
    : layout_(layout), image_(image), name_(name), zstd_level_(zstd_level),
      k_{int(basis.rank()), int(basis.dimension())} {
  PatchMoments computed;
  if (!moments) computed = patch_moments(layout_, image_);
  BasisChoice pca;
  pca.basis = &basis;
  BasisChoice dct;
  dct.kind = BasisKind::dct;
  bases_[0] = decoder_basis(layout_, image_.bit_depth, moments ? *moments : computed, pca, name_);
  bases_[1] = decoder_basis(layout_, image_.bit_depth, moments ? *moments : computed, dct, name_);
}

// For each method, the --quality nearest each target rate, in increasing quality, once each.
Wanted CodedCurves::first_pass(const RdSettings& settings) const {
  Wanted wanted;
  for (int method = 0; method < 2; ++method) {
    std::vector<int> qs;
    for (double bpp : settings.target_bits_per_pixel)
      qs.push_back(quality_for_rate(layout_, image_.bit_depth, bases_[method], k_[method], bpp));
    std::sort(qs.begin(), qs.end());
    qs.erase(std::unique(qs.begin(), qs.end()), qs.end());
    for (int q : qs) wanted.emplace_back(method, q);
  }
  return wanted;
}

// For each method, one point 15 qualities beyond its lowest (highest) when a reported
// rate lies below (above) the whole measured curve.
Wanted CodedCurves::refinement(const std::vector<RdPoint>& points, const RdSettings& settings) const {
  Wanted wanted;
  for (int method = 0; method < 2; ++method) {
    const std::string name = kCodedMethod[method];
    int lowest = 101, highest = 0;
    for (const auto& p : points)
      if (p.method == name) lowest = std::min(lowest, p.quality), highest = std::max(highest, p.quality);
    bool need_low = false, need_high = false;
    for (double bpp : settings.reported_bits_per_pixel) {
      if (curve_brackets(points, name, bpp)) continue;
      bool any_below = false;
      for (const auto& p : points) any_below = any_below || (p.method == name && p.bits_per_pixel <= bpp);
      (any_below ? need_high : need_low) = true;
    }
    if (need_low && lowest > 1) wanted.emplace_back(method, std::max(1, lowest - 15));
    if (need_high && highest < 100) wanted.emplace_back(method, std::min(100, highest + 15));
  }
  return wanted;
}

// Codes, decodes and measures every wanted point in one pass; appends the points and
// the pass's wall time to `cost`.
void CodedCurves::measure(const Wanted& wanted, std::vector<RdPoint>& points, RdCost& cost) const {
  std::vector<CodingPlan> plans;
  plans.reserve(wanted.size());  // the sweep points keep pointers into it
  std::vector<PatchSweepPoint> sweep_points;
  for (const auto& [method, q] : wanted) {
    CodecSettings s;
    s.k = k_[method];
    s.quality = q;
    s.zstd_level = zstd_level_;
    plans.push_back(plan_coding(layout_, image_.bit_depth, bases_[method], s, name_));
    PatchSweepPoint p;
    p.k = s.k;
    p.plan = &plans.back();
    p.decoder_basis = method;
    sweep_points.push_back(p);
  }
  PatchSweepInputs in;
  in.image = &image_;
  in.layout = &layout_;
  in.decoder_bases = {&bases_[0], &bases_[1]};
  in.codec.zstd_level = zstd_level_;
  const Clock::time_point start = Clock::now();
  const auto results = run_patch_sweep(in, sweep_points);
  cost.coded_pass_seconds.push_back(seconds_since(start));
  cost.coded_pass_points.push_back(int(sweep_points.size()));
  for (std::size_t i = 0; i < wanted.size(); ++i)
    points.push_back(coded_point(kCodedMethod[wanted[i].first], wanted[i].second, results[i], image_));
}

void measure_jpeg(const Image& image, const std::string& name, const std::vector<int>& qs,
                  std::vector<RdPoint>& points, std::vector<RdJpegFile>& files, RdCost& cost) {
  std::vector<RdPoint> jpeg(qs.size());
  std::vector<std::string> bytes(qs.size());
  std::exception_ptr failure;
  const Clock::time_point start = Clock::now();
#pragma omp parallel for schedule(dynamic, 1)
  for (std::ptrdiff_t i = 0; i < std::ptrdiff_t(qs.size()); ++i) {
    try {
      jpeg[std::size_t(i)] = jpeg_rd_point(image, qs[std::size_t(i)], name, bytes[std::size_t(i)]);
    } catch (...) {
#pragma omp critical
      if (!failure) failure = std::current_exception();
    }
  }
  if (failure) std::rethrow_exception(failure);
  cost.jpeg_seconds = seconds_since(start);
  cost.jpeg_points = int(qs.size());
  for (std::size_t i = 0; i < qs.size(); ++i) {
    points.push_back(std::move(jpeg[i]));
    files.push_back({qs[i], std::move(bytes[i])});
  }
}

}  // namespace pcasweep
