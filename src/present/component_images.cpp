#include "present/component_images.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "core/error.hpp"

namespace pcasweep {

namespace {
// Channels shown for an observation of `channels`: alpha dropped.
int shown_channels(int channels) { return channels == 2 ? 1 : channels == 4 ? 3 : channels; }

Eigen::Index sample_index(const Layout::ObservationShape& shape, int x, int y, int c) {
  return (Eigen::Index(y) * shape.width + x) * shape.channels + c;
}
}  // namespace

Image component_image(const Eigen::Ref<const Eigen::VectorXd>& v, const Layout::ObservationShape& shape, int scale) {
  if (shape.width <= 0 || v.size() != Eigen::Index(shape.width) * shape.height * shape.channels)
    throw usage_error("internal: a component of " + std::to_string(v.size()) + " values is not a " +
                      std::to_string(shape.width) + "x" + std::to_string(shape.height) + "x" +
                      std::to_string(shape.channels) + " image");
  const int keep = shown_channels(shape.channels);
  scale = std::max(1, scale);
  double peak = 0.0;
  for (int y = 0; y < shape.height; ++y)
    for (int x = 0; x < shape.width; ++x)
      for (int c = 0; c < keep; ++c) peak = std::max(peak, std::abs(v(sample_index(shape, x, y, c))));
  Image im = make_image(shape.width * scale, shape.height * scale, keep, 8);
  for (int y = 0; y < im.height; ++y)
    for (int x = 0; x < im.width; ++x)
      for (int c = 0; c < keep; ++c) {
        const double t = peak > 0 ? v(sample_index(shape, x / scale, y / scale, c)) / peak : 0.0;
        im.at(x, y, c) = std::uint16_t(std::lround(std::clamp(127.5 + 127.5 * t, 0.0, 255.0)));
      }
  return im;
}

std::vector<Image> component_images(const Eigen::MatrixXd& components, const Layout::ObservationShape& shape,
                                    int limit, int scale) {
  if (shape.width <= 0 || Eigen::Index(shape.width) * shape.height * shape.channels != components.rows()) return {};
  const int count = int(std::min<Eigen::Index>(limit, components.cols()));
  std::vector<Image> out;
  for (int i = 0; i < count; ++i) out.push_back(component_image(components.col(i), shape, scale));
  return out;
}

int component_display_scale(const Layout::ObservationShape& shape) {
  const int longer = std::max(1, std::max(shape.width, shape.height));
  return std::clamp((64 + longer - 1) / longer, 1, 8);
}

int write_component_images(const OutputFolder& folder, const Eigen::MatrixXd& components,
                           const Layout::ObservationShape& shape, int limit) {
  const auto images = component_images(components, shape, limit, component_display_scale(shape));
  if (images.empty()) return 0;
  const OutputFolder dir = folder.subfolder("components");
  for (std::size_t i = 0; i < images.size(); ++i) {
    char name[48];
    std::snprintf(name, sizeof name, "component_%02zu.png", i + 1);
    write_png(dir.path(name), images[i]);
  }
  return int(images.size());
}

}  // namespace pcasweep
