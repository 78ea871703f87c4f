#include "measure/signal_metrics.hpp"

#include <cmath>
#include <limits>

#include "core/error.hpp"

namespace pcasweep {

namespace {
constexpr double kInf = std::numeric_limits<double>::infinity();

// ratio a/b for a ≥ 0, b ≥ 0 with 0/0 = 0 and a/0 = +∞.
double safe_ratio(double a, double b) {
  if (b > 0.0) return a / b;
  return a > 0.0 ? kInf : 0.0;
}
}  // namespace

SignalErrorFigures signal_figures(double squared_error, double energy, double centred_energy, double count,
                                  double max_abs_error) {
  SignalErrorFigures f;
  f.rmse = count > 0 ? std::sqrt(squared_error / count) : 0.0;
  if (squared_error > 0.0) f.snr_db = energy > 0.0 ? 10.0 * std::log10(energy / squared_error) : -kInf;
  else f.snr_db = kInf;
  f.prd_percent = 100.0 * std::sqrt(safe_ratio(squared_error, energy));
  f.prd_mean_removed_percent = 100.0 * std::sqrt(safe_ratio(squared_error, centred_energy));
  f.max_abs_error = max_abs_error;
  return f;
}

SignalQuality compare_signals(const Eigen::MatrixXd& x, const Eigen::MatrixXd& y) {
  if (x.rows() != y.rows() || x.cols() != y.cols() || x.size() == 0) {
    throw usage_error("cannot compare recordings of different length or channel count");
  }
  SignalQuality q;
  double total_sq = 0.0, total_energy = 0.0, total_centred = 0.0, total_max = 0.0;
  for (Eigen::Index c = 0; c < x.cols(); ++c) {
    // Two passes: the channel mean, then the sums (no Σx² − (Σx)²/n cancellation).
    const double mean = x.col(c).mean();
    double sq = 0.0, energy = 0.0, centred = 0.0, mx = 0.0;
    for (Eigen::Index t = 0; t < x.rows(); ++t) {
      const double v = x(t, c), e = v - y(t, c);
      sq += e * e;
      energy += v * v;
      centred += (v - mean) * (v - mean);
      mx = std::max(mx, std::abs(e));
    }
    q.channel.push_back(signal_figures(sq, energy, centred, double(x.rows()), mx));
    total_sq += sq;
    total_energy += energy;
    total_centred += centred;
    total_max = std::max(total_max, mx);
  }
  q.overall = signal_figures(total_sq, total_energy, total_centred, double(x.size()), total_max);
  return q;
}

}  // namespace pcasweep
