#include "present/batch_tables.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "core/format.hpp"
#include "present/sweep_tables.hpp"

namespace pcasweep {

namespace {

std::string fixed(double v, int decimals) { return format_fixed(v, decimals, "n/a"); }

int column_index(const Table& t, const std::string& name) {
  const auto it = std::find(t.columns.begin(), t.columns.end(), name);
  return it == t.columns.end() ? -1 : int(it - t.columns.begin());
}

// The aggregate's column names for the figures at hand.
std::vector<std::string> aggregate_columns(const BatchFigures& figures) {
  std::vector<std::string> columns = {"subset", "k", "files"};
  for (const std::string m : {"psnr_db", "ssim"}) {
    if (m == "ssim" && !figures.has_ssim) continue;
    for (const std::string s : {"min", "p5", "median", "mean"}) columns.push_back(m + "_" + s);
  }
  columns.insert(columns.end(), {"stored_values_total", "raw_samples_total", "stored_ratio"});
  if (figures.has_bytes) columns.insert(columns.end(), {"bytes_total", "bits_per_pixel_mean"});
  columns.insert(columns.end(), {"files_meeting_target", "share_meeting_target"});
  return columns;
}

std::vector<Cell> aggregate_row(const KAggregate& a, const BatchFigures& figures) {
  std::vector<Cell> row = {a.subset, std::int64_t(a.k), std::int64_t(a.files)};
  row.insert(row.end(), {a.psnr_db.min, a.psnr_db.p5, a.psnr_db.median, a.psnr_db.mean});
  if (figures.has_ssim) row.insert(row.end(), {a.ssim.min, a.ssim.p5, a.ssim.median, a.ssim.mean});
  row.insert(row.end(), {std::int64_t(std::llround(a.stored_values)), std::int64_t(std::llround(a.raw_samples)),
                         a.stored_values / a.raw_samples});
  if (figures.has_bytes) row.insert(row.end(), {std::int64_t(std::llround(a.bytes)), a.bits_per_pixel_mean});
  row.insert(row.end(), {std::int64_t(a.meeting), a.share()});
  return row;
}

Table notes_table(const std::vector<InputNote>& notes) {
  Table t;
  t.columns = {"file", "reason"};
  for (const auto& n : notes) t.add_row({n.path, n.reason});
  return t;
}

}  // namespace

Table batch_table(const BatchResult& result) {
  std::vector<Table> sweeps;
  std::vector<std::string> columns;
  for (const auto* f : swept_files(result)) {
    sweeps.push_back(sweep_table(f->rows, f->channel_names));
    for (const auto& c : sweeps.back().columns)
      if (std::find(columns.begin(), columns.end(), c) == columns.end()) columns.push_back(c);
  }
  Table t;
  t.columns = {"file"};
  if (result.shared) t.columns.push_back("subset");
  t.columns.insert(t.columns.end(), columns.begin(), columns.end());
  std::size_t s = 0;
  for (const auto* f : swept_files(result)) {
    const Table& sweep = sweeps[s++];
    std::vector<int> where;
    for (const auto& c : columns) where.push_back(column_index(sweep, c));
    for (const auto& row : sweep.rows) {
      std::vector<Cell> cells = {f->path};
      if (result.shared) cells.push_back(std::string(f->training ? "training" : "held_out"));
      for (int w : where) cells.push_back(w < 0 ? Cell{} : row[w]);
      t.add_row(std::move(cells));
    }
  }
  return t;
}

Table aggregate_table(const BatchFigures& figures) {
  Table t;
  t.columns = aggregate_columns(figures);
  for (const auto& a : figures.aggregates) t.add_row(aggregate_row(a, figures));
  return t;
}

Table failing_table(const BatchFigures& figures) {
  Table t;
  t.columns = {"rank", "file", "psnr_db", "ssim"};
  for (std::size_t i = 0; i < figures.failing.size(); ++i) {
    const FailingFile& f = figures.failing[i];
    t.add_row({std::int64_t(i + 1), f.path, f.quality.psnr_db, f.quality.ssim});
  }
  return t;
}

Table failures_table(const BatchResult& result) { return notes_table(result.failures); }

Table skipped_table(const BatchResult& result) { return notes_table(result.inputs.skipped); }

std::string target_text(const CoverageTarget& t) {
  std::string s = "PSNR >= " + fixed(t.psnr_db.value_or(NAN), 1) + " dB";
  if (t.ssim) s += " and SSIM >= " + fixed(*t.ssim, 3);
  return s;
}

std::string batch_summary_line(const BatchResult& r, const BatchFigures& figures, const CoverageTarget& target) {
  const std::size_t swept = swept_files(r).size();
  std::ostringstream o;
  o << swept << " of " << r.files.size() << " file(s) swept";
  o << " (" << r.failures.size() << " failed, " << r.inputs.skipped.size() << " skipped) in " << fixed(r.seconds, 1)
    << " s";
  if (swept == 0) return o.str();
  const Recommendation& rec = figures.recommendation;
  if (rec.found) {
    const KCoverage& c = rec.per_k[rec.k_index];
    o << "; recommended k = " << rec.k << ": " << c.meeting << " of " << c.total << " files ("
      << fixed(100.0 * c.share, 0) << "%) reach " << target_text(target) << ", total "
      << std::int64_t(std::llround(figures.recommended_stored_values)) << " stored values ("
      << fixed(100.0 * figures.recommended_stored_values / figures.raw_samples, 1) << "% of raw)";
  } else if (!rec.per_k.empty()) {
    const auto best = std::max_element(rec.per_k.begin(), rec.per_k.end(),
                                       [](const KCoverage& a, const KCoverage& b) { return a.share < b.share; });
    o << "; no swept k lets " << fixed(100.0 * target.coverage, 0) << "% of files reach " << target_text(target)
      << " (best: k = " << best->k << ", " << fixed(100.0 * best->share, 0) << "%)";
  }
  return o.str();
}

}  // namespace pcasweep
