#include "measure/batch_stats.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>

namespace pcasweep {

double percentile_linear(std::vector<double> values, double p) {
  values.erase(std::remove_if(values.begin(), values.end(), [](double v) { return std::isnan(v); }), values.end());
  if (values.empty()) return std::numeric_limits<double>::quiet_NaN();
  std::sort(values.begin(), values.end());
  const double h = (double(values.size()) - 1.0) * std::clamp(p, 0.0, 100.0) / 100.0;
  const std::size_t lo = std::size_t(std::floor(h));
  const double frac = h - double(lo);
  if (frac == 0.0 || lo + 1 >= values.size()) return values[lo];
  const double a = values[lo], b = values[lo + 1];
  if (std::isinf(a) || std::isinf(b)) return std::isinf(b) ? b : a;
  return a + frac * (b - a);
}

Spread spread_of(const std::vector<double>& values) {
  std::vector<double> v;
  v.reserve(values.size());
  for (double x : values)
    if (!std::isnan(x)) v.push_back(x);
  Spread s;
  s.count = v.size();
  if (v.empty()) return s;
  s.min = *std::min_element(v.begin(), v.end());
  s.p5 = percentile_linear(v, 5.0);
  s.median = percentile_linear(v, 50.0);
  s.mean = std::accumulate(v.begin(), v.end(), 0.0) / double(v.size());
  return s;
}

bool meets_target(const FileQuality& q, const CoverageTarget& t) { return meets_quality(q.psnr_db, q.ssim, t); }

std::vector<std::size_t> failing_worst_first(const std::vector<FileQuality>& row, const CoverageTarget& t) {
  std::vector<std::size_t> failing;
  for (std::size_t f = 0; f < row.size(); ++f)
    if (!meets_target(row[f], t)) failing.push_back(f);
  const auto key = [](double v) { return std::isnan(v) ? -std::numeric_limits<double>::infinity() : v; };
  std::stable_sort(failing.begin(), failing.end(), [&](std::size_t a, std::size_t b) {
    if (key(row[a].psnr_db) != key(row[b].psnr_db)) return key(row[a].psnr_db) < key(row[b].psnr_db);
    return key(row[a].ssim) < key(row[b].ssim);
  });
  return failing;
}

Recommendation recommend_k(const std::vector<int>& ks, const std::vector<std::vector<FileQuality>>& quality,
                           const CoverageTarget& target) {
  if (ks.size() != quality.size()) throw std::invalid_argument("recommend_k: one row of quality per k");
  Recommendation r;
  for (std::size_t i = 0; i < ks.size(); ++i) {
    if (i > 0 && quality[i].size() != quality[0].size()) throw std::invalid_argument("recommend_k: ragged quality");
    KCoverage c;
    c.k = ks[i];
    c.total = quality[i].size();
    for (const auto& q : quality[i]) c.meeting += meets_target(q, target) ? 1 : 0;
    c.share = c.total ? double(c.meeting) / double(c.total) : 0.0;
    r.per_k.push_back(c);
    // A tiny tolerance so that e.g. 19 of 20 files meets 0.95 despite rounding of the share.
    if (!r.found && c.total > 0 && double(c.meeting) >= target.coverage * double(c.total) - 1e-9) {
      r.found = true;
      r.k = c.k;
      r.k_index = i;
      r.failing = failing_worst_first(quality[i], target);
    }
  }
  return r;
}

}  // namespace pcasweep
