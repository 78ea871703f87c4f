#include "codec/dct.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
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

Eigen::VectorXd dct_coefficient_variances(const Eigen::MatrixXd& scatter, double dof, const Eigen::MatrixXd& columns) {
  return ((scatter * columns).cwiseProduct(columns)).colwise().sum().transpose().cwiseMax(0.0) / dof;
}

OrderedDct order_dct_by_variance(const Eigen::MatrixXd& all, const Eigen::VectorXd& variances) {
  const Eigen::Index m = variances.size();
  OrderedDct out;
  out.order.resize(std::size_t(m));
  std::iota(out.order.begin(), out.order.end(), 0u);
  std::stable_sort(out.order.begin(), out.order.end(),
                   [&](std::uint32_t a, std::uint32_t b) { return variances(a) > variances(b); });
  out.columns.resize(all.rows(), m);
  out.variances.resize(m);
  for (Eigen::Index j = 0; j < m; ++j) {
    out.columns.col(j) = all.col(out.order[std::size_t(j)]);
    out.variances(j) = variances(out.order[std::size_t(j)]);
  }
  return out;
}

}  // namespace pcasweep
