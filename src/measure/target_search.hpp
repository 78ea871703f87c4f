// pcasweep/measure/target_search.hpp — the smallest k whose written output meets a quality target.
//
// Contract: the search never reconstructs anything itself; it asks an
// evaluate(k) callback (the pipeline's: reconstruct at k, fold, round, clip,
// measure) for as few k as it can, at most once per k:
//   1. Bracket with Eckart–Young. The unrounded in-sample squared error of
//      the rank-k reconstruction summed over X (N×d) is exactly
//      E(k) = (N−1)·Σ_{i>k} λ_i (Σ taken as trace − Σ_{i≤k} λ_i, so it is
//      exact for a truncated basis too). Folding averages overlapping
//      patches and crops padding, so by Jensen the pixel error sum is at
//      most E(k); rounding and clipping add at most 0.5 per sample and at
//      most double each error (x is an integer), so the written RMSE is at
//      most min(√(E/S) + 0.5, 2·√(E/S)), S = written samples. The first k
//      where that bound meets the PSNR goal is a guaranteed upper end
//      (PSNR goal only: the bound says nothing about SSIM).
//      For non-overlapping patches that tile the image exactly (no padding)
//      the pixel error equals E(k)/S and the written RMSE is at least
//      √(E/S) − 0.5, which rules out every k below a lower end.
//      Without a PSNR goal, or for rows that are not folded patches, the
//      bracket is the whole range 1..r.
//   2. Probes: a binary search inside the bracket, evaluating only the
//      probed k (≈ log2 of the bracket width), assuming quality does not fall
//      as k grows (true before rounding by Eckart–Young; rounding can wobble
//      it by a fraction of a level). When the upper end fails (only possible
//      at k = r), no k in 1..r meets the target and the answer says why.
//   3. Verification on the real output: the answer meets the goal and k − 1
//      does not; where k − 1 also meets it (quality not monotone there) the
//      search walks down until it does not, and says so in the note.
#pragma once

#include <functional>
#include <vector>

#include "measure/choose_k.hpp"
#include "measure/quality_target.hpp"
#include "solve/basis.hpp"

namespace pcasweep {

// PSNR and SSIM of the written (rounded, clipped) output at one k (SSIM NaN when not measured).
struct KQuality {
  int k = 0;
  double psnr_db = 0.0;
  double ssim = 0.0;
};

// What the Eckart–Young bracket may assume about how the rows of X become written samples.
struct TargetBracketModel {
  double written_samples = 0.0;  // S: samples in the written output (0: no bound)
  double max_value = 255.0;      // L, the largest sample value (255 or 65535)
  bool folded_patches = false;   // rows are patches folded back by averaging and cropping: pixel error ≤ E(k)
  bool tiles_exactly = false;    // non-overlapping patches, no padding: pixel error = E(k) (implies folded_patches)
};

struct TargetSearch {
  KSuggestion suggestion;                // rule "quality_target"; k = −1 when no k in 1..r meets the target
  int bracket_low = 1, bracket_high = 0; // k range left after the Eckart–Young bounds
  std::vector<KQuality> evaluated;       // every k actually evaluated, in probe order
};

// Measures the written output at k (1..r); SSIM is needed only when the target has an SSIM goal.
using KEvaluator = std::function<KQuality(int k)>;

// basis: the spectrum of X (N×d; eigenvalues r, total variance, N, d, complete or not);
// model: see above; target: must be active; evaluate: called for k in 1..r, once per k.
// Returns the suggestion, the bracket and the evaluations. Throws Error(usage) for an
// inactive target; passes on whatever evaluate throws.
TargetSearch search_quality_target(const Basis& basis, const TargetBracketModel& model, const QualityTarget& target,
                                   const KEvaluator& evaluate);

}  // namespace pcasweep
