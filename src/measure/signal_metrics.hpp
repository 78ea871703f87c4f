// pcasweep/measure/signal_metrics.hpp — how far a written recording is from its original.
//
// Contract: both recordings are frames×channels with the same shape, in the
// same native units; the figures are computed on the stored values (after
// rounding and clipping to the sample type), per channel and pooled over
// all channels. With x the original, x̂ the reconstruction, x̄ the original's
// mean in that channel, and sums over frames (and channels when pooled):
//   rmse                      √(Σ(x − x̂)² / n)
//   snr_db                    10·log10(Σx² / Σ(x − x̂)²)            (+∞ for a perfect copy)
//   prd_percent               100·√(Σ(x − x̂)² / Σx²)               PRD, plain
//   prd_mean_removed_percent  100·√(Σ(x − x̂)² / Σ(x − x̄)²)         PRD with the mean removed
//   max_abs_error             max |x − x̂|
// Note snr_db = −20·log10(prd_percent / 100): the plain PRD and the SNR carry
// the same information; a large DC offset flatters both, which is why the
// mean-removed PRD is given too (the biomedical compression literature uses
// both and does not always say which; we always name it).
#pragma once

#include <Eigen/Dense>
#include <vector>

namespace pcasweep {

struct SignalErrorFigures {
  double rmse = 0.0;
  double snr_db = 0.0;
  double prd_percent = 0.0;
  double prd_mean_removed_percent = 0.0;
  double max_abs_error = 0.0;
};

struct SignalQuality {
  SignalErrorFigures overall;               // pooled over every channel
  std::vector<SignalErrorFigures> channel;  // one per channel, in channel order
};

// Figures from the raw sums: squared error Σ(x − x̂)², energy Σx², centred
// energy Σ(x − x̄)², the number of samples and the largest |x − x̂|.
// A zero denominator gives +∞ (or 0 when the error is 0 too).
SignalErrorFigures signal_figures(double squared_error, double energy, double centred_energy, double count,
                                  double max_abs_error);

// original, reconstruction: T×C each. Throws Error(usage) on a shape mismatch.
SignalQuality compare_signals(const Eigen::MatrixXd& original, const Eigen::MatrixXd& reconstruction);

}  // namespace pcasweep
