#include "observe/bands.hpp"

#include <filesystem>

#include "core/error.hpp"

namespace pcasweep {

BandLayout::BandLayout(const std::vector<Image>& sources, const std::vector<std::string>& names)
    : bands_(Eigen::Index(sources.size())), names_(names) {
  const auto name_of = [&](std::size_t i) { return i < names.size() ? names[i] : "band " + std::to_string(i + 1); };
  if (sources.size() < 2) {
    throw usage_error((names.empty() ? std::string("bands layout") : names.front()) +
                      ": the bands layout needs at least 2 single-channel images (the bands), got " +
                      std::to_string(sources.size()));
  }
  const Image& first = sources.front();
  for (std::size_t i = 0; i < sources.size(); ++i) {
    const Image& im = sources[i];
    if (im.channels != 1) {
      throw data_error(name_of(i) + ": has " + std::to_string(im.channels) +
                       " channels; the bands layout takes single-channel (gray) images, one per band");
    }
    if (im.width != first.width || im.height != first.height || im.bit_depth != first.bit_depth) {
      throw data_error(name_of(i) + ": is " + std::to_string(im.width) + "x" + std::to_string(im.height) + ", " +
                       std::to_string(im.bit_depth) + "-bit but " + name_of(0) + " is " +
                       std::to_string(first.width) + "x" + std::to_string(first.height) + ", " +
                       std::to_string(first.bit_depth) + "-bit; bands must be co-registered images of one size");
    }
  }
  width_ = first.width;
  height_ = first.height;
  if (observation_count() < 2) {
    throw usage_error(name_of(0) + ": a 1-pixel image gives 1 observation; the bands layout needs at least 2 pixels");
  }
}

std::string BandLayout::describe() const {
  return std::to_string(bands_) + " bands of " + std::to_string(width_) + "x" + std::to_string(height_) +
         ", one observation per pixel";
}

std::vector<std::string> BandLayout::variable_names() const {
  std::vector<std::string> names;
  for (Eigen::Index b = 0; b < bands_; ++b)
    names.push_back(std::size_t(b) < names_.size() ? std::filesystem::path(names_[std::size_t(b)]).stem().string()
                                                   : "band" + std::to_string(b + 1));
  return names;
}

Eigen::MatrixXd BandLayout::observe(const std::vector<Image>& sources) const {
  if (Eigen::Index(sources.size()) != bands_) throw usage_error("bands layout built for another number of bands");
  const Eigen::Index n = observation_count();
  Eigen::MatrixXd X(n, bands_);
  for (Eigen::Index b = 0; b < bands_; ++b) {
    const Image& im = sources[std::size_t(b)];
    if (im.width != width_ || im.height != height_ || im.channels != 1) {
      throw usage_error("bands layout built for another image size");
    }
#pragma omp parallel for schedule(static)
    for (Eigen::Index p = 0; p < n; ++p) X(p, b) = im.samples[std::size_t(p)];
  }
  return X;
}

std::vector<Raster> BandLayout::fold(const Eigen::MatrixXd& X) const {
  if (X.rows() != observation_count() || X.cols() != bands_) {
    throw usage_error("fold: observation matrix has the wrong shape");
  }
  std::vector<Raster> out(static_cast<std::size_t>(bands_));
  for (Eigen::Index b = 0; b < bands_; ++b) {
    Raster& r = out[std::size_t(b)];
    r.width = width_;
    r.height = height_;
    r.channels = 1;
    r.samples.assign(X.col(b).data(), X.col(b).data() + X.rows());
  }
  return out;
}

}  // namespace pcasweep
