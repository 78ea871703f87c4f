#include "codec/quantize.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "core/error.hpp"
#include "observe/raster.hpp"

namespace pcasweep {

Eigen::VectorXd reverse_water_fill(const Eigen::VectorXd& variances, double theta) {
  return variances.array().max(0.0).min(theta).matrix();
}

double water_level_for_total(const Eigen::VectorXd& variances, double total) {
  std::vector<double> v(variances.data(), variances.data() + variances.size());
  for (double& x : v) x = std::max(x, 0.0);
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  if (n == 0 || total <= 0.0) return 0.0;
  // Σ min(θ, v_i) for θ in [v_{j−1}, v_j] is prefix_j + (n − j)·θ: find the first j whose
  // upper end v_j reaches the total, then solve the linear piece.
  double prefix = 0.0;
  for (std::size_t j = 0; j < n; ++j) {
    if (prefix + double(n - j) * v[j] >= total) return (total - prefix) / double(n - j);
    prefix += v[j];
  }
  return v.back();  // total ≥ Σ λ_i: every component fully dropped
}

double gaussian_rate_bits(const Eigen::VectorXd& variances, double theta) {
  double bits = 0.0;
  for (Eigen::Index i = 0; i < variances.size(); ++i)
    if (variances(i) > theta) bits += 0.5 * std::log2(variances(i) / theta);
  return bits;
}

double quality_psnr_db(int quality) {
  if (quality < 1 || quality > 100) {
    throw usage_error("--quality must be between 1 and 100, not " + std::to_string(quality));
  }
  return 10.0 + 0.4 * quality;
}

double water_level_for_psnr(double psnr_db, double max_value) {
  return max_value * max_value * std::pow(10.0, -psnr_db / 10.0);
}

double predicted_mse(const Eigen::VectorXd& coded_variances, double dropped_variance, Eigen::Index d, double theta) {
  return (reverse_water_fill(coded_variances, theta).sum() + std::max(dropped_variance, 0.0)) / double(d);
}

double water_level_for_target_psnr(const Eigen::VectorXd& coded_variances, double dropped_variance, Eigen::Index d,
                                   double psnr_db, double max_value) {
  if (!(psnr_db > 0.0) || !std::isfinite(psnr_db) || psnr_db > 200.0) {
    throw usage_error("--target-psnr must be a finite number of dB in (0, 200], not " + std::to_string(psnr_db));
  }
  const double target_mse = water_level_for_psnr(psnr_db, max_value);
  const double floor_mse = std::max(dropped_variance, 0.0) / double(d);
  if (floor_mse >= target_mse) {
    const double best = 10.0 * std::log10(max_value * max_value / floor_mse);
    char text[160];
    std::snprintf(text, sizeof text,
                  "--target-psnr %.2f dB is out of reach with k = %d: the dropped components alone cost "
                  "%.2f dB; raise --k",
                  psnr_db, int(coded_variances.size()), best);
    throw usage_error(text);
  }
  // Σ_{coded} min(θ, λ_i) = d·target − dropped: closed form.
  return water_level_for_total(coded_variances, double(d) * target_mse - std::max(dropped_variance, 0.0));
}

std::vector<float> step_sizes(const Eigen::VectorXd& variances, double theta) {
  std::vector<float> steps(std::size_t(variances.size()), 0.0f);
  const float step = float(std::sqrt(12.0 * theta));
  for (Eigen::Index i = 0; i < variances.size(); ++i)
    if (variances(i) > theta && step > 0.0f && std::isfinite(step)) steps[std::size_t(i)] = step;
  return steps;
}

std::int32_t quantize_coefficient(double coefficient, float step) {
  const double r = round_half_away(coefficient / double(step));
  if (!(std::fabs(r) < 1073741824.0)) {
    throw usage_error("quantiser step " + std::to_string(step) +
                      " is too small for the coefficients; lower --quality or --target-psnr");
  }
  return std::int32_t(r);
}

std::uint16_t mean_to_fixed(double mean, double max_value) {
  const double r = std::round(std::clamp(mean, 0.0, max_value) * 65535.0 / max_value);
  return std::uint16_t(std::clamp(r, 0.0, 65535.0));
}

double mean_from_fixed(std::uint16_t fixed, double max_value) { return double(fixed) * max_value / 65535.0; }

float component_scale(const Eigen::VectorXd& column) {
  const double m = column.size() ? column.cwiseAbs().maxCoeff() : 0.0;
  return m > 0.0 && std::isfinite(m) ? float(m) : 1.0f;
}

std::int16_t component_to_fixed(double value, float scale) {
  const double r = std::round(value * kComponentLevels / double(scale));
  return std::int16_t(std::clamp(r, -kComponentLevels, kComponentLevels));
}

double component_from_fixed(std::int16_t fixed, float scale) {
  return double(fixed) * double(scale) / kComponentLevels;
}

}  // namespace pcasweep
