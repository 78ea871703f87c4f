// The quality-target search over an evaluate(k) callback (measure/target_search.hpp)
// and the one quality-target type (measure/quality_target.hpp).
// Source: the search's own contract (Eckart–Young bracket, binary search, verification);
// the expected k is always found by asking every k, as an exhaustive search would.
#include <doctest/doctest.h>

#include <cmath>
#include <map>

#include "measure/target_search.hpp"
#include "../support/errors.hpp"

using namespace pcasweep;

namespace {

// A basis with eigenvalues 1000·0.8^i (i < r) of d variables, N observations; trace = Σ of all d.
Basis spectrum_basis(int r, int d, Eigen::Index n) {
  Basis b;
  b.mean = Eigen::VectorXd::Zero(d);
  b.eigenvalues.resize(r);
  double total = 0.0;
  for (int i = 0; i < d; ++i) {
    const double v = 1000.0 * std::pow(0.8, i);
    if (i < r) b.eigenvalues(i) = v;
    total += v;
  }
  b.total_variance = total;
  b.observation_count = n;
  return b;
}

// The smallest k in 1..r whose quality meets the target, 0 when none does.
int smallest_meeting(int r, const KEvaluator& evaluate, const QualityTarget& target) {
  for (int k = 1; k <= r; ++k) {
    const KQuality q = evaluate(k);
    if (meets_quality(q.psnr_db, q.ssim, target)) return k;
  }
  return 0;
}

}  // namespace

TEST_CASE("quality target: unset goals are no goals, a NaN figure never meets a set one") {
  QualityTarget none;
  CHECK_FALSE(none.active());
  CHECK(meets_quality(NAN, NAN, none));
  QualityTarget psnr;
  psnr.psnr_db = 30;
  CHECK(psnr.active());
  CHECK(meets_quality(30, NAN, psnr));
  CHECK_FALSE(meets_quality(29.9, 1.0, psnr));
  CHECK_FALSE(meets_quality(NAN, 1.0, psnr));
  QualityTarget both = psnr;
  both.ssim = 0.9;
  CHECK(meets_quality(31, 0.9, both));
  CHECK_FALSE(meets_quality(31, 0.89, both));
  CHECK_FALSE(meets_quality(31, NAN, both));
}

TEST_CASE("target search: finds the smallest k with few evaluations, each k at most once") {
  const Basis b = spectrum_basis(64, 64, 1000);
  std::map<int, int> calls;
  const KEvaluator evaluate = [&](int k) {
    ++calls[k];
    return KQuality{k, 20.0 + 0.5 * k, 0.5 + 0.007 * k};
  };
  QualityTarget psnr, ssim, both;
  psnr.psnr_db = 37.2;
  ssim.ssim = 0.85;
  both.psnr_db = 30, both.ssim = 0.9;
  for (const QualityTarget& t : {psnr, ssim, both}) {
    calls.clear();
    const TargetSearch s = search_quality_target(b, TargetBracketModel{}, t, evaluate);
    const std::map<int, int> search_calls = calls;
    CHECK(s.suggestion.rule == "quality_target");
    CHECK(s.suggestion.k == smallest_meeting(64, evaluate, t));
    CHECK(s.bracket_low == 1);
    CHECK(s.bracket_high == 64);  // no folding model: the whole range
    CHECK(s.evaluated.size() == search_calls.size());
    CHECK(s.evaluated.size() <= 8);  // log2(64) + 2
    for (const auto& [k, n] : search_calls) CHECK(n == 1);
  }
}

TEST_CASE("target search: the Eckart-Young bracket holds the answer for exactly tiling patches") {
  // Written output = the unrounded rank-k reconstruction, S = N·d samples, so the
  // RMSE at k is exactly √(E(k)/S) and both bounds apply.
  const Eigen::Index n = 2000;
  const int d = 48;
  for (int r : {48, 30}) {
    const Basis b = spectrum_basis(r, d, n);
    TargetBracketModel model;
    model.written_samples = double(n) * d;
    model.max_value = 255.0;
    model.folded_patches = model.tiles_exactly = true;
    const KEvaluator evaluate = [&](int k) {
      const double rmse = std::sqrt(eckart_young_mse(b, k) * double(n) * d / model.written_samples);
      return KQuality{k, 20.0 * std::log10(255.0 / rmse), NAN};
    };
    QualityTarget t;
    t.psnr_db = 40;
    const TargetSearch s = search_quality_target(b, model, t, evaluate);
    const int want = smallest_meeting(r, evaluate, t);
    CAPTURE(r);
    REQUIRE(want > 0);
    CHECK(s.suggestion.k == want);
    CHECK(s.bracket_low <= want);
    CHECK(want <= s.bracket_high);
    CHECK(s.bracket_high - s.bracket_low < r / 2);  // the bounds did narrow the range
  }
}

TEST_CASE("target search: an unreachable goal says why, for a complete and a truncated basis") {
  const KEvaluator poor = [](int k) { return KQuality{k, 10.0 + 0.01 * k, 0.1}; };
  QualityTarget t;
  t.psnr_db = 50;
  const TargetSearch complete = search_quality_target(spectrum_basis(16, 16, 100), TargetBracketModel{}, t, poor);
  CHECK(complete.suggestion.k == -1);
  CHECK(complete.suggestion.meaning.find("no k reaches PSNR >= 50 dB") == 0);
  const TargetSearch truncated = search_quality_target(spectrum_basis(8, 16, 100), TargetBracketModel{}, t, poor);
  CHECK(truncated.suggestion.k == 8);
  CHECK(truncated.suggestion.lower_bound);
  CHECK(truncated.suggestion.note == "compute more components to find it");
}

TEST_CASE("target search: an inactive target is a usage error") {
  const std::string message = testing::error_message_of([] {
    search_quality_target(spectrum_basis(4, 4, 10), TargetBracketModel{}, QualityTarget{},
                          [](int k) { return KQuality{k, 0, 0}; });
  });
  CHECK(message.find("no quality target given") != std::string::npos);
}
