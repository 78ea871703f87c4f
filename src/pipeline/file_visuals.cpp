#include "pipeline/file_visuals.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>

#include "core/error.hpp"
#include "measure/image_metrics.hpp"
#include "codec/patch_sweep.hpp"

namespace pcasweep {

namespace {

// Block means of the written rows and of their error, for the previews.
class PreviewSink : public RowSink {
 public:
  PreviewSink(const Image& like, int scale)
      : width_(like.width), channels_(like.channels), scale_(scale), pw_((like.width + scale - 1) / scale),
        ph_((like.height + scale - 1) / scale), recon_(std::size_t(pw_) * ph_ * channels_, 0.0),
        error_(std::size_t(pw_) * ph_, 0.0), count_(std::size_t(pw_) * ph_, 0.0) {}
  void add(const std::uint16_t* original, const std::uint16_t* written, int y0, int count) override {
    for (int r = 0; r < count; ++r) {
      const std::size_t py = std::size_t((y0 + r) / scale_);
      const std::uint16_t* o = original + std::size_t(r) * width_ * channels_;
      const std::uint16_t* w = written + std::size_t(r) * width_ * channels_;
      for (int x = 0; x < width_; ++x) {
        const std::size_t cell = py * pw_ + std::size_t(x / scale_);
        double e = 0.0;
        for (int ch = 0; ch < channels_; ++ch) {
          const std::size_t i = std::size_t(x) * channels_ + ch;
          recon_[cell * channels_ + ch] += w[i];
          e += std::abs(double(o[i]) - double(w[i]));
        }
        error_[cell] += e / channels_;
        count_[cell] += 1.0;
      }
    }
  }
  Image reconstruction(int bit_depth) const { return to_image(recon_, bit_depth); }
  std::vector<double> error() const {
    std::vector<double> out(error_.size());
    for (std::size_t i = 0; i < out.size(); ++i) out[i] = count_[i] > 0 ? error_[i] / count_[i] : 0.0;
    return out;
  }
  // Block means of `sums` as an 8-bit image (16-bit samples scaled by 1/257).
  Image to_image(const std::vector<double>& sums, int bit_depth) const {
    Image img = make_image(pw_, ph_, channels_, 8);
    const double to8 = bit_depth == 16 ? 1.0 / 257.0 : 1.0;
    for (std::size_t cell = 0; cell < count_.size(); ++cell)
      for (int ch = 0; ch < channels_; ++ch) {
        const double v = count_[cell] > 0 ? sums[cell * channels_ + ch] / count_[cell] * to8 : 0.0;
        img.samples[cell * channels_ + ch] = std::uint16_t(std::lround(std::clamp(v, 0.0, 255.0)));
      }
    return img;
  }
  int preview_width() const { return pw_; }
  int preview_height() const { return ph_; }

 private:
  int width_, channels_, scale_, pw_, ph_;
  std::vector<double> recon_, error_, count_;
};

// Squared error per tile of a grid of whole tiles.
class TileErrorSink : public RowSink {
 public:
  TileErrorSink(const Image& like, int tile_w, int tile_h)
      : width_(like.width), channels_(like.channels), tw_(tile_w), th_(tile_h), nx_(like.width / tile_w),
        ny_(like.height / tile_h), sse_(std::size_t(nx_) * ny_, 0.0) {}
  void add(const std::uint16_t* original, const std::uint16_t* written, int y0, int count) override {
    for (int r = 0; r < count; ++r) {
      const int ty = (y0 + r) / th_;
      if (ty >= ny_) continue;
      const std::size_t base = std::size_t(r) * width_ * channels_;
      for (int tx = 0; tx < nx_; ++tx) {
        double s = 0.0;
        for (std::size_t i = std::size_t(tx) * tw_ * channels_; i < std::size_t(tx + 1) * tw_ * channels_; ++i) {
          const double e = double(original[base + i]) - double(written[base + i]);
          s += e * e;
        }
        sse_[std::size_t(ty) * nx_ + tx] += s;
      }
    }
  }
  // The tile with the largest squared error (first on a tie).
  std::pair<int, int> worst() const {
    const std::size_t at = std::size_t(std::max_element(sse_.begin(), sse_.end()) - sse_.begin());
    return {int(at % std::size_t(nx_)) * tw_, int(at / std::size_t(nx_)) * th_};
  }

 private:
  int width_, channels_, tw_, th_, nx_, ny_;
  std::vector<double> sse_;
};

// The whole tile with the largest gradient energy of the original.
std::pair<int, int> finest_detail(const Image& image, int tw, int th) {
  const int nx = image.width / tw, ny = image.height / th, c = image.channels;
  std::vector<double> energy(std::size_t(nx) * ny, 0.0);
#pragma omp parallel for schedule(static)
  for (int t = 0; t < nx * ny; ++t) {
    const int x0 = (t % nx) * tw, y0 = (t / nx) * th;
    double e = 0.0;
    for (int y = y0; y < y0 + th; ++y)
      for (int x = x0; x < x0 + tw; ++x)
        for (int ch = 0; ch < c; ++ch) {
          const double v = image.at(x, y, ch);
          if (x + 1 < x0 + tw) e += (image.at(x + 1, y, ch) - v) * (image.at(x + 1, y, ch) - v);
          if (y + 1 < y0 + th) e += (image.at(x, y + 1, ch) - v) * (image.at(x, y + 1, ch) - v);
        }
    energy[std::size_t(t)] = e;
  }
  const std::size_t at = std::size_t(std::max_element(energy.begin(), energy.end()) - energy.begin());
  return {int(at % std::size_t(nx)) * tw, int(at / std::size_t(nx)) * th};
}

Image crop_of(const Image& image, const PatchCrop& c) {
  Image out = make_image(c.width, c.height, image.channels, image.bit_depth);
  out.channel_names = image.channel_names;
  const std::size_t row = std::size_t(c.width) * image.channels;
  for (int y = 0; y < c.height; ++y)
    std::memcpy(out.samples.data() + std::size_t(y) * row,
                image.samples.data() + (std::size_t(c.y + y) * image.width + c.x) * image.channels,
                row * sizeof(std::uint16_t));
  return out;
}

// The crop's reconstruction at k, rounded and clipped like the written image.
Image crop_reconstruction(const ImageAnalysis& a, const PatchCrop& c, const RowBlock& observations, int k) {
  const PatchLayout& layout = *a.patches();
  const Eigen::MatrixXd V = a.basis.components.leftCols(k);
  RowBlock coefficients = observations * V;
  coefficients.rowwise() -= a.basis.mean.transpose() * V;
  RowBlock xhat = coefficients * V.transpose();
  xhat.rowwise() += a.basis.mean.transpose();
  const std::vector<double> folded = fold_crop(layout, c, xhat);
  Image out = make_image(c.width, c.height, layout.channels(), a.image().bit_depth);
  out.channel_names = a.image().channel_names;
  const double top = a.image().max_value();
  for (std::size_t i = 0; i < folded.size(); ++i) {
    double v = std::round(folded[i]);
    v = std::isnan(v) || v < 0.0 ? 0.0 : std::min(v, top);
    out.samples[i] = std::uint16_t(v);
  }
  return out;
}

std::string float32_bytes(const double* values, std::size_t count) {
  std::string out(count * 4, '\0');
  for (std::size_t i = 0; i < count; ++i) {
    const float f = float(values[i]);
    std::uint32_t u;
    std::memcpy(&u, &f, 4);
    for (int b = 0; b < 4; ++b) out[i * 4 + b] = char((u >> (8 * b)) & 0xff);  // little-endian
  }
  return out;
}

VisualCrop make_crop(const ImageAnalysis& a, const std::string& label, int x, int y, int w, int h, int k) {
  VisualCrop v;
  v.label = label;
  v.crop = patch_crop(*a.patches(), x, y, w, h);
  v.original = crop_of(a.image(), v.crop);
  v.reconstruction = crop_reconstruction(a, v.crop, observe_crop(*a.patches(), a.image(), v.crop), k);
  const ImageQuality q = compare_images(v.original, v.reconstruction);
  v.psnr_db = q.psnr_db;
  v.max_error = 0.0;
  v.error.resize(std::size_t(v.crop.width) * v.crop.height);
  const int c = v.original.channels;
  for (std::size_t p = 0; p < v.error.size(); ++p) {
    double e = 0.0;
    for (int ch = 0; ch < c; ++ch)
      e += std::abs(double(v.original.samples[p * c + ch]) - double(v.reconstruction.samples[p * c + ch]));
    v.error[p] = e / c;
    v.max_error = std::max(v.max_error, v.error[p]);
  }
  return v;
}

// One pass at k: the whole image's figures and the previews into `out`.
// Returns the top-left corner of the tile (tw×th) with the largest squared error.
std::pair<int, int> sweep_at_k(const ImageAnalysis& a, int tw, int th, FileVisuals& out) {
  const Image& image = a.image();
  PreviewSink preview(image, out.preview_scale);
  TileErrorSink tiles(image, tw, th);
  PatchSweepInputs in;
  in.image = &image;
  in.layout = a.patches();
  in.basis = &a.basis;
  PatchSweepPoint point;
  point.k = out.k;
  point.sinks = {&preview, &tiles};
  const PatchSweepResult result = run_patch_sweep(in, {point}).front();
  out.quality = result.quality;
  out.ssim = result.ssim.ssim;
  out.preview_reconstruction = preview.reconstruction(image.bit_depth);
  out.preview_error = preview.error();
  out.preview_error_max = out.preview_error.empty() ? 0.0 : *std::max_element(out.preview_error.begin(), out.preview_error.end());
  PreviewSink original(image, out.preview_scale);
  original.add(image.samples.data(), image.samples.data(), 0, image.height);
  out.preview_original = original.reconstruction(image.bit_depth);
  return tiles.worst();
}

// The slider over the crop at (x, y): the data to rebuild any k live, or
// the crop's reconstruction at each of viewer_ks (stepped). Throws Error(usage).
CropViewer crop_viewer(const ImageAnalysis& a, int x, int y, int w, int h, const std::vector<int>& viewer_ks,
                       const VisualSettings& settings) {
  const PatchLayout& layout = *a.patches();
  CropViewer v;
  v.crop = patch_crop(layout, x, y, w, h);
  v.original = crop_of(a.image(), v.crop);
  const RowBlock observations = observe_crop(layout, a.image(), v.crop);
  v.rank = int(a.basis.rank());
  v.dimension = int(a.basis.dimension());
  v.observations = int(observations.rows());
  v.live = a.basis.dimension() <= settings.live_max_dimension;
  if (v.live) {
    v.mean_f32 = float32_bytes(a.basis.mean.data(), std::size_t(a.basis.mean.size()));
    // components r×d component-major = the column-major d×r matrix as stored
    v.components_f32 = float32_bytes(a.basis.components.data(), std::size_t(a.basis.components.size()));
    RowBlock coefficients = observations * a.basis.components;
    coefficients.rowwise() -= a.basis.mean.transpose() * a.basis.components;
    v.coefficients_f32 = float32_bytes(coefficients.data(), std::size_t(coefficients.size()));
    return v;
  }
  for (int kk : viewer_ks) {
    if (kk < 1 || kk > a.basis.rank()) throw usage_error("report: viewer k out of range");
    v.ks.push_back(kk);
    v.images.push_back(crop_reconstruction(a, v.crop, observations, kk));
    v.psnr_db.push_back(compare_images(v.original, v.images.back()).psnr_db);
  }
  return v;
}

}  // namespace

FileVisuals file_visuals(const ImageAnalysis& a, int k, const std::vector<int>& viewer_ks, const VisualSettings& settings) {
  const PatchLayout* layout = a.patches();
  if (!layout || a.sources.size() != 1) throw usage_error("the report's pictures need one image cut into patches");
  if (k < 1 || k > a.basis.rank()) throw usage_error("report: k = " + std::to_string(k) + " is outside 1.." + std::to_string(a.basis.rank()));
  const Image& image = a.image();
  FileVisuals out;
  out.k = k;
  out.preview_scale = std::max(1, (std::max(image.width, image.height) + settings.preview_side - 1) / settings.preview_side);
  const int tw = std::min(settings.crop_side, image.width), th = std::min(settings.crop_side, image.height);
  const auto [ex, ey] = sweep_at_k(a, tw, th, out);

  // 1:1 crops: the finest detail and the largest error (one crop when they coincide).
  const auto [dx, dy] = finest_detail(image, tw, th);
  out.crops.push_back(make_crop(a, "largest error at k = " + std::to_string(k), ex, ey, tw, th, k));
  if (dx != ex || dy != ey) out.crops.push_back(make_crop(a, "finest detail", dx, dy, tw, th, k));
  else out.crops.front().label += ", also the finest detail";
  out.viewer = crop_viewer(a, dx, dy, tw, th, viewer_ks, settings);
  return out;
}

}  // namespace pcasweep
