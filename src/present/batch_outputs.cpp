#include "present/batch_outputs.hpp"

#include <cmath>

#include "present/batch_report.hpp"
#include "present/batch_tables.hpp"
#include "present/output_folder.hpp"
#include "present/tool_json.hpp"
#include "report/html.hpp"

namespace pcasweep {

namespace {

nlohmann::json inputs_json(const BatchResult& r) {
  return {{"files", r.files.size()},
          {"swept", swept_files(r).size()},
          {"failed", to_json(failures_table(r))},
          {"skipped", to_json(skipped_table(r))}};
}

// What sharing one basis saves at each k: (files − 1) bases of k·d + d values.
nlohmann::json sharing_saving_json(const BatchResult& r, const std::vector<int>& ks) {
  nlohmann::json saving = nlohmann::json::array();
  const double d = double(r.shared->dimension);
  const double others = double(swept_files(r).size()) - 1.0;
  for (int k : ks)
    saving.push_back({{"k", k},
                      {"basis_values", std::int64_t(k * d + d)},
                      {"values_saved_by_sharing", std::int64_t((k * d + d) * others)},
                      {"bytes_saved_as_float32", std::int64_t(4.0 * (k * d + d) * others)}});
  return saving;
}

nlohmann::json basis_json(const BatchResult& r, const std::vector<int>& ks) {
  nlohmann::json basis = {{"mode", r.shared ? "shared" : "per-file"}};
  if (!r.shared) return basis;
  std::size_t held_out = 0;
  for (const auto* f : swept_files(r)) held_out += f->training ? 0 : 1;
  basis["training_files"] = r.shared->training_files;
  basis["training_files_outside_batch"] = r.shared->training_extra;
  basis["held_out_files"] = held_out;
  basis["observations"] = r.shared->observations;
  basis["dimension"] = r.shared->dimension;
  basis["solver"] = {{"name", r.shared->solve_report.solver}, {"reason", r.shared->solve_report.reason}};
  basis["total_variance"] = r.shared->basis.total_variance;
  basis["saving"] = sharing_saving_json(r, ks);
  basis["saving_note"] =
      "storing one basis (k*d + d values) for all files instead of one per file saves (files - 1) of them; "
      "bytes_saved_as_float32 prices each value at 4 bytes";
  return basis;
}

nlohmann::json target_json(const CoverageTarget& t) {
  return {{"psnr_db", t.psnr_db ? nlohmann::json(*t.psnr_db) : nlohmann::json()}, {"ssim", t.ssim ? nlohmann::json(*t.ssim) : nlohmann::json()}, {"coverage", t.coverage}};
}

nlohmann::json recommendation_json(const BatchFigures& figures) {
  const Recommendation& rec = figures.recommendation;
  nlohmann::json rj = {{"found", rec.found}};
  if (rec.found) {
    const KCoverage& c = rec.per_k[rec.k_index];
    rj.update({{"k", rec.k},
               {"files_meeting", c.meeting},
               {"files", c.total},
               {"share", c.share},
               {"stored_values_total", std::int64_t(std::llround(figures.recommended_stored_values))},
               {"raw_samples_total", std::int64_t(std::llround(figures.raw_samples))},
               {"failing", to_json(failing_table(figures))}});
    if (figures.has_bytes) rj["bytes_total"] = std::int64_t(std::llround(figures.recommended_bytes));
  }
  nlohmann::json per_k = nlohmann::json::array();
  for (const auto& c : rec.per_k)
    per_k.push_back({{"k", c.k}, {"files_meeting", c.meeting}, {"files", c.total}, {"share", c.share}});
  rj["per_k"] = per_k;
  return rj;
}

nlohmann::json files_json(const BatchResult& r) {
  nlohmann::json files = nlohmann::json::array();
  for (const auto& f : r.files) {
    nlohmann::json fj = {{"file", f.path}, {"ok", f.ok}, {"seconds", f.seconds}};
    if (!f.ok)
      fj["error"] = f.error;
    else
      fj.update({{"width", f.width}, {"height", f.height}, {"channels", f.channels}, {"bit_depth", f.bit_depth},
                 {"observations", f.observations}, {"dimension", f.dimension}, {"rank", f.rank}});
    if (r.shared) fj["subset"] = f.training ? "training" : "held_out";
    files.push_back(std::move(fj));
  }
  return files;
}

}  // namespace

nlohmann::json batch_summary_json(const BatchStudy& study, const BatchSettings& s) {
  const BatchResult& r = study.result;
  const BatchFigures& figures = study.figures;
  nlohmann::json j;
  j["tool"] = tool_json();
  j["tool"]["command"] = "batch";
  j["settings"] = s.settings_json;
  j["inputs"] = inputs_json(r);
  j["basis"] = basis_json(r, figures.ks);
  j["parallel"] = {{"threads", r.threads_used}, {"mode", r.parallel_mode}};
  j["ks"] = figures.ks;
  j["target"] = target_json(s.target);
  j["recommendation"] = recommendation_json(figures);
  j["aggregate"] = to_json(aggregate_table(figures));
  j["files"] = files_json(r);
  j["summary"] = batch_summary_line(r, figures, s.target);
  j["seconds"] = r.seconds;
  j["outputs"] = {{"per_file_per_k", "batch.csv"}, {"aggregate", "aggregate.csv"},
                  {"failing_at_recommended_k", "failing_files.csv"}, {"failures", "failures.csv"},
                  {"report", s.write_report ? nlohmann::json("report.html") : nlohmann::json()}};
  j["size_estimate_note"] =
      r.shared ? "per-file stored_values = N*k (coefficients only); the shared basis (k*d + d) is counted once in "
                 "the totals. Counts of numbers kept, not bytes."
               : "stored_values = k*d + N*k + d per file (basis, coefficients, mean): numbers kept, not bytes.";
  return j;
}

nlohmann::json write_batch_outputs(const BatchStudy& study, const BatchSettings& s, const std::string& out_dir) {
  const OutputFolder out(out_dir);
  out.write("batch.csv", render_csv(batch_table(study.result)));
  out.write("aggregate.csv", render_csv(aggregate_table(study.figures)));
  out.write("failing_files.csv", render_csv(failing_table(study.figures)));
  out.write("failures.csv", render_csv(failures_table(study.result)));
  const nlohmann::json j = batch_summary_json(study, s);
  if (s.write_report && !swept_files(study.result).empty())
    out.write("report.html", render_report_html(batch_report(study, s)));
  out.write("summary.json", j.dump(2) + "\n");
  return j;
}

}  // namespace pcasweep
