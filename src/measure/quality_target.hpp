// pcasweep/measure/quality_target.hpp — a quality goal for written images, with one "unset" convention.
//
// Contract: a goal is PSNR ≥ psnr_db and/or SSIM ≥ ssim, both measured on the
// written (rounded, clipped) output. Each figure is a std::optional: unset
// means "no goal on that figure". The type has no default goal values: a
// command that offers a default (batch's --target-psnr 40) sets it itself and
// shows it in its help. A measured figure that is NaN never meets a goal that
// is set.
#pragma once

#include <optional>

namespace pcasweep {

struct QualityTarget {
  std::optional<double> psnr_db;  // dB; unset: no PSNR goal
  std::optional<double> ssim;     // unset: no SSIM goal
  // True when at least one goal is set.
  bool active() const { return psnr_db.has_value() || ssim.has_value(); }
};

// psnr_db, ssim: measured figures (NaN for "not measured"). Returns true when they
// meet every goal of `target` that is set (an inactive target is always met).
bool meets_quality(double psnr_db, double ssim, const QualityTarget& target);

}  // namespace pcasweep
