// pcasweep/pipeline/k_choice.hpp — every rule for k side by side, for one analysis.
//
// Contract: wires measure/choose_k (spectrum rules), measure/near_zero
// (diagnosis) and the quality-target search of measure/target_search.hpp,
// for which it supplies the evaluate(k) callback: reconstruct at k, fold,
// round, clip and measure the written images against the sources (one
// streaming pass per call for a streamed image). Returns typed results
// (KChoice); present/k_rules.hpp and present/k_charts.hpp turn them into
// tables, JSON, text and charts.
#pragma once

#include <string>
#include <vector>

#include "measure/choose_k.hpp"
#include "measure/near_zero.hpp"
#include "measure/quality_target.hpp"
#include "measure/target_search.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep {

struct KChoiceSettings {
  std::vector<double> keep_fractions = {0.90, 0.95, 0.99, 0.999};
  QualityTarget target;  // inactive: no quality-target rule
};

// Reconstructs at k (1..r), folds, rounds, clips and measures against the
// sources. SSIM only when `with_ssim` (NaN otherwise). Streamed patches: one
// pass per call. Throws Error(usage) for k outside 1..r.
KQuality evaluate_k(const ImageAnalysis& analysis, int k, bool with_ssim);

// The same for several k in one pass (streamed) or one projection (in memory). One result per k, in order.
std::vector<KQuality> evaluate_ks(const ImageAnalysis& analysis, const std::vector<int>& ks, bool with_ssim);

// The search of measure/target_search.hpp on this analysis: its bracket model
// from the layout (folded patches, exact tiling) and evaluate_k as the
// callback. target must be active (Error(usage) otherwise).
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

}  // namespace pcasweep
