#include "codec/gaussian_rd.hpp"

#include <algorithm>

#include "codec/quantize.hpp"
#include "measure/image_metrics.hpp"

namespace pcasweep {

std::vector<GaussianRdPoint> gaussian_rd_curve(const Eigen::VectorXd& ev, double total_variance,
                                               Eigen::Index dimension, double max_value, int from_db, int to_db) {
  const double tail = std::max(0.0, total_variance - ev.sum());
  const double d = double(dimension);
  std::vector<GaussianRdPoint> curve;
  for (int psnr = from_db; psnr <= to_db; ++psnr) {
    const double theta = water_level_for_psnr(psnr, max_value);
    const double mse = (reverse_water_fill(ev, theta).sum() + tail) / d;
    const double bits = gaussian_rate_bits(ev, theta);
    if (bits <= 0.0) continue;
    GaussianRdPoint p;
    p.psnr_db = psnr_from_mse(mse, max_value);
    p.bits_per_observation = bits;
    for (Eigen::Index i = 0; i < ev.size(); ++i) p.coded += ev(i) > theta ? 1 : 0;
    curve.push_back(p);
  }
  return curve;
}

}  // namespace pcasweep
