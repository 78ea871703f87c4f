// Outputs of a batch: tables, summary.json, and report.html (pipeline/batch.hpp).
#include <algorithm>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <sstream>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "core/format.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "pipeline/batch.hpp"
#include "pipeline/batch_detail.hpp"
#include "pipeline/file_visuals.hpp"
#include "pipeline/k_choice.hpp"
#include "report/colormap.hpp"
#include "report/html.hpp"
#include "report/svg.hpp"

namespace pcasweep {

namespace fs = std::filesystem;
using namespace detail;

namespace {

std::vector<const FileResult*> ok_files(const BatchResult& r) {
  std::vector<const FileResult*> out;
  for (const auto& f : r.files)
    if (f.ok) out.push_back(&f);
  return out;
}

std::string fixed(double v, int decimals) { return format_fixed(v, decimals, "n/a"); }

std::string target_text(const CoverageTarget& t) {
  std::string s = "PSNR >= " + fixed(t.psnr_db, 1) + " dB";
  if (t.ssim) s += " and SSIM >= " + fixed(*t.ssim, 3);
  return s;
}

// Total stored values at k for the files in `files` (shared basis counted once).
double stored_total(const BatchResult& r, int k) {
  double total = 0.0;
  for (const auto* f : ok_files(r)) total += stored_at(*f, k);
  if (r.shared) total += double(k) * double(r.shared->dimension) + double(r.shared->dimension);
  return total;
}

double raw_total(const BatchResult& r) {
  double total = 0.0;
  for (const auto* f : ok_files(r)) total += double(f->width) * f->height * f->channels;
  return total;
}

std::string sample_bytes(const Image& img) {
  std::string out;
  if (img.bit_depth == 8) {
    out.resize(img.samples.size());
    for (std::size_t i = 0; i < img.samples.size(); ++i) out[i] = char(img.samples[i]);
  } else {
    out.resize(img.samples.size() * 2);
    for (std::size_t i = 0; i < img.samples.size(); ++i) {
      out[2 * i] = char(img.samples[i] & 0xff);
      out[2 * i + 1] = char(img.samples[i] >> 8);
    }
  }
  return out;
}

// Component j of a patch basis as a small image: 128 + 127·v/max|v| per sample.
Image component_image(const Basis& b, int j, const PatchOptions& p, int channels) {
  const bool joint = p.colour == ColourMode::joint;
  const int c_in = joint ? channels : 1;
  const int c_out = c_in >= 3 ? 3 : 1;
  Image img = make_image(p.patch_width, p.patch_height, c_out, 8);
  const Eigen::VectorXd v = b.components.col(j);
  const double scale = std::max(v.cwiseAbs().maxCoeff(), 1e-300);
  for (int cell = 0; cell < img.width * img.height; ++cell)
    for (int ch = 0; ch < c_out; ++ch) {
      const double x = v(Eigen::Index(cell) * c_in + ch);
      img.samples[std::size_t(cell) * c_out + ch] = std::uint16_t(std::lround(127.5 + 127.0 * x / scale));
    }
  return img;
}

std::vector<std::size_t> choose_sample(std::size_t n, int max_count, const std::vector<std::size_t>& must) {
  std::vector<std::size_t> pick;
  if (max_count <= 0 || n == 0) return pick;
  const std::size_t m = std::min<std::size_t>(n, std::size_t(max_count));
  for (std::size_t i = 0; i < m; ++i) pick.push_back(i * n / m);
  for (std::size_t w : must) {
    if (std::find(pick.begin(), pick.end(), w) != pick.end()) continue;
    if (pick.size() < m) pick.push_back(w);
    else pick.back() = w;
    break;  // the worst failing file only
  }
  std::sort(pick.begin(), pick.end());
  pick.erase(std::unique(pick.begin(), pick.end()), pick.end());
  return pick;
}

ImageAnalysis reanalyse(const FileResult& f, const BatchResult& r, const BatchSettings& s) {
  if (r.shared) {
    ImageAnalysis a = observe_file(f.path, s.image);
    a.basis = r.shared->basis;
    return a;
  }
  return analyze_image(f.path, s.image);
}

ChartSpec quality_chart(const Table& agg, const std::string& metric, const std::string& unit,
                        const std::optional<double>& target, bool shared) {
  ChartSpec c;
  c.title = metric == "psnr_db" ? "PSNR across files against k" : "SSIM across files against k";
  c.subtitle = "each point summarises every file at that k (written, rounded and clipped images)";
  c.x_label = "k, components kept";
  c.y_label = metric == "psnr_db" ? "PSNR (dB)" : "SSIM";
  c.integer_x = true;
  const int sc = column_index(agg, "subset"), kc = column_index(agg, "k");
  struct Want { std::string subset, stat, name; MarkerShape marker; std::string dash; };
  std::vector<Want> wants = {{"all", "min", "minimum", MarkerShape::triangle_down, "2 3"},
                             {"all", "p5", "5th percentile", MarkerShape::square, "6 4"},
                             {"all", "median", "median", MarkerShape::circle, ""},
                             {"all", "mean", "mean", MarkerShape::diamond, "1 0"}};
  if (shared) wants.push_back({"held_out", "median", "median, held-out files", MarkerShape::cross, "8 3"});
  for (const auto& w : wants) {
    const int vc = column_index(agg, metric + "_" + w.stat);
    if (vc < 0) continue;
    ChartSeries s;
    s.name = w.name;
    s.style.marker = w.marker;
    s.style.dash = w.dash;
    for (const auto& row : agg.rows) {
      if (std::get<std::string>(row[sc]) != w.subset) continue;
      const double y = cell_number(row[vc]);
      s.x.push_back(cell_number(row[kc]));
      s.y.push_back(std::isinf(y) ? std::numeric_limits<double>::quiet_NaN() : y);
    }
    c.series.push_back(std::move(s));
  }
  if (target) c.lines.push_back({false, *target, "target " + fixed(*target, metric == "psnr_db" ? 1 : 3) + unit});
  c.note = "Exact copies (PSNR = infinity) are left off the plot.";
  return c;
}

ChartSpec size_chart(const Table& agg, bool bytes, double target) {
  ChartSpec c;
  c.title = bytes ? "Rate and distortion: median PSNR against mean bits per pixel"
                  : "Size and distortion: median PSNR against values kept";
  c.subtitle = bytes ? "codec bytes per file" : "stored values (basis, coefficients, mean) as a share of raw samples";
  c.x_label = bytes ? "mean bits per pixel" : "stored values / raw samples";
  c.y_label = "median PSNR (dB)";
  const int sc = column_index(agg, "subset"), kc = column_index(agg, "k");
  const int xc = column_index(agg, bytes ? "bits_per_pixel_mean" : "stored_ratio");
  const int yc = column_index(agg, "psnr_db_median");
  ChartSeries s;
  s.name = "PCA at each k";
  s.style.marker = MarkerShape::circle;
  for (const auto& row : agg.rows) {
    if (std::get<std::string>(row[sc]) != "all") continue;
    const double y = cell_number(row[yc]);
    if (std::isinf(y)) continue;
    s.x.push_back(cell_number(row[xc]));
    s.y.push_back(y);
    (void)kc;
  }
  c.series.push_back(std::move(s));
  c.lines.push_back({false, target, "target " + fixed(target, 1) + " dB"});
  return c;
}

}  // namespace

std::string batch_summary_line(const BatchResult& r, const BatchSettings& s) {
  const auto ok = ok_files(r);
  std::ostringstream o;
  o << ok.size() << " of " << r.files.size() << " file(s) swept";
  std::size_t failed = r.failures.size();
  o << " (" << failed << " failed, " << r.inputs.skipped.size() << " skipped) in " << fixed(r.seconds, 1) << " s";
  if (ok.empty()) return o.str();
  const Recommendation rec = batch_recommendation(r, s.target);
  if (rec.found) {
    const KCoverage& c = rec.per_k[rec.k_index];
    o << "; recommended k = " << rec.k << ": " << c.meeting << " of " << c.total << " files ("
      << fixed(100.0 * c.share, 0) << "%) reach " << target_text(s.target) << ", total "
      << std::int64_t(std::llround(stored_total(r, rec.k))) << " stored values ("
      << fixed(100.0 * stored_total(r, rec.k) / raw_total(r), 1) << "% of raw)";
  } else if (!rec.per_k.empty()) {
    const auto best = std::max_element(rec.per_k.begin(), rec.per_k.end(),
                                       [](const KCoverage& a, const KCoverage& b) { return a.share < b.share; });
    o << "; no swept k lets " << fixed(100.0 * s.target.coverage, 0) << "% of files reach " << target_text(s.target)
      << " (best: k = " << best->k << ", " << fixed(100.0 * best->share, 0) << "%)";
  }
  return o.str();
}

nlohmann::json write_batch_outputs(const BatchResult& r, const BatchSettings& s, const std::string& out_dir) {
  std::error_code ec;
  fs::create_directories(out_dir, ec);
  if (ec) throw data_error(out_dir + ": cannot create output folder: " + ec.message());
  const auto path_in = [&](const std::string& name) { return (fs::path(out_dir) / name).string(); };
  const auto ok = ok_files(r);
  const Table batch = batch_table(r);
  const Table agg = aggregate_table(r, s.target);
  const Recommendation rec = batch_recommendation(r, s.target);
  const std::vector<int> ks = batch_ks(r);

  // failing files at the recommended k, worst first
  Table failing;
  failing.columns = {"rank", "file", "psnr_db", "ssim"};
  if (rec.found)
    for (std::size_t i = 0; i < rec.failing.size(); ++i) {
      const FileResult& f = *ok[rec.failing[i]];
      const FileQuality q = quality_at(f, rec.k);
      failing.add_row({std::int64_t(i + 1), f.path, q.psnr_db, q.ssim});
    }
  Table failures;
  failures.columns = {"file", "reason"};
  for (const auto& f : r.failures) failures.add_row({f.path, f.reason});
  Table skipped;
  skipped.columns = {"file", "reason"};
  for (const auto& f : r.inputs.skipped) skipped.add_row({f.path, f.reason});

  write_file_atomic(path_in("batch.csv"), render_csv(batch));
  write_file_atomic(path_in("aggregate.csv"), render_csv(agg));
  write_file_atomic(path_in("failing_files.csv"), render_csv(failing));
  write_file_atomic(path_in("failures.csv"), render_csv(failures));

  // summary.json (schema: docs/batch.md)
  nlohmann::json j;
  j["tool"] = {{"name", "pcasweep"}, {"version", PCASWEEP_VERSION}, {"command", "batch"}};
  j["settings"] = s.settings_json;
  j["inputs"] = {{"files", r.files.size()},
                 {"swept", ok.size()},
                 {"failed", to_json(failures)},
                 {"skipped", to_json(skipped)}};
  nlohmann::json basis = {{"mode", r.shared ? "shared" : "per-file"}};
  if (r.shared) {
    std::size_t held_out = 0;
    for (const auto* f : ok) held_out += f->training ? 0 : 1;
    basis["training_files"] = r.shared->training_files;
    basis["training_files_outside_batch"] = r.shared->training_extra;
    basis["held_out_files"] = held_out;
    basis["observations"] = r.shared->observations;
    basis["dimension"] = r.shared->dimension;
    basis["solver"] = {{"name", r.shared->basis.solver}, {"reason", r.shared->basis.solver_reason}};
    basis["total_variance"] = r.shared->basis.total_variance;
    nlohmann::json saving = nlohmann::json::array();
    const double d = double(r.shared->dimension);
    for (int k : ks)
      saving.push_back({{"k", k},
                        {"basis_values", std::int64_t(k * d + d)},
                        {"values_saved_by_sharing", std::int64_t((k * d + d) * (double(ok.size()) - 1.0))},
                        {"bytes_saved_as_float32", std::int64_t(4.0 * (k * d + d) * (double(ok.size()) - 1.0))}});
    basis["saving"] = saving;
    basis["saving_note"] =
        "storing one basis (k*d + d values) for all files instead of one per file saves (files - 1) of them; "
        "bytes_saved_as_float32 prices each value at 4 bytes";
  }
  j["basis"] = basis;
  j["parallel"] = {{"threads", r.threads_used}, {"mode", r.parallel_mode}};
  j["ks"] = ks;
  j["target"] = {{"psnr_db", s.target.psnr_db},
                 {"ssim", s.target.ssim ? nlohmann::json(*s.target.ssim) : nlohmann::json()},
                 {"coverage", s.target.coverage}};
  nlohmann::json rj = {{"found", rec.found}};
  if (rec.found) {
    const KCoverage& c = rec.per_k[rec.k_index];
    rj.update({{"k", rec.k},
               {"files_meeting", c.meeting},
               {"files", c.total},
               {"share", c.share},
               {"stored_values_total", std::int64_t(std::llround(stored_total(r, rec.k)))},
               {"raw_samples_total", std::int64_t(std::llround(raw_total(r)))},
               {"failing", to_json(failing)}});
    if (column_index(agg, "bytes_total") >= 0) {
      double bytes = 0.0;
      for (const auto* f : ok) bytes += value_at(*f, rec.k, kBytesColumn);
      rj["bytes_total"] = std::int64_t(std::llround(bytes));
    }
  }
  nlohmann::json per_k = nlohmann::json::array();
  for (const auto& c : rec.per_k)
    per_k.push_back({{"k", c.k}, {"files_meeting", c.meeting}, {"files", c.total}, {"share", c.share}});
  rj["per_k"] = per_k;
  j["recommendation"] = rj;
  j["aggregate"] = to_json(agg);
  nlohmann::json files = nlohmann::json::array();
  for (const auto& f : r.files) {
    nlohmann::json fj = {{"file", f.path}, {"ok", f.ok}, {"seconds", f.seconds}};
    if (!f.ok) fj["error"] = f.error;
    else
      fj.update({{"width", f.width}, {"height", f.height}, {"channels", f.channels}, {"bit_depth", f.bit_depth},
                 {"observations", f.observations}, {"dimension", f.dimension}, {"rank", f.rank}});
    if (r.shared) fj["subset"] = f.training ? "training" : "held_out";
    files.push_back(std::move(fj));
  }
  j["files"] = files;
  j["summary"] = batch_summary_line(r, s);
  j["seconds"] = r.seconds;
  j["outputs"] = {{"per_file_per_k", "batch.csv"}, {"aggregate", "aggregate.csv"},
                  {"failing_at_recommended_k", "failing_files.csv"}, {"failures", "failures.csv"},
                  {"report", s.write_report ? nlohmann::json("report.html") : nlohmann::json()}};
  j["size_estimate_note"] =
      r.shared ? "per-file stored_values = N*k (coefficients only); the shared basis (k*d + d) is counted once in "
                 "the totals. Counts of numbers kept, not bytes."
               : "stored_values = k*d + N*k + d per file (basis, coefficients, mean): numbers kept, not bytes.";

  if (s.write_report && !ok.empty()) {
    // The sample files are analysed again here, one at a time, on one thread
    // (see run_batch: OpenMP's small parallel regions cost more than they gain).
    const SerialLinearAlgebra serial(true);
    HtmlReport h;
    h.title = "pcasweep batch study: " + std::to_string(ok.size()) + " image(s)";
    h.headline.push_back(batch_summary_line(r, s));
    if (!r.failures.empty())
      h.headline.push_back(std::to_string(r.failures.size()) + " input(s) failed; see \"Failures\" below.");
    const int show_k = rec.found ? rec.k : (ks.empty() ? 1 : ks.back());
    h.settings = {{"Inputs", std::to_string(r.files.size()) + " file(s) found, " + std::to_string(ok.size()) +
                                 " swept, " + std::to_string(r.failures.size()) + " failed, " +
                                 std::to_string(r.inputs.skipped.size()) + " skipped"},
                  {"Basis", r.shared ? "shared: learned once from " + std::to_string(r.shared->training_files.size()) +
                                           " training file(s), applied to all"
                                     : "per file: each file its own basis"},
                  {"Layout", s.settings_json.value("layout_text", std::string("patches"))},
                  {"k swept", [&] {
                     std::string t;
                     for (int k : ks) t += (t.empty() ? "" : ", ") + std::to_string(k);
                     return t;
                   }()},
                  {"Target", target_text(s.target) + " for at least " + fixed(100.0 * s.target.coverage, 0) + "% of files"},
                  {"Threads", std::to_string(r.threads_used) + " (" +
                                  (r.parallel_mode == "files" ? "files in parallel, linear algebra on one thread each"
                                                              : "one file at a time, linear algebra in parallel") + ")"}};
    // Recommendation and aggregates
    HtmlSection recsec;
    recsec.title = "Recommendation";
    if (rec.found) {
      const KCoverage& c = rec.per_k[rec.k_index];
      recsec.intro = "Smallest swept k at which at least " + fixed(100.0 * s.target.coverage, 0) + "% of files reach " +
                     target_text(s.target) + ": k = " + std::to_string(rec.k) + " (" + std::to_string(c.meeting) +
                     " of " + std::to_string(c.total) + " files). Total size then: " +
                     std::to_string(std::llround(stored_total(r, rec.k))) + " stored values, " +
                     fixed(100.0 * stored_total(r, rec.k) / raw_total(r), 2) + "% of the raw samples. " +
                     (rec.failing.empty() ? "Every file meets the target." : "Files below the target, worst first:");
      if (!rec.failing.empty()) {
        Table shown = failing;
        if (shown.rows.size() > 50) shown.rows.resize(50);
        recsec.tables.push_back(shown);
        recsec.table_captions.push_back(failing.rows.size() > 50 ? "first 50 of " + std::to_string(failing.rows.size()) +
                                                                        " (all in failing_files.csv)"
                                                                  : "");
      }
    } else {
      recsec.intro = "No swept k lets " + fixed(100.0 * s.target.coverage, 0) + "% of files reach " + target_text(s.target) +
                     ". The images below are shown at the largest swept k.";
    }
    h.sections.push_back(recsec);
    HtmlSection qsec;
    qsec.title = "Quality against k";
    qsec.intro = "Per k, across files: minimum, 5th percentile (numpy's linear rule), median and mean." +
                 std::string(r.shared ? " With a shared basis, 'held_out' rows are files the basis was not learned from; "
                                        "'training' rows are the files it was learned from."
                                      : "");
    qsec.charts.push_back({render_svg_chart(quality_chart(agg, "psnr_db", " dB", s.target.psnr_db, bool(r.shared))),
                           "PSNR across files at each k; dashed line: the target."});
    if (column_index(agg, "ssim_median") >= 0)
      qsec.charts.push_back({render_svg_chart(quality_chart(agg, "ssim", "", s.target.ssim, bool(r.shared))),
                             "SSIM (Wang et al. 2004) across files at each k."});
    const bool bytes = column_index(agg, "bits_per_pixel_mean") >= 0;
    qsec.charts.push_back({render_svg_chart(size_chart(agg, bytes, s.target.psnr_db)),
                           bytes ? "Rate against distortion (codec bytes)."
                                 : "Size (numbers kept, an estimate, not coded bytes) against distortion."});
    qsec.tables.push_back(agg);
    qsec.table_captions.push_back("aggregate.csv");
    h.sections.push_back(qsec);
    if (!r.failures.empty() || !r.inputs.skipped.empty()) {
      HtmlSection fsec;
      fsec.title = "Failures and skipped inputs";
      fsec.intro = "Files that could not be read or swept are listed with the reason; the batch went on without them.";
      if (!failures.rows.empty()) {
        fsec.tables.push_back(failures);
        fsec.table_captions.push_back("Failures (failures.csv)");
      }
      if (!skipped.rows.empty()) {
        Table sk = skipped;
        if (sk.rows.size() > 100) sk.rows.resize(100);
        fsec.tables.push_back(sk);
        fsec.table_captions.push_back("Skipped");
      }
      h.sections.push_back(fsec);
    }

    // Images: a sample of files, analysed again one at a time.
    std::vector<std::size_t> must;
    if (rec.found && !rec.failing.empty()) must.push_back(rec.failing.front());
    const std::vector<std::size_t> sample = choose_sample(ok.size(), s.report_sample, must);
    h.panels_note = "Showing " + std::to_string(sample.size()) + " of " + std::to_string(ok.size()) +
                    " file(s) (at most " + std::to_string(s.report_sample) +
                    ": evenly spaced through the batch, plus the worst file at the recommended k). Each at k = " +
                    std::to_string(show_k) + (rec.found ? " (recommended)" : " (largest swept)") +
                    ", or its largest k if smaller.";
    h.error_scale_note = "per-pixel |original − reconstruction| averaged over channels, scaled to each file's largest "
                         "error (stated under the map); a viridis-like map, readable with colour-vision deficiencies and in gray.";
    for (int i = 0; i <= 8; ++i) h.error_scale_colours.push_back(viridis_like_hex(i / 8.0));
    VisualSettings vs;
    h.viewer_note = "Move the slider (mouse, or focus it and use the arrow keys) to reconstruct at any k. Each viewer "
                    "shows one crop of the file at full resolution (1:1, at most " + std::to_string(vs.crop_side) + "×" +
                    std::to_string(vs.crop_side) + " pixels: the region with the finest detail; a smaller image is "
                    "shown whole). For d ≤ " + std::to_string(vs.live_max_dimension) +
                    " the crop is rebuilt live in your browser from the embedded mean, components and the crop's own "
                    "patch coefficients (float32), rounded and clipped like the written files, and the PSNR beside it is "
                    "that of the crop; larger d step between precomputed reconstructions of the crop at the swept k." +
                    std::string(s.coding.enabled ? " With --quality the tables measure the decoded (quantised) "
                                                   "images; the sliders show the unquantised reconstruction." : "") +
                    " Viewers for the first " +
                    std::to_string(s.live_viewers) + " sampled file(s).";
    bool charts_done = false;
    for (std::size_t si = 0; si < sample.size(); ++si) {
      const FileResult& f = *ok[sample[si]];
      ImageAnalysis a;
      try {
        a = reanalyse(f, r, s);
      } catch (const Error&) {
        continue;  // the file changed since the sweep; leave it out of the pictures
      }
      const int k = std::min<int>(show_k, int(a.basis.rank()));
      const PatchLayout* patches = a.patches();
      const bool with_viewer = int(h.viewers.size()) < s.live_viewers && patches;
      const FileVisuals fv = file_visuals(a, k, with_viewer ? file_ks(s.ks, a.basis.rank()) : std::vector<int>{}, vs);
      HtmlFilePanel p;
      p.file = f.path;
      const FileQuality q = quality_at(f, k);
      p.note = "k = " + std::to_string(k) + ": PSNR " + fixed(fv.quality.psnr_db, 2) + " dB" +
               (std::isnan(fv.ssim) ? "" : ", SSIM " + fixed(fv.ssim, 4)) +
               (meets_target(q, s.target) ? " — meets the target" : " — below the target") +
               (r.shared ? (f.training ? " (training file)" : " (held-out file)") : "") +
               "; largest error in the image " + fixed(fv.quality.max_abs_error, 0) + " levels.";
      const int sc = fv.preview_scale;
      p.preview_title = sc == 1 ? "The whole image at 1:1"
                                : "The whole image reduced 1:" + std::to_string(sc) + " (each pixel is the mean of " +
                                      std::to_string(sc) + "×" + std::to_string(sc) + " pixels; the error map shows "
                                      "the mean error of each block)";
      const auto png8 = [](const Image& im) {
        PngWriteOptions o;
        o.level = 9;  // the report's images are small and kept: smallest files
        o.filter = PngFilter::adaptive;
        return encode_png(im, o);
      };
      const auto heat = [&](const std::vector<double>& values, int w, int hgt, double max) {
        return png8(colour_map_image(values, w, hgt, max));
      };
      p.original = {png8(fv.preview_original), "Original image " + f.path + (sc > 1 ? ", reduced" : ""), "original"};
      p.reconstruction = {png8(fv.preview_reconstruction),
                          "Reconstruction of " + f.path + " with k = " + std::to_string(k) + (sc > 1 ? ", reduced" : ""),
                          "reconstruction, k = " + std::to_string(k)};
      p.error_map = {heat(fv.preview_error, fv.preview_original.width, fv.preview_original.height, fv.preview_error_max),
                     "Heat map of the absolute error of " + f.path + " at k = " + std::to_string(k) +
                         "; brighter is larger, the largest shown is " + fixed(fv.preview_error_max, 1),
                     "error heat map (yellow = " + fixed(fv.preview_error_max, 1) + " levels)"};
      if (sc > 1)
        for (const VisualCrop& c : fv.crops) {
          HtmlTriple t;
          const std::string where = std::to_string(c.crop.width) + "×" + std::to_string(c.crop.height) + " at x = " +
                                    std::to_string(c.crop.x) + ", y = " + std::to_string(c.crop.y);
          t.title = "1:1 crop, " + c.label + " (" + where + "; PSNR of the crop " + fixed(c.psnr_db, 2) + " dB)";
          t.original = {png8(c.original), "Original, " + c.label + ", " + where, "original, 1:1"};
          t.reconstruction = {png8(c.reconstruction), "Reconstruction with k = " + std::to_string(k) + ", " + c.label,
                              "reconstruction, k = " + std::to_string(k) + ", 1:1"};
          t.error_map = {heat(c.error, c.crop.width, c.crop.height, c.max_error),
                         "Heat map of the absolute error in the crop; the largest is " + fixed(c.max_error, 1),
                         "error (yellow = " + fixed(c.max_error, 1) + " levels)"};
          p.crops.push_back(std::move(t));
        }
      h.panels.push_back(std::move(p));

      if (!charts_done && patches) {
        charts_done = true;
        HtmlSection ssec;
        ssec.title = "Spectrum";
        ssec.intro = r.shared ? "Eigenvalues of the shared basis, with the k each rule suggests."
                              : "Eigenvalues of " + f.path + "'s own basis (every file has its own; this is the first "
                                "sampled file), with the k each rule suggests.";
        try {
          const KChoice choice = choose_k(a, KChoiceSettings{});
          const std::string src = r.shared ? "shared basis" : f.path;
          ssec.charts.push_back({render_svg_chart(scree_chart(a.basis, choice, true, src)),
                                 "Scree: eigenvalue of each component (log scale), rules' k marked."});
          ssec.charts.push_back({render_svg_chart(cumulative_chart(a.basis, choice, src)),
                                 "Cumulative proportion of variance against k."});
          ssec.tables.push_back(rules_table(choice.rules));
          ssec.table_captions.push_back("Rules for k");
        } catch (const Error& e) {
          ssec.intro += std::string(" (charts unavailable: ") + e.what() + ")";
        }
        h.sections.insert(h.sections.begin() + 1, ssec);
        const int shown = int(std::min<Eigen::Index>(16, a.basis.rank()));
        for (int j = 0; j < shown; ++j)
          h.components.push_back({encode_png(component_image(a.basis, j, patches->options(), a.image().channels)),
                                  "Component " + std::to_string(j + 1) + " as a " +
                                      std::to_string(patches->options().patch_height) + "×" +
                                      std::to_string(patches->options().patch_width) + " patch",
                                  "#" + std::to_string(j + 1) + ", " +
                                      fixed(100.0 * a.basis.eigenvalues(j) / a.basis.total_variance, 1) + "%",
                                  true});
        h.components_note = std::string("The first ") + std::to_string(shown) + " components of " +
                            (r.shared ? "the shared basis" : f.path + "'s basis") +
                            " as patches: mid-gray is 0, lighter positive, darker negative (each scaled to its largest "
                            "entry). The percentage is the share of variance each carries.";
      }
      if (with_viewer) {
        const CropViewer& cv = fv.viewer;
        const PatchOptions& po = patches->options();
        HtmlViewer v;
        v.file = f.path;
        v.original = {png8(cv.original), "Original image " + f.path + (cv.crop.width < a.image().width ||
                                                                         cv.crop.height < a.image().height ? ", 1:1 crop" : ""),
                      "original"};
        v.initial_k = k;
        v.ks = file_ks(s.ks, a.basis.rank());
        v.live = cv.live;
        v.width = cv.crop.width;
        v.height = cv.crop.height;
        v.image_x = cv.crop.x;
        v.image_y = cv.crop.y;
        v.whole_image = cv.crop.width == a.image().width && cv.crop.height == a.image().height;
        if (cv.live) {
          v.channels = a.image().channels;
          v.bit_depth = a.image().bit_depth;
          v.patch_height = po.patch_height;
          v.patch_width = po.patch_width;
          v.stride_y = po.stride_y;
          v.stride_x = po.stride_x;
          v.patches_across = cv.crop.px1 - cv.crop.px0;
          v.patches_down = cv.crop.py1 - cv.crop.py0;
          v.padded_width = (v.patches_across - 1) * po.stride_x + po.patch_width;
          v.padded_height = (v.patches_down - 1) * po.stride_y + po.patch_height;
          v.crop_x = cv.crop.x - cv.crop.px0 * po.stride_x;
          v.crop_y = cv.crop.y - cv.crop.py0 * po.stride_y;
          v.joint_colour = po.colour == ColourMode::joint;
          v.dimension = cv.dimension;
          v.rank = cv.rank;
          v.observations = cv.observations;
          v.mean_f32 = cv.mean_f32;
          v.components_f32 = cv.components_f32;
          v.coefficients_f32 = cv.coefficients_f32;
          v.original_samples = sample_bytes(cv.original);
        } else {
          v.ks = cv.ks;
          for (const Image& im : cv.images) v.pngs.push_back(png8(im));
          v.psnr_db = cv.psnr_db;
        }
        h.viewers.push_back(std::move(v));
      }
    }
    write_file_atomic(path_in("report.html"), render_report_html(h));
  }
  write_file_atomic(path_in("summary.json"), j.dump(2) + "\n");
  return j;
}

}  // namespace pcasweep
