// pcasweep/codec/gaussian_rd.hpp — the Gaussian rate–distortion curve R(D) from a spectrum.
//
// Contract: for a Gaussian source whose components have variances λ_i (the
// eigenvalues), reverse water-filling at level θ (quantize.hpp; Cover & Thomas
// §10.3.3) gives distortion D_i = min(θ, λ_i) and rate R = Σ_{λ_i > θ} ½·log2(λ_i/θ)
// bits per observation. Variance beyond the computed eigenvalues (total
// variance − Σλ, for a truncated basis) is charged to distortion and never
// coded. The curve is the lower bound the study's codecs are drawn against;
// it ignores side information, and real patches (not Gaussian) can beat it.
#pragma once

#include <Eigen/Dense>
#include <vector>

namespace pcasweep {

struct GaussianRdPoint {
  double psnr_db = 0.0;               // 10·log10(L²/D), D = (Σ min(θ, λ_i) + tail)/d
  double bits_per_observation = 0.0;  // R(D) > 0
  int coded = 0;                      // components with λ_i > θ
};

// eigenvalues: r values ≥ 0 (r ≤ dimension); total_variance: trace over all d
// variables; max_value: L (255 or 65535). For each whole PSNR from `from_db` to
// `to_db` (θ = water_level_for_psnr), the point on the curve; points whose rate
// is 0 are left out. Returns them in increasing PSNR. Throws nothing.
std::vector<GaussianRdPoint> gaussian_rd_curve(const Eigen::VectorXd& eigenvalues, double total_variance,
                                               Eigen::Index dimension, double max_value, int from_db = 10,
                                               int to_db = 70);

}  // namespace pcasweep
