#include "present/rd_outputs.hpp"

#include <algorithm>
#include <cmath>

#include "core/format.hpp"

namespace pcasweep {

Table rd_table(const std::vector<RdPoint>& points) {
  Table t;
  t.columns = {"method", "quality", "coded", "bytes", "bits_per_pixel", "psnr_db", "ssim", "file"};
  for (const auto& p : points) {
    const bool bound = p.method == "gaussian_bound";
    t.add_row({p.method, bound ? Cell{} : Cell{std::int64_t(p.quality)},
               p.method == "jpeg" ? Cell{} : Cell{std::int64_t(p.coded)}, bound ? Cell{} : Cell{p.bytes},
               p.bits_per_pixel, p.psnr_db, std::isnan(p.ssim) ? Cell{} : Cell{p.ssim},
               p.file.empty() ? Cell{} : Cell{p.file}});
  }
  return t;
}

std::string rd_sentence(const std::vector<RdPoint>& points, double bpp) {
  const auto db = [](double v) {
    return std::isnan(v) ? std::string("n/a (outside its curve)") : format_fixed(v, 2) + " dB";
  };
  int coded = 0;
  const double pca = psnr_at_rate(points, "pca", bpp, &coded);
  std::string s = "at " + format_real(bpp, 2) + " bpp (linear interpolation along each measured curve), ";
  s += "PCA (" + (std::isnan(pca) ? std::string("-") : std::to_string(coded)) + " components coded) gives " + db(pca);
  const bool has_jpeg = std::any_of(points.begin(), points.end(), [](const RdPoint& p) { return p.method == "jpeg"; });
  if (has_jpeg) s += ", JPEG " + db(psnr_at_rate(points, "jpeg", bpp));
  s += ", DCT " + db(psnr_at_rate(points, "dct", bpp));
  s += "; Gaussian R(D) from the eigenvalues " + db(psnr_at_rate(points, "gaussian_bound", bpp));
  return s;
}

ChartSpec rd_chart(const std::vector<RdPoint>& points, const std::string& input) {
  ChartSpec chart;
  chart.title = "Rate and distortion: " + output_stem(input);
  chart.subtitle = "at 1 bpp (interpolated): PCA " + format_fixed(psnr_at_rate(points, "pca", 1.0), 2) + " dB, JPEG " +
                   format_fixed(psnr_at_rate(points, "jpeg", 1.0), 2) + " dB, DCT " +
                   format_fixed(psnr_at_rate(points, "dct", 1.0), 2) + " dB";
  chart.x_label = "bits per pixel (file bytes x 8 / pixels)";
  chart.y_label = "PSNR (dB), measured on the decoded image";
  const struct { const char* method; const char* label; MarkerShape marker; const char* dash; } curves[] = {
      {"pca", "PCA, own basis (pcasweep codec)", MarkerShape::circle, ""},
      {"dct", "DCT-II 8x8-style basis, same quantiser and coder", MarkerShape::square, ""},
      {"jpeg", "JPEG (libjpeg-turbo, 4:2:0)", MarkerShape::triangle, ""},
      {"gaussian_bound", "Gaussian R(D) from the eigenvalues (reference; real patches can beat it)",
       MarkerShape::none, "6 4"}};
  double x_max = 0.0;
  for (const auto& c : curves) {
    ChartSeries series;
    series.name = c.label;
    series.style.marker = c.marker;
    series.style.dash = c.dash;
    for (const auto& p : points)
      if (p.method == c.method && std::isfinite(p.psnr_db)) {
        series.x.push_back(p.bits_per_pixel);
        series.y.push_back(p.psnr_db);
        if (p.method != "gaussian_bound") x_max = std::max(x_max, p.bits_per_pixel);
      }
    if (!series.x.empty()) chart.series.push_back(std::move(series));
  }
  chart.x_min = 0.0;
  chart.x_max = x_max > 0.0 ? x_max * 1.05 : NAN;
  chart.lines.push_back({true, 1.0, "1 bpp"});
  chart.note = "Every codec point is a real file, decoded before measuring; R(D) ignores side information.";
  return chart;
}

namespace {

// Writes jpeg/<stem>.q<Q>.jpg for each JPEG file and names it in the points of that quality.
void write_jpeg_files(const RdStudy& study, const std::string& input, const OutputFolder& out,
                      std::vector<RdPoint>& points) {
  if (study.jpeg_files.empty()) return;
  const OutputFolder jpeg = out.subfolder("jpeg");
  for (const RdJpegFile& f : study.jpeg_files) {
    const std::string file = output_stem(input) + ".q" + std::to_string(f.quality) + ".jpg";
    jpeg.write(file, f.bytes);
    for (RdPoint& p : points)
      if (p.method == "jpeg" && p.quality == f.quality) p.file = "jpeg/" + file;
  }
}

nlohmann::json rd_json(const RdReport& report) {
  nlohmann::json at = nlohmann::json::object();
  for (double bpp : {0.5, 1.0, 2.0}) {
    nlohmann::json row;
    for (const char* m : {"pca", "jpeg", "dct", "gaussian_bound"}) row[m] = json_real(psnr_at_rate(report.points, m, bpp));
    at[format_real(bpp, 3)] = row;
  }
  return {{"sentence", report.sentence},
          {"psnr_db_at_bits_per_pixel", at},
          {"note", "PSNR at a rate is linearly interpolated between the two measured points around it; "
                   "pca and dct are encoded and decoded by pcasweep (own basis at 16-bit precision vs the "
                   "fixed DCT-II basis, same quantiser and entropy coder), jpeg is libjpeg-turbo's baseline "
                   "JPEG (4:2:0, optimised Huffman) decoded by libjpeg-turbo, gaussian_bound is R(D) of a Gaussian source with the "
                   "eigenvalues as variances (no side information)"},
          {"cost", {{"note", "wall seconds on this run's machine and threads"},
                    {"coded_pass_seconds", report.cost.coded_pass_seconds},
                    {"coded_pass_points", report.cost.coded_pass_points},
                    {"jpeg_seconds", report.cost.jpeg_seconds},
                    {"jpeg_points", report.cost.jpeg_points},
                    {"total_seconds", report.cost.total_seconds}}},
          {"points", to_json(rd_table(report.points))}};
}

}  // namespace

RdReport write_rd_outputs(RdStudy study, const std::string& input, const OutputFolder& out) {
  RdReport report;
  report.points = std::move(study.points);
  report.cost = study.cost;
  write_jpeg_files(study, input, out, report.points);
  report.sentence = rd_sentence(report.points, 1.0);
  report.json = rd_json(report);
  out.write("rd.csv", render_csv(rd_table(report.points)));
  out.write("rd.svg", render_svg_chart(rd_chart(report.points, input)));
  return report;
}

RdReport write_rate_distortion(const ImageAnalysis& analysis, const RdSettings& settings, const std::string& out_dir) {
  const OutputFolder out(out_dir);
  return write_rd_outputs(rate_distortion(analysis, settings), analysis.input(), out);
}

}  // namespace pcasweep
