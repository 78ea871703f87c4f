#include "measure/quality_target.hpp"

namespace pcasweep {

bool meets_quality(double psnr_db, double ssim, const QualityTarget& target) {
  if (target.psnr_db && !(psnr_db >= *target.psnr_db)) return false;  // NaN fails
  if (target.ssim && !(ssim >= *target.ssim)) return false;
  return true;
}

}  // namespace pcasweep
