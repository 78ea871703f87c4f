// pcasweep/pipeline/k_choice.hpp — every rule for k side by side, for one analysis.
//
// Contract: wires measure/choose_k (spectrum rules), measure/near_zero
// (diagnosis) and a quality-target search that reconstructs a few k on the
// real rounded output, then lays the results out for the report stage:
// a rules table (rule, k, meaning), a plain-words agreement sentence, JSON
// for summary.json, and the scree and cumulative charts (report/svg).
//
// Quality-target search (smallest k whose written image meets --target-psnr
// and/or --target-ssim) without reconstructing every k:
//   1. Bracket with Eckart–Young. The unrounded in-sample squared error of
//      the rank-k reconstruction summed over X (N×d) is exactly
//      E(k) = (N−1)·Σ_{i>k} λ_i (Σ taken as trace − Σ_{i≤k} λ_i, so it is
//      exact for a truncated basis too). Folding averages overlapping
//      patches and crops padding, so by Jensen the pixel error sum is at
//      most E(k); rounding and clipping add at most 0.5 per sample and at
//      most double each error (x is an integer), so the written RMSE is at
//      most min(√(E/S) + 0.5, 2·√(E/S)), S = written samples. The first k
//      where that bound meets the PSNR goal is a guaranteed upper end.
//      For non-overlapping patches that tile the image exactly (no padding)
//      the pixel error equals E(k)/S and the written RMSE is at least
//      √(E/S) − 0.5, which rules out every k below a lower end.
//   2. Binary search inside the bracket, reconstructing only the probed k
//      (≈ log2 of the bracket width), assuming quality does not fall as k
//      grows (true before rounding by Eckart–Young; rounding can wobble it
//      by a fraction of a level).
//   3. Verify on the real output: the answer meets the goal and k − 1 does not.
#pragma once

#include <limits>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "measure/choose_k.hpp"
#include "measure/near_zero.hpp"
#include "pipeline/image_study.hpp"
#include "report/svg.hpp"
#include "report/table.hpp"

namespace pcasweep {

struct QualityTarget {
  double psnr_db = std::numeric_limits<double>::quiet_NaN();  // NaN: no PSNR goal
  double ssim = std::numeric_limits<double>::quiet_NaN();     // NaN: no SSIM goal
  bool active() const { return !std::isnan(psnr_db) || !std::isnan(ssim); }
};

struct KChoiceSettings {
  std::vector<double> keep_fractions = {0.90, 0.95, 0.99, 0.999};
  QualityTarget target;
};

// PSNR and SSIM of the written (rounded, clipped) images at one k.
struct KQuality {
  int k = 0;
  double psnr_db = 0.0;
  double ssim = 0.0;
};

struct TargetSearch {
  KSuggestion suggestion;
  int bracket_low = 1, bracket_high = 0;   // k range left after the Eckart–Young bounds
  std::vector<KQuality> evaluated;         // every k actually reconstructed, in probe order
};

// Reconstructs at k (1..r), folds, rounds, clips and measures against the
// sources. SSIM only when `with_ssim`. Streamed patches: one pass per call.
KQuality evaluate_k(const ImageAnalysis& analysis, int k, bool with_ssim);

// The same for several k in one pass (streamed) or one projection (in memory). One result per k, in order.
std::vector<KQuality> evaluate_ks(const ImageAnalysis& analysis, const std::vector<int>& ks, bool with_ssim);

// The search described above. target must be active (Error(usage) otherwise).
TargetSearch search_quality_target(const ImageAnalysis& analysis, const QualityTarget& target);

// Smallest k in 1..r meeting the target by reconstructing every k (for tests
// and for checking the search); 0 when no k does.
int exhaustive_quality_k(const ImageAnalysis& analysis, const QualityTarget& target);

struct KChoice {
  std::vector<KSuggestion> rules;     // spectrum rules, then the quality target (if any)
  std::string agreement;              // plain-words paragraph
  NearZeroReport near_zero;
  TargetSearch target_search;         // empty suggestion when no target was set
  std::vector<double> keep_fractions;
};

// All rules and the diagnosis for one analysis. Throws Error.
KChoice choose_k(const ImageAnalysis& analysis, const KChoiceSettings& settings);

// Columns rule, k, meaning (k printed as "12", ">= 40" or "-"; a note, if any, follows the meaning).
Table rules_table(const std::vector<KSuggestion>& rules);

// {"rules": [...], "agreement": "...", "near_zero": {...}, "quality_search": {...}}
nlohmann::json k_choice_json(const KChoice& choice);

// Text for a terminal: the rules table, the agreement paragraph, and the near-zero findings.
std::string render_k_choice(const KChoice& choice);

// Scree chart: eigenvalue vs component with each rule's k marked on the curve.
// log_scale: logarithmic y (exact zeros drawn at a floor, said in the note).
ChartSpec scree_chart(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source);

// Cumulative proportion of variance vs k, with a line at each keep fraction.
ChartSpec cumulative_chart(const Basis& basis, const KChoice& choice, const std::string& source);

// Writes scree.svg and cumulative.svg into out_dir (created if missing), atomically.
void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const std::string& out_dir);

}  // namespace pcasweep
