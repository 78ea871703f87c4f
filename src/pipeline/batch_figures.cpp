#include "pipeline/batch_figures.hpp"

#include <cmath>
#include <set>

namespace pcasweep {

namespace {

std::vector<int> swept_ks(const std::vector<const FileResult*>& swept) {
  std::set<int> ks;
  for (const auto* f : swept)
    for (const auto& row : f->rows) ks.insert(row.k);
  return {ks.begin(), ks.end()};
}

bool any_row(const std::vector<const FileResult*>& swept, bool (*has)(const SweepRow&)) {
  for (const auto* f : swept)
    for (const auto& row : f->rows)
      if (has(row)) return true;
  return false;
}

double raw_samples_of(const FileResult& f) { return double(f.width) * f.height * f.channels; }

// The basis's own values (k·d + d) when one basis serves the whole batch, else 0.
double shared_basis_values(const BatchResult& r, int k) {
  if (!r.shared) return 0.0;
  return double(k) * double(r.shared->dimension) + double(r.shared->dimension);
}

bool in_subset(const FileResult& f, const std::string& subset) {
  if (subset == "training") return f.training;
  if (subset == "held_out") return !f.training;
  return true;
}

// The aggregate of the files of `subset` at k; files == 0 when none has a row there.
KAggregate aggregate_at(const BatchResult& r, const std::vector<const FileResult*>& swept,
                        const std::string& subset, int k, bool with_bytes, const CoverageTarget& target) {
  KAggregate a;
  a.subset = subset;
  a.k = k;
  std::vector<double> psnr, ssim, bpp;
  double bytes = 0.0;
  for (const auto* f : swept) {
    const SweepRow* row = in_subset(*f, subset) ? row_at(*f, k) : nullptr;
    if (!row) continue;
    ++a.files;
    const FileQuality q{row->quality.psnr_db, row->ssim};
    psnr.push_back(q.psnr_db);
    ssim.push_back(q.ssim);
    a.meeting += meets_target(q, target) ? 1 : 0;
    a.stored_values += double(row->stored_values);
    a.raw_samples += raw_samples_of(*f);
    if (with_bytes) {
      const double b = row->bytes >= 0 ? double(row->bytes) : std::numeric_limits<double>::quiet_NaN();
      bytes += b;
      bpp.push_back(8.0 * b / (double(f->width) * f->height));
    }
  }
  a.stored_values += shared_basis_values(r, k);
  a.psnr_db = spread_of(psnr);
  a.ssim = spread_of(ssim);
  if (with_bytes) {
    double sum = 0.0;
    for (double b : bpp) sum += b;
    a.bytes = bytes;
    a.bits_per_pixel_mean = sum / double(bpp.size());
  }
  return a;
}

Recommendation recommend(const std::vector<const FileResult*>& swept, const std::vector<int>& ks,
                         const CoverageTarget& target) {
  std::vector<std::vector<FileQuality>> q(ks.size());
  for (std::size_t i = 0; i < ks.size(); ++i)
    for (const auto* f : swept) q[i].push_back(quality_at(*f, ks[i]));
  return recommend_k(ks, q, target);
}

}  // namespace

double stored_total(const BatchResult& r, int k) {
  double total = 0.0;
  for (const auto* f : swept_files(r)) {
    const SweepRow* row = row_at(*f, k);
    total += row ? double(row->stored_values) : std::numeric_limits<double>::quiet_NaN();
  }
  return total + shared_basis_values(r, k);
}

BatchFigures batch_figures(const BatchResult& r, const CoverageTarget& target) {
  BatchFigures out;
  const auto swept = swept_files(r);
  out.ks = swept_ks(swept);
  out.has_ssim = any_row(swept, [](const SweepRow& row) { return !std::isnan(row.ssim); });
  out.has_bytes = any_row(swept, [](const SweepRow& row) { return row.bytes >= 0; });
  const std::vector<std::string> subsets =
      r.shared ? std::vector<std::string>{"all", "training", "held_out"} : std::vector<std::string>{"all"};
  for (const auto& subset : subsets)
    for (int k : out.ks) {
      KAggregate a = aggregate_at(r, swept, subset, k, out.has_bytes, target);
      if (a.files > 0) out.aggregates.push_back(std::move(a));
    }
  for (const auto* f : swept) out.raw_samples += raw_samples_of(*f);
  out.recommendation = recommend(swept, out.ks, target);
  const Recommendation& rec = out.recommendation;
  if (!rec.found) return out;
  for (std::size_t i : rec.failing) out.failing.push_back({swept[i]->path, quality_at(*swept[i], rec.k)});
  out.recommended_stored_values = stored_total(r, rec.k);
  if (out.has_bytes) {
    double bytes = 0.0;
    for (const auto* f : swept) {
      const SweepRow* row = row_at(*f, rec.k);
      bytes += row && row->bytes >= 0 ? double(row->bytes) : std::numeric_limits<double>::quiet_NaN();
    }
    out.recommended_bytes = bytes;
  }
  return out;
}

}  // namespace pcasweep
