#include "present/batch_report.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/format.hpp"
#include "io/png.hpp"
#include "present/batch_tables.hpp"
#include "present/component_images.hpp"
#include "present/k_charts.hpp"
#include "present/k_rules.hpp"
#include "report/colormap.hpp"
#include "report/svg.hpp"

namespace pcasweep {

namespace {

std::string fixed(double v, int decimals) { return format_fixed(v, decimals, "n/a"); }

// The report's images are small and kept: the smallest PNG files.
std::string report_png(const Image& image) {
  PngWriteOptions o;
  o.level = 9;
  o.filter = PngFilter::adaptive;
  return encode_png(image, o);
}

std::string heat_png(const std::vector<double>& values, int width, int height, double max) {
  return report_png(colour_map_image(values, width, height, max));
}

// Samples as the live viewer reads them: uint8, or uint16 little-endian.
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

std::string ks_text(const std::vector<int>& ks) {
  std::string t;
  for (int k : ks) t += (t.empty() ? "" : ", ") + std::to_string(k);
  return t;
}

std::vector<std::pair<std::string, std::string>> report_settings(const BatchResult& r, const BatchFigures& figures,
                                                                 const BatchSettings& s) {
  const std::size_t swept = swept_files(r).size();
  return {{"Inputs", std::to_string(r.files.size()) + " file(s) found, " + std::to_string(swept) + " swept, " +
                         std::to_string(r.failures.size()) + " failed, " + std::to_string(r.inputs.skipped.size()) +
                         " skipped"},
          {"Basis", r.shared ? "shared: learned once from " + std::to_string(r.shared->training_files.size()) +
                                   " training file(s), applied to all"
                             : "per file: each file its own basis"},
          {"Layout", s.settings_json.value("layout_text", std::string("patches"))},
          {"k swept", ks_text(figures.ks)},
          {"Target", target_text(s.target) + " for at least " + fixed(100.0 * s.target.coverage, 0) + "% of files"},
          {"Threads", std::to_string(r.threads_used) + " (" +
                          (r.parallel_mode == "files" ? "files in parallel, linear algebra on one thread each"
                                                      : "one file at a time, linear algebra in parallel") +
                          ")"}};
}

HtmlSection recommendation_section(const BatchFigures& figures, const CoverageTarget& target) {
  HtmlSection sec;
  sec.title = "Recommendation";
  const Recommendation& rec = figures.recommendation;
  if (!rec.found) {
    sec.intro = "No swept k lets " + fixed(100.0 * target.coverage, 0) + "% of files reach " + target_text(target) +
                ". The images below are shown at the largest swept k.";
    return sec;
  }
  const KCoverage& c = rec.per_k[rec.k_index];
  sec.intro = "Smallest swept k at which at least " + fixed(100.0 * target.coverage, 0) + "% of files reach " +
              target_text(target) + ": k = " + std::to_string(rec.k) + " (" + std::to_string(c.meeting) + " of " +
              std::to_string(c.total) + " files). Total size then: " +
              std::to_string(std::llround(figures.recommended_stored_values)) + " stored values, " +
              fixed(100.0 * figures.recommended_stored_values / figures.raw_samples, 2) + "% of the raw samples. " +
              (rec.failing.empty() ? "Every file meets the target." : "Files below the target, worst first:");
  if (rec.failing.empty()) return sec;
  Table shown = failing_table(figures);
  const std::size_t all = shown.rows.size();
  if (all > 50) shown.rows.resize(50);
  sec.tables.push_back(shown);
  sec.table_captions.push_back(all > 50 ? "first 50 of " + std::to_string(all) + " (all in failing_files.csv)" : "");
  return sec;
}

double spread_stat(const Spread& s, const std::string& stat) {
  if (stat == "min") return s.min;
  if (stat == "p5") return s.p5;
  if (stat == "median") return s.median;
  return s.mean;
}

// PSNR or SSIM across files against k: min, p5, median, mean (and the
// held-out median for a shared basis); exact copies (+inf) left off.
ChartSpec quality_chart(const BatchFigures& figures, bool psnr, const std::optional<double>& target, bool shared) {
  ChartSpec c;
  c.title = psnr ? "PSNR across files against k" : "SSIM across files against k";
  c.subtitle = "each point summarises every file at that k (written, rounded and clipped images)";
  c.x_label = "k, components kept";
  c.y_label = psnr ? "PSNR (dB)" : "SSIM";
  c.integer_x = true;
  struct Want { std::string subset, stat, name; MarkerShape marker; std::string dash; };
  std::vector<Want> wants = {{"all", "min", "minimum", MarkerShape::triangle_down, "2 3"},
                             {"all", "p5", "5th percentile", MarkerShape::square, "6 4"},
                             {"all", "median", "median", MarkerShape::circle, ""},
                             {"all", "mean", "mean", MarkerShape::diamond, "1 0"}};
  if (shared) wants.push_back({"held_out", "median", "median, held-out files", MarkerShape::cross, "8 3"});
  for (const auto& w : wants) {
    ChartSeries s;
    s.name = w.name;
    s.style.marker = w.marker;
    s.style.dash = w.dash;
    for (const KAggregate& a : figures.aggregates) {
      if (a.subset != w.subset) continue;
      const double y = spread_stat(psnr ? a.psnr_db : a.ssim, w.stat);
      s.x.push_back(double(a.k));
      s.y.push_back(std::isinf(y) ? std::numeric_limits<double>::quiet_NaN() : y);
    }
    c.series.push_back(std::move(s));
  }
  if (target) c.lines.push_back({false, *target, "target " + fixed(*target, psnr ? 1 : 3) + (psnr ? " dB" : "")});
  c.note = "Exact copies (PSNR = infinity) are left off the plot.";
  return c;
}

// Median PSNR against the size kept: mean bits per pixel (coded) or stored values / raw samples.
ChartSpec size_chart(const BatchFigures& figures, double target) {
  const bool bytes = figures.has_bytes;
  ChartSpec c;
  c.title = bytes ? "Rate and distortion: median PSNR against mean bits per pixel"
                  : "Size and distortion: median PSNR against values kept";
  c.subtitle = bytes ? "codec bytes per file" : "stored values (basis, coefficients, mean) as a share of raw samples";
  c.x_label = bytes ? "mean bits per pixel" : "stored values / raw samples";
  c.y_label = "median PSNR (dB)";
  ChartSeries s;
  s.name = "PCA at each k";
  s.style.marker = MarkerShape::circle;
  for (const KAggregate& a : figures.aggregates) {
    if (a.subset != "all" || std::isinf(a.psnr_db.median)) continue;
    s.x.push_back(bytes ? a.bits_per_pixel_mean : a.stored_values / a.raw_samples);
    s.y.push_back(a.psnr_db.median);
  }
  c.series.push_back(std::move(s));
  c.lines.push_back({false, target, "target " + fixed(target, 1) + " dB"});
  return c;
}

HtmlSection quality_section(const BatchResult& r, const BatchFigures& figures, const CoverageTarget& target) {
  HtmlSection sec;
  sec.title = "Quality against k";
  sec.intro = "Per k, across files: minimum, 5th percentile (numpy's linear rule), median and mean." +
              std::string(r.shared ? " With a shared basis, 'held_out' rows are files the basis was not learned from; "
                                     "'training' rows are the files it was learned from."
                                   : "");
  const bool shared = bool(r.shared);
  sec.charts.push_back({render_svg_chart(quality_chart(figures, true, target.psnr_db, shared)),
                        "PSNR across files at each k; dashed line: the target."});
  if (figures.has_ssim)
    sec.charts.push_back({render_svg_chart(quality_chart(figures, false, target.ssim, shared)),
                          "SSIM (Wang et al. 2004) across files at each k."});
  sec.charts.push_back({render_svg_chart(size_chart(figures, target.psnr_db.value_or(NAN))),
                        figures.has_bytes ? "Rate against distortion (codec bytes)."
                                          : "Size (numbers kept, an estimate, not coded bytes) against distortion."});
  sec.tables.push_back(aggregate_table(figures));
  sec.table_captions.push_back("aggregate.csv");
  return sec;
}

HtmlSection failures_section(const BatchResult& r) {
  HtmlSection sec;
  sec.title = "Failures and skipped inputs";
  sec.intro = "Files that could not be read or swept are listed with the reason; the batch went on without them.";
  const Table failures = failures_table(r);
  if (!failures.rows.empty()) {
    sec.tables.push_back(failures);
    sec.table_captions.push_back("Failures (failures.csv)");
  }
  Table skipped = skipped_table(r);
  if (!skipped.rows.empty()) {
    if (skipped.rows.size() > 100) skipped.rows.resize(100);
    sec.tables.push_back(skipped);
    sec.table_captions.push_back("Skipped");
  }
  return sec;
}

HtmlSection spectrum_section(const SpectrumVisuals& sp, bool shared) {
  HtmlSection sec;
  sec.title = "Spectrum";
  sec.intro = shared ? "Eigenvalues of the shared basis, with the k each rule suggests."
                     : "Eigenvalues of " + sp.file + "'s own basis (every file has its own; this is the first "
                       "sampled file), with the k each rule suggests.";
  if (!sp.choice) {
    sec.intro += " (charts unavailable: " + sp.choice_error + ")";
    return sec;
  }
  const std::string src = shared ? "shared basis" : sp.file;
  sec.charts.push_back({render_svg_chart(scree_chart(sp.basis, *sp.choice, true, src)),
                        "Scree: eigenvalue of each component (log scale), rules' k marked."});
  sec.charts.push_back({render_svg_chart(cumulative_chart(sp.basis, *sp.choice, src)),
                        "Cumulative proportion of variance against k."});
  sec.tables.push_back(rules_table(sp.choice->rules));
  sec.table_captions.push_back("Rules for k");
  return sec;
}

// The shape of one patch observation: patch width × height × (channels when joint colour, else 1).
Layout::ObservationShape patch_shape(const PatchOptions& p, int channels) {
  return {p.patch_width, p.patch_height, p.colour == ColourMode::joint ? channels : 1};
}

// The first (at most 16) components of the spectrum's basis, as patches.
void add_components(HtmlReport& h, const SpectrumVisuals& sp, bool shared) {
  const PatchOptions& po = sp.patch;
  const int shown = int(std::min<Eigen::Index>(16, sp.basis.rank()));
  for (int j = 0; j < shown; ++j)
    h.components.push_back({encode_png(component_image(sp.basis.components.col(j), patch_shape(po, sp.channels), 1)),
                            "Component " + std::to_string(j + 1) + " as a " + std::to_string(po.patch_height) + "×" +
                                std::to_string(po.patch_width) + " patch",
                            "#" + std::to_string(j + 1) + ", " +
                                fixed(100.0 * sp.basis.eigenvalues(j) / sp.basis.total_variance, 1) +
                                "%",
                            true});
  h.components_note = std::string("The first ") + std::to_string(shown) + " components of " +
                      (shared ? "the shared basis" : sp.file + "'s basis") +
                      " as patches: mid-gray is 0, lighter positive, darker negative (each scaled to its largest "
                      "entry). The percentage is the share of variance each carries.";
}

HtmlTriple crop_triple(const VisualCrop& c, int k) {
  HtmlTriple t;
  const std::string where = std::to_string(c.crop.width) + "×" + std::to_string(c.crop.height) + " at x = " +
                            std::to_string(c.crop.x) + ", y = " + std::to_string(c.crop.y);
  t.title = "1:1 crop, " + c.label + " (" + where + "; PSNR of the crop " + fixed(c.psnr_db, 2) + " dB)";
  t.original = {report_png(c.original), "Original, " + c.label + ", " + where, "original, 1:1"};
  t.reconstruction = {report_png(c.reconstruction), "Reconstruction with k = " + std::to_string(k) + ", " + c.label,
                      "reconstruction, k = " + std::to_string(k) + ", 1:1"};
  t.error_map = {heat_png(c.error, c.crop.width, c.crop.height, c.max_error),
                 "Heat map of the absolute error in the crop; the largest is " + fixed(c.max_error, 1),
                 "error (yellow = " + fixed(c.max_error, 1) + " levels)"};
  return t;
}

HtmlFilePanel file_panel(const SampledFile& f, bool shared) {
  const FileVisuals& fv = f.visuals;
  const int k = f.k, sc = fv.preview_scale;
  HtmlFilePanel p;
  p.file = f.path;
  p.note = "k = " + std::to_string(k) + ": PSNR " + fixed(fv.quality.psnr_db, 2) + " dB" +
           (std::isnan(fv.ssim) ? "" : ", SSIM " + fixed(fv.ssim, 4)) +
           (f.meets_target ? " — meets the target" : " — below the target") +
           (shared ? (f.training ? " (training file)" : " (held-out file)") : "") +
           "; largest error in the image " + fixed(fv.quality.max_abs_error, 0) + " levels.";
  p.preview_title = sc == 1 ? "The whole image at 1:1"
                            : "The whole image reduced 1:" + std::to_string(sc) + " (each pixel is the mean of " +
                                  std::to_string(sc) + "×" + std::to_string(sc) + " pixels; the error map shows "
                                  "the mean error of each block)";
  const std::string reduced = sc > 1 ? ", reduced" : "";
  p.original = {report_png(fv.preview_original), "Original image " + f.path + reduced, "original"};
  p.reconstruction = {report_png(fv.preview_reconstruction),
                      "Reconstruction of " + f.path + " with k = " + std::to_string(k) + reduced,
                      "reconstruction, k = " + std::to_string(k)};
  p.error_map = {heat_png(fv.preview_error, fv.preview_original.width, fv.preview_original.height, fv.preview_error_max),
                 "Heat map of the absolute error of " + f.path + " at k = " + std::to_string(k) +
                     "; brighter is larger, the largest shown is " + fixed(fv.preview_error_max, 1),
                 "error heat map (yellow = " + fixed(fv.preview_error_max, 1) + " levels)"};
  if (sc > 1)
    for (const VisualCrop& c : fv.crops) p.crops.push_back(crop_triple(c, k));
  return p;
}

// The live viewer's geometry and data: the crop's patch sub-grid on a padded canvas.
void fill_live_viewer(HtmlViewer& v, const SampledFile& f) {
  const CropViewer& cv = f.visuals.viewer;
  const PatchOptions& po = f.patch;
  v.channels = f.channels;
  v.bit_depth = f.bit_depth;
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
}

HtmlViewer file_viewer(const SampledFile& f) {
  const CropViewer& cv = f.visuals.viewer;
  HtmlViewer v;
  v.file = f.path;
  const bool cropped = cv.crop.width < f.width || cv.crop.height < f.height;
  v.original = {report_png(cv.original), "Original image " + f.path + (cropped ? ", 1:1 crop" : ""), "original"};
  v.initial_k = f.k;
  v.ks = f.viewer_ks;
  v.live = cv.live;
  v.width = cv.crop.width;
  v.height = cv.crop.height;
  v.image_x = cv.crop.x;
  v.image_y = cv.crop.y;
  v.whole_image = cv.crop.width == f.width && cv.crop.height == f.height;
  if (cv.live) {
    fill_live_viewer(v, f);
  } else {
    v.ks = cv.ks;
    for (const Image& im : cv.images) v.pngs.push_back(report_png(im));
    v.psnr_db = cv.psnr_db;
  }
  return v;
}

std::string panels_note(const BatchVisuals& vis, std::size_t swept, const BatchSettings& s) {
  return "Showing " + std::to_string(vis.sampled) + " of " + std::to_string(swept) + " file(s) (at most " +
         std::to_string(s.report_sample) +
         ": evenly spaced through the batch, plus the worst file at the recommended k). Each at k = " +
         std::to_string(vis.show_k) + (vis.recommended ? " (recommended)" : " (largest swept)") +
         ", or its largest k if smaller.";
}

std::string viewer_note(const VisualSettings& vs, const BatchSettings& s) {
  return "Move the slider (mouse, or focus it and use the arrow keys) to reconstruct at any k. Each viewer "
         "shows one crop of the file at full resolution (1:1, at most " + std::to_string(vs.crop_side) + "×" +
         std::to_string(vs.crop_side) + " pixels: the region with the finest detail; a smaller image is "
         "shown whole). For d ≤ " + std::to_string(vs.live_max_dimension) +
         " the crop is rebuilt live in your browser from the embedded mean, components and the crop's own "
         "patch coefficients (float32), rounded and clipped like the written files, and the PSNR beside it is "
         "that of the crop; larger d step between precomputed reconstructions of the crop at the swept k." +
         std::string(s.coding.enabled ? " With --quality the tables measure the decoded (quantised) "
                                        "images; the sliders show the unquantised reconstruction." : "") +
         " Viewers for the first " + std::to_string(s.live_viewers) + " sampled file(s).";
}

// The sampled files' panels and viewers, the spectrum section and the components.
void add_pictures(HtmlReport& h, const BatchStudy& study, const BatchSettings& s) {
  const BatchVisuals& vis = study.visuals;
  const bool shared = bool(study.result.shared);
  h.panels_note = panels_note(vis, swept_files(study.result).size(), s);
  h.error_scale_note = "per-pixel |original − reconstruction| averaged over channels, scaled to each file's largest "
                       "error (stated under the map); a viridis-like map, readable with colour-vision deficiencies and in gray.";
  for (int i = 0; i <= 8; ++i) h.error_scale_colours.push_back(viridis_like_hex(i / 8.0));
  h.viewer_note = viewer_note(vis.settings, s);
  for (const SampledFile& f : vis.files) {
    h.panels.push_back(file_panel(f, shared));
    if (f.with_viewer) h.viewers.push_back(file_viewer(f));
  }
  if (!vis.spectrum) return;
  h.sections.insert(h.sections.begin() + 1, spectrum_section(*vis.spectrum, shared));
  add_components(h, *vis.spectrum, shared);
}

}  // namespace

HtmlReport batch_report(const BatchStudy& study, const BatchSettings& s) {
  const BatchResult& r = study.result;
  const BatchFigures& figures = study.figures;
  HtmlReport h;
  h.title = "pcasweep batch study: " + std::to_string(swept_files(r).size()) + " image(s)";
  h.headline.push_back(batch_summary_line(r, figures, s.target));
  if (!r.failures.empty())
    h.headline.push_back(std::to_string(r.failures.size()) + " input(s) failed; see \"Failures\" below.");
  h.settings = report_settings(r, figures, s);
  h.sections.push_back(recommendation_section(figures, s.target));
  h.sections.push_back(quality_section(r, figures, s.target));
  if (!r.failures.empty() || !r.inputs.skipped.empty()) h.sections.push_back(failures_section(r));
  add_pictures(h, study, s);
  return h;
}

}  // namespace pcasweep
