#include "codec/dct.hpp"

#include <cmath>
#include <numbers>

namespace pcasweep {

Eigen::MatrixXd dct_ii_matrix(int n) {
  Eigen::MatrixXd c(n, n);
  for (int u = 0; u < n; ++u) {
    const double a = u == 0 ? std::sqrt(1.0 / n) : std::sqrt(2.0 / n);
    for (int j = 0; j < n; ++j) c(j, u) = a * std::cos(std::numbers::pi * (2.0 * j + 1.0) * u / (2.0 * n));
  }
  return c;
}

Eigen::MatrixXd patch_dct_basis(int patch_height, int patch_width, int channels) {
  const Eigen::MatrixXd cy = dct_ii_matrix(patch_height), cx = dct_ii_matrix(patch_width);
  const Eigen::Index d = Eigen::Index(patch_height) * patch_width * channels;
  Eigen::MatrixXd basis = Eigen::MatrixXd::Zero(d, d);
  for (int u = 0; u < patch_height; ++u)
    for (int v = 0; v < patch_width; ++v)
      for (int ch = 0; ch < channels; ++ch) {
        const Eigen::Index col = (Eigen::Index(u) * patch_width + v) * channels + ch;
        for (int r = 0; r < patch_height; ++r)
          for (int c = 0; c < patch_width; ++c)
            basis((Eigen::Index(r) * patch_width + c) * channels + ch, col) = cy(r, u) * cx(c, v);
      }
  return basis;
}

}  // namespace pcasweep
