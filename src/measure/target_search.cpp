#include "measure/target_search.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include "core/error.hpp"
#include "core/format.hpp"

namespace pcasweep {

namespace {

std::string fmt(double v, int digits = 4) { return format_real(v, digits); }

bool meets(const KQuality& q, const QualityTarget& t) { return meets_quality(q.psnr_db, q.ssim, t); }

std::string target_text(const QualityTarget& t) {
  std::string s;
  if (t.psnr_db) s += "PSNR >= " + fmt(*t.psnr_db) + " dB";
  if (t.ssim) s += (s.empty() ? "" : " and ") + std::string("SSIM >= ") + fmt(*t.ssim);
  return s;
}

std::string achieved_text(const KQuality& q, const QualityTarget& t) {
  std::string s;
  if (t.psnr_db) s += "PSNR " + fmt(q.psnr_db) + " dB";
  if (t.ssim) s += (s.empty() ? "" : " and ") + std::string("SSIM ") + fmt(q.ssim, 5);
  return s;
}

// Evaluates each k at most once and records every evaluation in probe order.
class Prober {
 public:
  Prober(const KEvaluator& evaluate, const QualityTarget& target, std::vector<KQuality>& evaluated)
      : evaluate_(evaluate), target_(target), evaluated_(evaluated) {}
  // True when the output at k meets the target.
  bool meets_at(int k) { return meets(at(k), target_); }
  const KQuality& at(int k) {
    auto it = cache_.find(k);
    if (it == cache_.end()) {
      it = cache_.emplace(k, evaluate_(k)).first;
      evaluated_.push_back(it->second);
    }
    return it->second;
  }

 private:
  const KEvaluator& evaluate_;
  const QualityTarget& target_;
  std::vector<KQuality>& evaluated_;
  std::map<int, KQuality> cache_;
};

// Step 1 (header): the k range [lo, hi] the Eckart–Young bounds leave.
std::pair<int, int> eckart_young_bracket(const Basis& b, const TargetBracketModel& m, const QualityTarget& target) {
  const int r = int(b.rank());
  int lo = 1, hi = r;
  if (!target.psnr_db || !m.folded_patches || !(m.written_samples > 0)) return {lo, hi};
  const double big_n = double(b.observation_count), d = double(b.dimension());
  const double target_rmse = m.max_value / std::pow(10.0, *target.psnr_db / 20.0);
  const auto unrounded_rmse = [&](int k) { return std::sqrt(big_n * d * eckart_young_mse(b, k) / m.written_samples); };
  if (!target.ssim) {
    for (int k = 1; k <= r; ++k) {
      const double u = unrounded_rmse(k);
      if (std::min(u + 0.5, 2.0 * u) <= target_rmse) {
        hi = k;
        break;
      }
    }
  }
  if (m.tiles_exactly)
    for (int k = 1; k < hi; ++k)
      if (unrounded_rmse(k) - 0.5 > target_rmse) lo = k + 1;
  return {lo, hi};
}

// The answer when not even k = r meets the target (`top` measured there).
void describe_unreachable(KSuggestion& s, const Basis& b, const KQuality& top, const QualityTarget& target) {
  const int r = int(b.rank());
  if (!b.complete()) {
    s.k = r;
    s.lower_bound = true;
    s.meaning = "not reached with the " + std::to_string(r) + " computed components (" + achieved_text(top, target) +
                " at k = " + std::to_string(r) + "; goal " + target_text(target) + ")";
    s.note = "compute more components to find it";
  } else {
    s.meaning = "no k reaches " + target_text(target) + " (at k = " + std::to_string(r) + ": " +
                achieved_text(top, target) + ")";
    s.note = "the goal is beyond what rounding to the output bit depth allows, or not met at k = d";
  }
}

}  // namespace

TargetSearch search_quality_target(const Basis& b, const TargetBracketModel& model, const QualityTarget& target,
                                   const KEvaluator& evaluate) {
  if (!target.active()) throw usage_error("no quality target given (--target-psnr and/or --target-ssim)");
  TargetSearch ts;
  KSuggestion& s = ts.suggestion;
  s.rule = "quality_target";
  s.label = "quality target";
  const int r = int(b.rank());
  Prober probe(evaluate, target, ts.evaluated);
  auto [lo, hi] = eckart_young_bracket(b, model, target);
  ts.bracket_low = lo;
  ts.bracket_high = hi;
  if (!probe.meets_at(hi)) {
    if (hi < r && probe.meets_at(r)) {
      lo = hi + 1;  // (only with an SSIM goal, where hi = r already; kept for safety)
      hi = r;
    } else {
      describe_unreachable(s, b, probe.at(hi), target);
      return ts;
    }
  }
  // 2. Binary search: hi meets the target; everything below lo fails.
  while (lo < hi) {
    const int mid = lo + (hi - lo) / 2;
    if (probe.meets_at(mid)) hi = mid;
    else lo = mid + 1;
  }
  // 3. Verify: lo meets the goal (probed); lo − 1 must not. Below the bracket, k − 1 is known to fail.
  int k = lo;
  bool walked = false;
  if (k > ts.bracket_low)
    while (k > 1 && probe.meets_at(k - 1)) --k, walked = true;
  s.k = k;
  s.meaning = "smallest k whose written image reaches " + target_text(target) + " (" +
              achieved_text(probe.at(k), target) + "); " + std::to_string(ts.evaluated.size()) +
              " reconstructions in the bracket " + std::to_string(ts.bracket_low) + ".." +
              std::to_string(ts.bracket_high) + " from Eckart-Young";
  if (walked) s.note = "quality is not monotone in k here, so the search walked down to the smallest k met";
  return ts;
}

}  // namespace pcasweep
