#include "observe/whole.hpp"

#include "core/error.hpp"

namespace pcasweep {

namespace {
std::string geometry_text(const Image& im) {
  return std::to_string(im.width) + "x" + std::to_string(im.height) + ", " + std::to_string(im.channels) +
         " channel(s), " + std::to_string(im.bit_depth) + "-bit";
}
}  // namespace

WholeLayout::WholeLayout(const std::vector<Image>& sources, const std::vector<std::string>& names)
    : count_(Eigen::Index(sources.size())) {
  if (sources.size() < 2) {
    throw usage_error((names.empty() ? std::string("whole layout") : names.front()) +
                      ": the whole layout needs at least 2 images (each image is one observation), got " +
                      std::to_string(sources.size()));
  }
  const Image& first = sources.front();
  for (std::size_t i = 1; i < sources.size(); ++i) {
    const Image& im = sources[i];
    if (im.width != first.width || im.height != first.height || im.channels != first.channels ||
        im.bit_depth != first.bit_depth) {
      throw data_error((i < names.size() ? names[i] : "image " + std::to_string(i + 1)) + ": is " +
                       geometry_text(im) + " but " + (names.empty() ? std::string("the first image") : names[0]) +
                       " is " + geometry_text(first) + "; the whole layout needs every image alike");
    }
  }
  width_ = first.width;
  height_ = first.height;
  channels_ = first.channels;
}

std::string WholeLayout::describe() const {
  return "whole images, " + std::to_string(width_) + "x" + std::to_string(height_) + "x" +
         std::to_string(channels_) + ", one observation per image";
}

std::vector<std::string> WholeLayout::variable_names() const {
  std::vector<std::string> names;
  names.reserve(std::size_t(dimension()));
  const auto channel_names = default_channel_names(channels_);
  for (int y = 0; y < height_; ++y)
    for (int x = 0; x < width_; ++x)
      for (int ch = 0; ch < channels_; ++ch)
        names.push_back("r" + std::to_string(y) + "c" + std::to_string(x) +
                        (channels_ > 1 ? ":" + channel_names[ch] : std::string()));
  return names;
}

Eigen::MatrixXd WholeLayout::observe(const std::vector<Image>& sources) const {
  if (Eigen::Index(sources.size()) != count_) throw usage_error("whole layout built for another number of images");
  const Eigen::Index d = dimension();
  Eigen::MatrixXd X(count_, d);
  for (Eigen::Index i = 0; i < count_; ++i) {
    const Image& im = sources[std::size_t(i)];
    if (im.width != width_ || im.height != height_ || im.channels != channels_) {
      throw usage_error("whole layout built for another image size");
    }
#pragma omp parallel for schedule(static)
    for (Eigen::Index j = 0; j < d; ++j) X(i, j) = im.samples[std::size_t(j)];
  }
  return X;
}

std::vector<Raster> WholeLayout::fold(const Eigen::MatrixXd& X) const {
  if (X.rows() != count_ || X.cols() != dimension()) throw usage_error("fold: observation matrix has the wrong shape");
  std::vector<Raster> out(static_cast<std::size_t>(count_));
  for (Eigen::Index i = 0; i < count_; ++i) {
    Raster& r = out[std::size_t(i)];
    r.width = width_;
    r.height = height_;
    r.channels = channels_;
    r.samples.resize(std::size_t(dimension()));
    for (Eigen::Index j = 0; j < dimension(); ++j) r.samples[std::size_t(j)] = X(i, j);
  }
  return out;
}

}  // namespace pcasweep
