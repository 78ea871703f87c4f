#include "pipeline/codec_study.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <numeric>

#include "codec/dct.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/jpeg.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
#include "report/svg.hpp"

namespace pcasweep {

namespace {

Basis dct_basis_for(const Eigen::MatrixXd& X, const PatchOptions& patch, int channels) {
  const Eigen::Index n = X.rows(), d = X.cols();
  Basis b;
  b.mean = X.colwise().mean().transpose();
  Eigen::MatrixXd centred = X;
  centred.rowwise() -= b.mean.transpose();
  const double dof = n > 1 ? double(n - 1) : 1.0;
  const Eigen::MatrixXd all = patch_dct_basis(patch.patch_height, patch.patch_width,
                                              patch.colour == ColourMode::joint ? channels : 1);
  const Eigen::VectorXd variance = (centred * all).colwise().squaredNorm().transpose() / dof;
  std::vector<Eigen::Index> order(static_cast<std::size_t>(d));
  std::iota(order.begin(), order.end(), Eigen::Index(0));
  std::stable_sort(order.begin(), order.end(), [&](Eigen::Index a, Eigen::Index c) { return variance(a) > variance(c); });
  b.components.resize(d, d);
  b.eigenvalues.resize(d);
  for (Eigen::Index j = 0; j < d; ++j) {
    b.components.col(j) = all.col(order[std::size_t(j)]);
    b.eigenvalues(j) = variance(order[std::size_t(j)]);
  }
  b.variable_variances = centred.colwise().squaredNorm().transpose() / dof;
  b.total_variance = b.variable_variances.sum();
  b.observation_count = n;
  b.solver = "dct";
  b.solver_reason = "fixed orthonormal DCT-II basis, columns sorted by the data's coefficient variance";
  return b;
}

}  // namespace

SavedBasis fit_basis(const std::vector<std::string>& inputs, const ImageStudySettings& settings,
                     BasisTransform transform) {
  if (inputs.empty()) throw usage_error("fit: give at least one image");
  std::vector<Eigen::MatrixXd> parts;
  Eigen::Index rows = 0;
  SavedBasis saved;
  saved.patch = settings.patch;
  saved.transform = transform;
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    const Image image = read_image(inputs[i], read_options(settings));
    if (i == 0) {
      saved.channels = image.channels;
      saved.bit_depth = image.bit_depth;
    } else if (image.channels != saved.channels || image.bit_depth != saved.bit_depth) {
      throw usage_error(inputs[i] + ": has " + std::to_string(image.channels) + " channel(s) at " +
                        std::to_string(image.bit_depth) + " bits but " + inputs[0] + " has " +
                        std::to_string(saved.channels) + " at " + std::to_string(saved.bit_depth) +
                        "; a basis is learned on images of one kind");
    }
    const PatchLayout layout(image, settings.patch, inputs[i]);
    parts.push_back(layout.observe({image}));
    rows += parts.back().rows();
  }
  const Eigen::Index d = parts.front().cols();
  if (rows < 2) throw usage_error(inputs[0] + ": only one patch in all inputs; use a smaller --patch");
  Eigen::MatrixXd X(rows, d);
  Eigen::Index at = 0;
  for (const auto& p : parts) {
    X.middleRows(at, p.rows()) = p;
    at += p.rows();
  }
  parts.clear();
  if (transform == BasisTransform::dct) {
    saved.basis = dct_basis_for(X, settings.patch, saved.channels);
  } else {
    saved.basis = solve(X, settings.solver);
  }
  return saved;
}

LoadedBasis load_basis_file(const std::string& path) {
  LoadedBasis loaded;
  const std::string bytes = read_file(path);
  loaded.saved = read_basis_file(bytes, path);
  loaded.sha256 = sha256_of(bytes);
  return loaded;
}

void check_basis_geometry(const SavedBasis& s, const Image& image, const PatchOptions& patch,
                          const std::string& image_name, const std::string& basis_name) {
  const auto describe = [](int ph, int pw, ColourMode colour, int channels, int bits) {
    return std::to_string(ph) + "x" + std::to_string(pw) + " patches, " +
           (colour == ColourMode::joint ? "joint" : "channels") + " colour, " + std::to_string(channels) +
           " channel(s), " + std::to_string(bits) + "-bit";
  };
  if (s.channels != image.channels || s.bit_depth != image.bit_depth || s.patch.patch_height != patch.patch_height ||
      s.patch.patch_width != patch.patch_width || s.patch.colour != patch.colour) {
    throw usage_error(basis_name + ": basis geometry (" +
                      describe(s.patch.patch_height, s.patch.patch_width, s.patch.colour, s.channels, s.bit_depth) +
                      ") does not match " + image_name + " (" +
                      describe(patch.patch_height, patch.patch_width, patch.colour, image.channels, image.bit_depth) +
                      ")");
  }
}

namespace {

RdPoint measured_point(const std::string& method, int quality, int coded, std::size_t bytes, const Image& original,
                       const Image& decoded) {
  RdPoint p;
  p.method = method;
  p.quality = quality;
  p.coded = coded;
  p.bytes = std::int64_t(bytes);
  p.bits_per_pixel = 8.0 * double(bytes) / (double(original.width) * double(original.height));
  p.psnr_db = compare_images(original, decoded).psnr_db;
  p.ssim = compute_ssim(original, decoded).ssim;
  return p;
}

}  // namespace

std::vector<RdPoint> rate_distortion(const ImageAnalysis& a, const RdSettings& settings, const std::string& jpeg_dir) {
  const auto* layout = dynamic_cast<const PatchLayout*>(a.layout.get());
  if (!layout || a.sources.size() != 1) {
    throw usage_error("rate-distortion comparison needs one image cut into patches");
  }
  const Image& image = a.image();
  const std::string& name = a.input();
  std::vector<RdPoint> points;
  CodecSettings codec;
  codec.zstd_level = settings.zstd_level;
  // PCA (own basis, every computed component available) and DCT (all d).
  for (int method = 0; method < 2; ++method) {
    BasisChoice choice;
    choice.kind = method == 0 ? BasisKind::embedded : BasisKind::dct;
    choice.basis = &a.basis;
    codec.k = int(method == 0 ? a.basis.rank() : a.basis.dimension());
    for (int q : settings.codec_qualities) {
      codec.quality = q;
      const EncodeResult r = encode_image(image, layout->options(), choice, codec, name);
      const Image decoded = decode_coded_image(r.bytes, name);
      points.push_back(measured_point(method == 0 ? "pca" : "dct", q, r.coded, r.bytes.size(), image, decoded));
    }
  }
  if (jpeg_supports_channels(image.channels)) {
    if (!jpeg_dir.empty()) {
      std::error_code ec;
      std::filesystem::create_directories(jpeg_dir, ec);
      if (ec) throw data_error(jpeg_dir + ": cannot create folder: " + ec.message());
    }
    for (int q : settings.jpeg_qualities) {
      const std::string jpeg = encode_jpeg(image, q);
      Image decoded = decode_image(jpeg, name + " (JPEG q" + std::to_string(q) + ")");
      if (image.channels == 1 && decoded.channels == 3) {
        // stb_image_write stores gray as YCbCr with neutral chroma: keep one channel (R = G = B = Y).
        Image gray = decoded;
        gray.channels = 1;
        gray.channel_names = {"gray"};
        gray.samples.resize(std::size_t(decoded.width) * decoded.height);
        for (std::size_t i = 0; i < gray.samples.size(); ++i) gray.samples[i] = decoded.samples[3 * i];
        decoded = std::move(gray);
      }
      if (image.bit_depth == 16) {
        for (auto& v : decoded.samples) v = std::uint16_t(v * 257u);
        decoded.bit_depth = 16;
      }
      RdPoint p = measured_point("jpeg", q, 0, jpeg.size(), image, decoded);
      if (!jpeg_dir.empty()) {
        p.file = std::filesystem::path(jpeg_dir).filename().string() + "/" + output_stem(name) + ".q" +
                 std::to_string(q) + ".jpg";
        write_file_atomic((std::filesystem::path(jpeg_dir) / (output_stem(name) + ".q" + std::to_string(q) + ".jpg")).string(),
                          jpeg);
      }
      points.push_back(std::move(p));
    }
  }
  // Gaussian bound from the eigenvalues (components beyond the computed rank: their
  // variance is charged to distortion, never coded).
  const Eigen::VectorXd& ev = a.basis.eigenvalues;
  const double tail = std::max(0.0, a.basis.total_variance - ev.sum());
  const double top = image.max_value();
  const double d = double(a.basis.dimension()), n = double(a.X.rows());
  const double pixels = double(image.width) * double(image.height);
  for (int psnr = 10; psnr <= 70; ++psnr) {
    const double theta = water_level_for_psnr(psnr, top);
    const double mse = (reverse_water_fill(ev, theta).sum() + tail) / d;
    const double bits = gaussian_rate_bits(ev, theta);
    if (bits <= 0.0) continue;
    RdPoint p;
    p.method = "gaussian_bound";
    p.bits_per_pixel = bits * n / pixels;
    p.psnr_db = psnr_from_mse(mse, top);
    for (Eigen::Index i = 0; i < ev.size(); ++i) p.coded += ev(i) > theta ? 1 : 0;
    points.push_back(p);
  }
  // Each curve (a run of one method) by increasing rate.
  for (auto first = points.begin(); first != points.end();) {
    auto last = std::find_if(first, points.end(), [&](const RdPoint& p) { return p.method != first->method; });
    std::stable_sort(first, last, [](const RdPoint& x, const RdPoint& y) { return x.bits_per_pixel < y.bits_per_pixel; });
    first = last;
  }
  return points;
}

double psnr_at_rate(const std::vector<RdPoint>& points, const std::string& method, double bpp, int* coded) {
  std::vector<const RdPoint*> curve;
  for (const auto& p : points)
    if (p.method == method && std::isfinite(p.psnr_db)) curve.push_back(&p);
  std::sort(curve.begin(), curve.end(), [](auto* x, auto* y) { return x->bits_per_pixel < y->bits_per_pixel; });
  for (std::size_t i = 1; i < curve.size(); ++i) {
    const RdPoint &lo = *curve[i - 1], &hi = *curve[i];
    if (lo.bits_per_pixel <= bpp && bpp <= hi.bits_per_pixel) {
      const double span = hi.bits_per_pixel - lo.bits_per_pixel;
      const double t = span > 0 ? (bpp - lo.bits_per_pixel) / span : 0.0;
      if (coded) *coded = t < 0.5 ? lo.coded : hi.coded;
      return lo.psnr_db + t * (hi.psnr_db - lo.psnr_db);
    }
  }
  return NAN;
}

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
    if (std::isnan(v)) return std::string("n/a (outside its curve)");
    char s[32];
    std::snprintf(s, sizeof s, "%.2f dB", v);
    return std::string(s);
  };
  int coded = 0;
  const double pca = psnr_at_rate(points, "pca", bpp, &coded);
  char head[96];
  std::snprintf(head, sizeof head, "at %.2g bpp (linear interpolation along each measured curve), ", bpp);
  std::string s = head;
  s += "PCA (" + (std::isnan(pca) ? std::string("-") : std::to_string(coded)) + " components coded) gives " + db(pca);
  const bool has_jpeg = std::any_of(points.begin(), points.end(), [](const RdPoint& p) { return p.method == "jpeg"; });
  if (has_jpeg) s += ", JPEG " + db(psnr_at_rate(points, "jpeg", bpp));
  s += ", DCT " + db(psnr_at_rate(points, "dct", bpp));
  s += "; Gaussian R(D) from the eigenvalues " + db(psnr_at_rate(points, "gaussian_bound", bpp));
  return s;
}

RdReport write_rate_distortion(const ImageAnalysis& a, const RdSettings& settings, const std::string& out_dir) {
  std::error_code ec;
  std::filesystem::create_directories(out_dir, ec);
  if (ec) throw data_error(out_dir + ": cannot create output folder: " + ec.message());
  RdReport report;
  report.points = rate_distortion(a, settings, (std::filesystem::path(out_dir) / "jpeg").string());
  report.sentence = rd_sentence(report.points, 1.0);
  nlohmann::json at = nlohmann::json::object();
  for (double bpp : {0.5, 1.0, 2.0}) {
    nlohmann::json row;
    for (const char* m : {"pca", "jpeg", "dct", "gaussian_bound"}) row[m] = json_real(psnr_at_rate(report.points, m, bpp));
    at[format_real(bpp, 3)] = row;
  }
  report.json = {{"sentence", report.sentence},
                 {"psnr_db_at_bits_per_pixel", at},
                 {"note", "PSNR at a rate is linearly interpolated between the two measured points around it; "
                          "pca and dct are encoded and decoded by pcasweep (own basis at 16-bit precision vs the "
                          "fixed DCT-II basis, same quantiser and entropy coder), jpeg is stb_image_write's baseline "
                          "JPEG decoded by stb_image, gaussian_bound is R(D) of a Gaussian source with the "
                          "eigenvalues as variances (no side information)"},
                 {"points", to_json(rd_table(report.points))}};
  write_file_atomic((std::filesystem::path(out_dir) / "rd.csv").string(), render_csv(rd_table(report.points)));

  ChartSpec chart;
  chart.title = "Rate and distortion: " + output_stem(a.input());
  {
    char sub[160];
    std::snprintf(sub, sizeof sub, "at 1 bpp (interpolated): PCA %.2f dB, JPEG %.2f dB, DCT %.2f dB",
                  psnr_at_rate(report.points, "pca", 1.0), psnr_at_rate(report.points, "jpeg", 1.0),
                  psnr_at_rate(report.points, "dct", 1.0));
    chart.subtitle = sub;
  }
  chart.x_label = "bits per pixel (file bytes x 8 / pixels)";
  chart.y_label = "PSNR (dB), measured on the decoded image";
  const struct { const char* method; const char* label; MarkerShape marker; const char* dash; } curves[] = {
      {"pca", "PCA, own basis (pcasweep codec)", MarkerShape::circle, ""},
      {"dct", "DCT-II 8x8-style basis, same quantiser and coder", MarkerShape::square, ""},
      {"jpeg", "JPEG (stb_image_write)", MarkerShape::triangle, ""},
      {"gaussian_bound", "Gaussian R(D) from the eigenvalues (reference; real patches can beat it)",
       MarkerShape::none, "6 4"}};
  double x_max = 0.0;
  for (const auto& c : curves) {
    ChartSeries series;
    series.name = c.label;
    series.style.marker = c.marker;
    series.style.dash = c.dash;
    for (const auto& p : report.points)
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
  write_file_atomic((std::filesystem::path(out_dir) / "rd.svg").string(), render_svg_chart(chart));
  return report;
}

}  // namespace pcasweep
