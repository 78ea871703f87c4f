#include "pipeline/k_choice.hpp"

#include <algorithm>
#include <cmath>

#include "core/error.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
#include "observe/patches.hpp"
#include "codec/patch_sweep.hpp"
#include "reconstruct/reconstruct.hpp"

namespace pcasweep {

std::vector<KQuality> evaluate_ks(const ImageAnalysis& a, const std::vector<int>& ks, bool with_ssim) {
  for (int k : ks)
    if (k < 1 || k > a.basis.rank()) throw usage_error("evaluate_k: k = " + std::to_string(k) + " out of range");
  std::vector<KQuality> out;
  if (a.streamed()) {
    // One streaming pass measures every k (codec/patch_sweep.hpp).
    PatchSweepInputs in;
    in.image = &a.image();
    in.layout = a.patches();
    in.basis = &a.basis;
    std::vector<PatchSweepPoint> points(ks.size());
    for (std::size_t i = 0; i < ks.size(); ++i) {
      points[i].k = ks[i];
      points[i].ssim = with_ssim;
    }
    const auto results = run_patch_sweep(in, points);
    for (std::size_t i = 0; i < ks.size(); ++i)
      out.push_back({ks[i], results[i].quality.psnr_db,
                     with_ssim ? results[i].ssim.ssim : std::numeric_limits<double>::quiet_NaN()});
    return out;
  }
  const Eigen::MatrixXd coefficients = project(a.basis, a.X, a.basis.rank());
  for (int k : ks) {
    const Eigen::MatrixXd xk = reconstruct(a.basis, coefficients.leftCols(k));
    const std::vector<Raster> folded = a.layout->fold(xk);
    std::vector<Image> written;
    for (std::size_t i = 0; i < folded.size(); ++i) written.push_back(quantize(folded[i], a.sources[i]));
    KQuality q;
    q.k = k;
    q.psnr_db = compare_image_sets(a.sources, written).psnr_db;
    q.ssim = with_ssim ? compute_ssim_sets(a.sources, written).ssim : std::numeric_limits<double>::quiet_NaN();
    out.push_back(q);
  }
  return out;
}

KQuality evaluate_k(const ImageAnalysis& a, int k, bool with_ssim) { return evaluate_ks(a, {k}, with_ssim).front(); }

TargetSearch search_quality_target(const ImageAnalysis& a, const QualityTarget& target) {
  TargetBracketModel model;
  for (const auto& src : a.sources) model.written_samples += double(src.sample_count());
  if (const PatchLayout* patches = a.patches()) {
    const auto& o = patches->options();
    model.max_value = a.image().max_value();
    model.folded_patches = true;
    model.tiles_exactly = o.stride_y == o.patch_height && o.stride_x == o.patch_width &&
                          patches->padded_width() == a.image().width && patches->padded_height() == a.image().height;
  }
  const bool with_ssim = target.ssim.has_value();
  return search_quality_target(a.basis, model, target, [&](int k) { return evaluate_k(a, k, with_ssim); });
}

int exhaustive_quality_k(const ImageAnalysis& a, const QualityTarget& target) {
  std::vector<int> all(std::size_t(a.basis.rank()));
  for (std::size_t i = 0; i < all.size(); ++i) all[i] = int(i + 1);
  for (const KQuality& q : evaluate_ks(a, all, target.ssim.has_value()))
    if (meets_quality(q.psnr_db, q.ssim, target)) return q.k;
  return 0;
}

KChoice choose_k(const ImageAnalysis& a, const KChoiceSettings& settings) {
  KChoice c;
  c.keep_fractions = settings.keep_fractions;
  c.rules = spectrum_rules(a.basis, settings.keep_fractions);
  if (settings.target.active()) {
    c.target_search = search_quality_target(a, settings.target);
    c.rules.push_back(c.target_search.suggestion);
  }
  c.agreement = rules_agreement(c.rules);
  c.near_zero = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  return c;
}

}  // namespace pcasweep
