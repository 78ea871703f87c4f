#include "observe/patches.hpp"

#include <charconv>

#include <omp.h>

#include "core/error.hpp"
#include "observe/patch_folder.hpp"

namespace pcasweep {

void parse_size_pair(const std::string& text, const std::string& option, int& rows, int& cols) {
  auto parse_int = [&](std::string_view s, int& out) {
    const char* end = s.data() + s.size();
    auto [ptr, ec] = std::from_chars(s.data(), end, out);
    return ec == std::errc() && ptr == end && out >= 1;
  };
  const auto x = text.find('x');
  bool ok;
  if (x == std::string::npos) {
    ok = parse_int(text, rows);
    cols = rows;
  } else {
    ok = parse_int(std::string_view(text).substr(0, x), rows) &&
         parse_int(std::string_view(text).substr(x + 1), cols);
  }
  if (!ok) throw usage_error(option + " takes a positive size like 8 or 8x16 (rows x columns), not '" + text + "'");
}

int reflect_index(long p, int n) {
  if (n == 1) return 0;
  const long period = 2L * (n - 1);
  long m = p % period;
  if (m < 0) m += period;
  return static_cast<int>(m < n ? m : period - m);
}

namespace {
// Smallest padded length >= n covered exactly by windows of `size` every `stride`.
int covered_length(int n, int size, int stride) {
  if (n <= size) return size;
  const int steps = (n - size + stride - 1) / stride;
  return size + steps * stride;
}
}  // namespace

PatchLayout::PatchLayout(const Image& geometry, const PatchOptions& options, const std::string& source_name)
    : options_(options), width_(geometry.width), height_(geometry.height), channels_(geometry.channels) {
  if (options_.patch_height < 1 || options_.patch_width < 1) throw usage_error("--patch must be at least 1x1");
  if (options_.stride_y == 0) options_.stride_y = options_.patch_height;
  if (options_.stride_x == 0) options_.stride_x = options_.patch_width;
  if (options_.stride_y < 1 || options_.stride_x < 1) throw usage_error("--stride must be at least 1");
  if (options_.stride_y > options_.patch_height || options_.stride_x > options_.patch_width) {
    throw usage_error("--stride larger than --patch would skip pixels; use a stride no larger than the patch");
  }
  if (options_.patch_height > height_ || options_.patch_width > width_) {
    throw usage_error(source_name + ": patch " + std::to_string(options_.patch_height) + "x" +
                      std::to_string(options_.patch_width) + " is larger than the image (" +
                      std::to_string(height_) + " rows x " + std::to_string(width_) + " columns)");
  }
  padded_h_ = covered_length(height_, options_.patch_height, options_.stride_y);
  padded_w_ = covered_length(width_, options_.patch_width, options_.stride_x);
  ny_ = (padded_h_ - options_.patch_height) / options_.stride_y + 1;
  nx_ = (padded_w_ - options_.patch_width) / options_.stride_x + 1;
}

std::string PatchLayout::describe() const {
  return std::to_string(options_.patch_height) + "x" + std::to_string(options_.patch_width) + " patches, stride " +
         std::to_string(options_.stride_y) + "x" + std::to_string(options_.stride_x) + ", " +
         (options_.colour == ColourMode::joint ? "joint colour" : "channels share one basis");
}

Eigen::Index PatchLayout::observation_count() const {
  const Eigen::Index patches = Eigen::Index(nx_) * ny_;
  return options_.colour == ColourMode::joint ? patches : patches * channels_;
}

Eigen::Index PatchLayout::dimension() const {
  const Eigen::Index area = Eigen::Index(options_.patch_height) * options_.patch_width;
  return options_.colour == ColourMode::joint ? area * channels_ : area;
}

std::vector<std::string> PatchLayout::variable_names() const {
  std::vector<std::string> names;
  const auto channel_names = default_channel_names(channels_);
  for (int r = 0; r < options_.patch_height; ++r)
    for (int c = 0; c < options_.patch_width; ++c) {
      const std::string cell = "r" + std::to_string(r) + "c" + std::to_string(c);
      if (options_.colour == ColourMode::joint && channels_ > 1) {
        for (int ch = 0; ch < channels_; ++ch) names.push_back(cell + ":" + channel_names[ch]);
      } else {
        names.push_back(cell);
      }
    }
  return names;
}

Eigen::MatrixXd PatchLayout::observe(const std::vector<Image>& sources) const {
  if (sources.size() != 1) throw usage_error("the patches layout takes one image at a time");
  const Image& image = sources.front();
  if (image.width != width_ || image.height != height_ || image.channels != channels_) {
    throw usage_error("patch layout built for another image size");
  }
  const int ph = options_.patch_height, pw = options_.patch_width;
  const bool joint = options_.colour == ColourMode::joint;
  const Eigen::Index patches = Eigen::Index(nx_) * ny_;
  Eigen::MatrixXd X(observation_count(), dimension());
#pragma omp parallel for schedule(static)
  for (int py = 0; py < ny_; ++py) {
    for (int px = 0; px < nx_; ++px) {
      const Eigen::Index patch = Eigen::Index(py) * nx_ + px;
      for (int r = 0; r < ph; ++r) {
        const int y = reflect_index(long(py) * options_.stride_y + r, height_);
        for (int c = 0; c < pw; ++c) {
          const int x = reflect_index(long(px) * options_.stride_x + c, width_);
          const Eigen::Index cell = Eigen::Index(r) * pw + c;
          for (int ch = 0; ch < channels_; ++ch) {
            const double v = image.at(x, y, ch);
            if (joint) X(patch, cell * channels_ + ch) = v;
            else X(Eigen::Index(ch) * patches + patch, cell) = v;
          }
        }
      }
    }
  }
  return X;
}

void PatchLayout::observe_band(const Image& image, int py0, int py1, Band& band) const {
  if (image.width != width_ || image.height != height_ || image.channels != channels_) {
    throw usage_error("patch layout built for another image size");
  }
  if (py0 < 0 || py1 > ny_ || py0 >= py1) throw usage_error("observe_band: patch rows out of range");
  const int ph = options_.patch_height, pw = options_.patch_width, rows = py1 - py0;
  const int planes = this->planes();
  const Eigen::Index d = dimension();
  band.resize(Eigen::Index(rows) * nx_ * planes, d);
  // Columns of each patch cell, mirror-reflected once per band (they repeat every patch row).
  std::vector<int> xs(std::size_t(nx_) * pw);
  for (int px = 0; px < nx_; ++px)
    for (int c = 0; c < pw; ++c) xs[std::size_t(px) * pw + c] = reflect_index(long(px) * options_.stride_x + c, width_);
#pragma omp parallel for schedule(static) if (!omp_in_parallel() && rows * nx_ >= 64)
  for (int py = py0; py < py1; ++py) {
    for (int r = 0; r < ph; ++r) {
      const int y = reflect_index(long(py) * options_.stride_y + r, height_);
      const std::uint16_t* row = image.samples.data() + std::size_t(y) * width_ * channels_;
      for (int px = 0; px < nx_; ++px) {
        const int* xc = xs.data() + std::size_t(px) * pw;
        if (planes == 1) {
          double* out = band.row(band_row(0, py, px, py0, rows)).data() + std::size_t(r) * pw * channels_;
          for (int c = 0; c < pw; ++c) {
            const std::uint16_t* s = row + std::size_t(xc[c]) * channels_;
            for (int ch = 0; ch < channels_; ++ch) *out++ = s[ch];
          }
        } else {
          for (int ch = 0; ch < channels_; ++ch) {
            double* out = band.row(band_row(ch, py, px, py0, rows)).data() + std::size_t(r) * pw;
            for (int c = 0; c < pw; ++c) out[c] = row[std::size_t(xc[c]) * channels_ + ch];
          }
        }
      }
    }
  }
}

std::vector<Raster> PatchLayout::fold(const Eigen::MatrixXd& X) const {
  if (X.rows() != observation_count() || X.cols() != dimension()) {
    throw usage_error("fold: observation matrix has the wrong shape");
  }
  // One band holding every patch row, folded by PatchFolder: the arithmetic
  // the streaming sweep uses, so both give the same samples.
  PatchLayout::Band band(X.rows(), X.cols());
  const int planes = this->planes();
  for (int plane = 0; plane < planes; ++plane)
    for (int py = 0; py < ny_; ++py)
      for (int px = 0; px < nx_; ++px)
        band.row(band_row(plane, py, px, 0, ny_)) = X.row(observation_row(plane, py, px));
  PatchFolder folder(*this);
  folder.add(0, ny_, band);
  Raster out;
  out.width = width_;
  out.height = height_;
  out.channels = channels_;
  out.samples.resize(std::size_t(width_) * height_ * channels_);
  folder.take(out.samples.data(), folder.ready_rows());
  return {out};
}

}  // namespace pcasweep
