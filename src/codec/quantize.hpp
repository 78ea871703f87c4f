// pcasweep/codec/quantize.hpp — bit allocation and scalar quantisation.
//
// Contract: coefficients of component i (variance λ_i, per observation) are
// quantised uniformly with step Δ_i chosen by reverse water-filling (Gaussian
// rate–distortion theory; Huang & Schultheiss 1963, Cover & Thomas §10.3.3):
// one water level θ gives every component the distortion D_i = min(θ, λ_i);
// a component with λ_i > θ is coded with the step Δ_i = √(12·θ) (the high-rate
// uniform-quantiser error Δ²/12 = D_i); a component with λ_i ≤ θ gets no bits
// (step 0 = not coded, its coefficients are dropped).
// The one user knob: --quality Q in 1..100 asks for θ = L²·10^(−(10 + 0.4·Q)/10)
// (L = 255 or 65535): Q = 50 → θ at 30 dB, Q = 75 → 40 dB, Q = 100 → 50 dB;
// or --target-psnr P solves for θ so the model's per-sample MSE equals
// L²·10^(−P/10) (rounding and the high-rate model make the measured PSNR differ).
// Side information precision (bytes counted in every file):
//   mean       16-bit fixed point over [0, L]: m = round(μ·65535/L), μ̂ = m·L/65535
//   component  per column a float32 scale s = max|v|, entries round(v·A/s) with A = kComponentLevels,
//              stored as int16 (|entry| ≤ A; docs/codec.md measures the choice of A)
//   steps      float32
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <vector>

namespace pcasweep {

// variances: n values ≥ 0, θ ≥ 0. Returns D, n values, D_i = min(θ, λ_i).
Eigen::VectorXd reverse_water_fill(const Eigen::VectorXd& variances, double theta);

// variances: n values ≥ 0; total: wanted Σ D_i, 0 ≤ total ≤ Σ λ_i.
// Returns θ with Σ min(θ, λ_i) = total (closed form over the sorted variances).
double water_level_for_total(const Eigen::VectorXd& variances, double total);

// Gaussian rate in bits per observation: Σ over λ_i > θ of ½·log2(λ_i/θ). θ > 0.
double gaussian_rate_bits(const Eigen::VectorXd& variances, double theta);

// The nominal PSNR for --quality Q (1..100): 10 + 0.4·Q dB. Throws Error(usage) outside 1..100.
double quality_psnr_db(int quality);

// θ for a nominal PSNR: L²·10^(−psnr/10), L = max_value.
double water_level_for_psnr(double psnr_db, double max_value);

// Model of the per-sample MSE when the first k of d components (variances, size ≥ k; the
// rest of the d dimensions carry `dropped_variance` in total) are coded at water level θ:
// (Σ_{i<k} min(θ, λ_i) + dropped_variance) / d.
double predicted_mse(const Eigen::VectorXd& coded_variances, double dropped_variance, Eigen::Index d, double theta);

// Solves predicted_mse(...) = L²·10^(−psnr/10) for θ. Throws Error(usage) naming the best
// PSNR reachable when the dropped variance alone exceeds the target.
double water_level_for_target_psnr(const Eigen::VectorXd& coded_variances, double dropped_variance,
                                   Eigen::Index d, double psnr_db, double max_value);

// Steps for components with variances λ (size m) at θ: √(12θ) rounded to float32 where
// λ_i > θ, 0 (not coded) elsewhere.
std::vector<float> step_sizes(const Eigen::VectorXd& variances, double theta);

// Uniform mid-tread quantiser: round(c/step) (half away from zero). Throws Error(usage)
// if |c/step| ≥ 2^30 (the step is absurdly small for this coefficient).
std::int32_t quantize_coefficient(double coefficient, float step);
inline double dequantize_coefficient(std::int32_t q, float step) { return double(q) * double(step); }

// Mean precision: 16-bit fixed point over [0, max_value].
std::uint16_t mean_to_fixed(double mean, double max_value);
double mean_from_fixed(std::uint16_t fixed, double max_value);

// Largest magnitude of a stored basis entry (12-bit signed precision: 2·2047 + 1 levels).
inline constexpr double kComponentLevels = 2047.0;

// Component precision: float32 scale per column (max |v|, 1 if the column is zero), int16 entries.
float component_scale(const Eigen::VectorXd& column);
std::int16_t component_to_fixed(double value, float scale);
double component_from_fixed(std::int16_t fixed, float scale);

}  // namespace pcasweep
