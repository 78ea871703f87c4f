#include "pipeline/codec_study.hpp"

#include <algorithm>
#include <chrono>
#include <exception>
#include <limits>
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
#include "observe/patch_blocks.hpp"
#include "pipeline/patch_sweep.hpp"
#include "solve/blocked_operator.hpp"
#include "solve/scatter_sum.hpp"
#include "report/svg.hpp"

namespace pcasweep {

namespace {

// The DCT-II basis with columns sorted by the data's coefficient variance, from the
// accumulated scatter M (d×d, about the mean): variance_j = d_jᵀ·M·d_j/(N−1).
Basis dct_basis_for(const ScatterSum& sum, const PatchOptions& patch, int channels) {
  const Eigen::Index n = sum.rows(), d = sum.cols();
  Basis b;
  b.mean = sum.mean();
  const double dof = n > 1 ? double(n - 1) : 1.0;
  const Eigen::MatrixXd all = patch_dct_basis(patch.patch_height, patch.patch_width,
                                              patch.colour == ColourMode::joint ? channels : 1);
  const Eigen::MatrixXd scatter = sum.scatter();
  const Eigen::VectorXd variance = ((scatter * all).cwiseProduct(all)).colwise().sum().transpose().cwiseMax(0.0) / dof;
  std::vector<Eigen::Index> order(static_cast<std::size_t>(d));
  std::iota(order.begin(), order.end(), Eigen::Index(0));
  std::stable_sort(order.begin(), order.end(), [&](Eigen::Index a, Eigen::Index c) { return variance(a) > variance(c); });
  b.components.resize(d, d);
  b.eigenvalues.resize(d);
  for (Eigen::Index j = 0; j < d; ++j) {
    b.components.col(j) = all.col(order[std::size_t(j)]);
    b.eigenvalues(j) = variance(order[std::size_t(j)]);
  }
  b.variable_variances = scatter.diagonal() / dof;
  b.total_variance = b.variable_variances.sum();
  b.observation_count = n;
  b.solver = "dct";
  b.solver_reason = "fixed orthonormal DCT-II basis, columns sorted by the data's coefficient variance";
  return b;
}

// One input of fit: read, checked against the first, and its patches' geometry.
Image read_fit_input(const std::string& path, const ImageStudySettings& settings, SavedBasis& saved, bool first,
                     const std::string& first_path) {
  Image image = read_image(path, read_options(settings));
  if (first) {
    saved.channels = image.channels;
    saved.bit_depth = image.bit_depth;
  } else if (image.channels != saved.channels || image.bit_depth != saved.bit_depth) {
    throw usage_error(path + ": has " + std::to_string(image.channels) + " channel(s) at " +
                      std::to_string(image.bit_depth) + " bits but " + first_path + " has " +
                      std::to_string(saved.channels) + " at " + std::to_string(saved.bit_depth) +
                      "; a basis is learned on images of one kind");
  }
  return image;
}

}  // namespace

SavedBasis fit_basis(const std::vector<std::string>& inputs, const ImageStudySettings& settings,
                     BasisTransform transform) {
  if (inputs.empty()) throw usage_error("fit: give at least one image");
  SavedBasis saved;
  saved.patch = settings.patch;
  saved.transform = transform;
  // The exact solver and the DCT need only the scatter: accumulated file by file
  // (solve/scatter_sum.hpp), so memory does not grow with the inputs. The randomized
  // solver (asked for, or d above kAlwaysExactDimension) reads the stacked observations.
  Eigen::Index d = 0;
  {
    const Image first = read_fit_input(inputs[0], settings, saved, true, inputs[0]);
    d = PatchLayout(first, settings.patch, inputs[0]).dimension();
  }
  const bool stacked = transform == BasisTransform::pca &&
                       (settings.solver.choice == SolverChoice::randomized ||
                        (settings.solver.choice == SolverChoice::automatic && d > kAlwaysExactDimension));
  if (!stacked) {
    ScatterSum sum(d);
    for (std::size_t i = 0; i < inputs.size(); ++i) {
      const Image image = read_fit_input(inputs[i], settings, saved, i == 0, inputs[0]);
      const PatchLayout layout(image, settings.patch, inputs[i]);
      const PatchBlocks blocks(layout, image);
      sum.add(BlockedOperator<double>(blocks));
    }
    if (sum.rows() < 2) throw usage_error(inputs[0] + ": only one patch in all inputs; use a smaller --patch");
    if (transform == BasisTransform::dct) {
      saved.basis = dct_basis_for(sum, settings.patch, saved.channels);
    } else {
      SolverSettings exact = settings.solver;
      exact.choice = SolverChoice::exact;
      saved.basis = solve(sum, nullptr, 1.0, exact);
      if (settings.solver.choice == SolverChoice::automatic)
        saved.basis.solver_reason = "d = " + std::to_string(d) + " <= " + std::to_string(kAlwaysExactDimension) +
                                    ": the exact solver on the scatter accumulated over " +
                                    std::to_string(sum.blocks()) + " file(s)";
    }
    return saved;
  }
  std::vector<Eigen::MatrixXd> parts;
  Eigen::Index rows = 0;
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    const Image image = read_fit_input(inputs[i], settings, saved, i == 0, inputs[0]);
    const PatchLayout layout(image, settings.patch, inputs[i]);
    parts.push_back(layout.observe({image}));
    rows += parts.back().rows();
  }
  if (rows < 2) throw usage_error(inputs[0] + ": only one patch in all inputs; use a smaller --patch");
  Eigen::MatrixXd X(rows, d);
  Eigen::Index at = 0;
  for (const auto& p : parts) {
    X.middleRows(at, p.rows()) = p;
    at += p.rows();
  }
  parts.clear();
  saved.basis = solve(X, settings.solver);
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

RdPoint coded_point(const std::string& method, int quality, const PatchSweepResult& r, const Image& image) {
  RdPoint p;
  p.method = method;
  p.quality = quality;
  p.coded = r.encoded.coded;
  p.bytes = std::int64_t(r.encoded.bytes.size());
  p.bits_per_pixel = 8.0 * double(p.bytes) / pixel_count(image);
  p.psnr_db = r.quality.psnr_db;
  p.ssim = r.ssim.ssim;
  return p;
}

// JPEG at `quality`: encoded, then decoded and measured row by row (16-bit originals
// against the 8-bit decoding scaled by 257).
RdPoint jpeg_point(const Image& image, int quality, const std::string& name, std::string& bytes) {
  bytes = encode_jpeg(image, quality);
  JpegRowReader reader(bytes, name + " (JPEG q" + std::to_string(quality) + ")");
  if (reader.width() != image.width || reader.height() != image.height || reader.channels() != image.channels)
    throw data_error(name + ": the JPEG decoder returned another geometry");
  QualityAccumulator quality_acc(image.channels, image.bit_depth);
  SsimAccumulator ssim(image.width, image.height, image.channels, image.max_value());
  const std::size_t row = std::size_t(image.width) * image.channels;
  constexpr int kRows = 64;
  std::vector<std::uint16_t> decoded(row * kRows);
  for (int y = 0; y < image.height;) {
    const int got = reader.read_rows(decoded.data(), kRows);
    if (got <= 0) throw data_error(name + ": the JPEG decoder stopped early");
    if (image.bit_depth == 16)
      for (std::size_t i = 0; i < row * std::size_t(got); ++i) decoded[i] = std::uint16_t(decoded[i] * 257u);
    const std::uint16_t* original = image.samples.data() + row * std::size_t(y);
    quality_acc.add(original, decoded.data(), row * std::size_t(got));
    ssim.add_rows(original, decoded.data(), got);
    y += got;
  }
  RdPoint p;
  p.method = "jpeg";
  p.quality = quality;
  p.bytes = std::int64_t(bytes.size());
  p.bits_per_pixel = 8.0 * double(bytes.size()) / pixel_count(image);
  p.psnr_db = quality_acc.result().psnr_db;
  p.ssim = ssim.result().ssim;
  return p;
}

// The --quality (1..100) whose model rate in bits per pixel is nearest (in log) to `bpp`.
int quality_for_rate(const PatchLayout& layout, int bit_depth, const DecoderBasis& basis, int k, double bpp) {
  const double per_obs_to_bpp = double(layout.observation_count()) / (double(layout.width()) * layout.height());
  int best = 50;
  double best_gap = std::numeric_limits<double>::infinity();
  for (int q = 1; q <= 100; ++q) {
    const double theta = water_level_for_psnr(quality_psnr_db(q), bit_depth == 16 ? 65535.0 : 255.0);
    const double model = gaussian_rate_bits(basis.power.head(k), theta) * per_obs_to_bpp;
    const double gap = std::abs(std::log(std::max(model, 1e-9)) - std::log(bpp));
    if (gap < best_gap) {
      best_gap = gap;
      best = q;
    }
  }
  return best;
}

// True when the measured curve of `method` has points at or below and at or above `bpp`.
bool brackets(const std::vector<RdPoint>& points, const std::string& method, double bpp) {
  bool below = false, above = false;
  for (const auto& p : points)
    if (p.method == method) {
      below = below || p.bits_per_pixel <= bpp;
      above = above || p.bits_per_pixel >= bpp;
    }
  return below && above;
}

}  // namespace

std::vector<RdPoint> rate_distortion(const ImageAnalysis& a, const RdSettings& settings, const std::string& jpeg_dir,
                                     RdCost* cost) {
  using Clock = std::chrono::steady_clock;
  const auto seconds_since = [](Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); };
  const Clock::time_point study_start = Clock::now();
  RdCost spent;
  const PatchLayout* layout = a.patches();
  if (!layout || a.sources.size() != 1) {
    throw usage_error("rate-distortion comparison needs one image cut into patches");
  }
  const Image& image = a.image();
  const std::string& name = a.input();
  std::vector<RdPoint> points;

  // PCA (own basis, every computed component available) and DCT (all d): one pass for both curves.
  PatchMoments computed;
  if (!a.moments) computed = patch_moments(*layout, image);
  const PatchMoments& moments = a.moments ? *a.moments : computed;
  BasisChoice pca_choice;
  pca_choice.basis = &a.basis;
  BasisChoice dct_choice;
  dct_choice.kind = BasisKind::dct;
  const DecoderBasis bases[2] = {decoder_basis(*layout, image.bit_depth, moments, pca_choice, name),
                                 decoder_basis(*layout, image.bit_depth, moments, dct_choice, name)};
  const int method_k[2] = {int(a.basis.rank()), int(a.basis.dimension())};
  const char* method_name[2] = {"pca", "dct"};
  const auto measure = [&](const std::vector<std::pair<int, int>>& wanted) {  // (method, quality)
    std::vector<CodingPlan> plans;
    plans.reserve(wanted.size());
    std::vector<PatchSweepPoint> sweep_points;
    for (const auto& [method, q] : wanted) {
      CodecSettings s;
      s.k = method_k[method];
      s.quality = q;
      s.zstd_level = settings.zstd_level;
      plans.push_back(plan_coding(*layout, image.bit_depth, bases[method], s, name));
      PatchSweepPoint p;
      p.k = s.k;
      p.plan = &plans.back();
      p.decoder_basis = method;
      sweep_points.push_back(p);
    }
    PatchSweepInputs in;
    in.image = &image;
    in.layout = layout;
    in.decoder_bases = {&bases[0], &bases[1]};
    in.codec.zstd_level = settings.zstd_level;
    const Clock::time_point pass_start = Clock::now();
    const auto results = run_patch_sweep(in, sweep_points);
    spent.coded_pass_seconds.push_back(seconds_since(pass_start));
    spent.coded_pass_points.push_back(int(sweep_points.size()));
    for (std::size_t i = 0; i < wanted.size(); ++i)
      points.push_back(coded_point(method_name[wanted[i].first], wanted[i].second, results[i], image));
  };
  std::vector<std::pair<int, int>> wanted;
  for (int method = 0; method < 2; ++method) {
    std::vector<int> qs;
    for (double bpp : settings.target_bits_per_pixel)
      qs.push_back(quality_for_rate(*layout, image.bit_depth, bases[method], method_k[method], bpp));
    std::sort(qs.begin(), qs.end());
    qs.erase(std::unique(qs.begin(), qs.end()), qs.end());
    for (int q : qs) wanted.emplace_back(method, q);
  }
  measure(wanted);
  // Refine: a reported rate a curve does not reach gets one point beyond its end.
  wanted.clear();
  for (int method = 0; method < 2; ++method) {
    int lowest = 101, highest = 0;
    for (const auto& p : points)
      if (p.method == method_name[method]) lowest = std::min(lowest, p.quality), highest = std::max(highest, p.quality);
    bool need_low = false, need_high = false;
    for (double bpp : settings.reported_bits_per_pixel) {
      if (brackets(points, method_name[method], bpp)) continue;
      bool any_below = false;
      for (const auto& p : points) any_below = any_below || (p.method == method_name[method] && p.bits_per_pixel <= bpp);
      (any_below ? need_high : need_low) = true;
    }
    if (need_low && lowest > 1) wanted.emplace_back(method, std::max(1, lowest - 15));
    if (need_high && highest < 100) wanted.emplace_back(method, std::min(100, highest + 15));
  }
  if (!wanted.empty()) measure(wanted);

  if (jpeg_supports_channels(image.channels)) {
    if (!jpeg_dir.empty()) {
      std::error_code ec;
      std::filesystem::create_directories(jpeg_dir, ec);
      if (ec) throw data_error(jpeg_dir + ": cannot create folder: " + ec.message());
    }
    const std::vector<int>& qs = settings.jpeg_qualities;
    std::vector<RdPoint> jpeg(qs.size());
    std::vector<std::string> files(qs.size());
    std::exception_ptr failure;
    const Clock::time_point jpeg_start = Clock::now();
#pragma omp parallel for schedule(dynamic, 1)
    for (std::ptrdiff_t i = 0; i < std::ptrdiff_t(qs.size()); ++i) {
      try {
        jpeg[std::size_t(i)] = jpeg_point(image, qs[std::size_t(i)], name, files[std::size_t(i)]);
      } catch (...) {
#pragma omp critical
        if (!failure) failure = std::current_exception();
      }
    }
    if (failure) std::rethrow_exception(failure);
    spent.jpeg_seconds = seconds_since(jpeg_start);
    spent.jpeg_points = int(qs.size());
    for (std::size_t i = 0; i < qs.size(); ++i) {
      RdPoint& p = jpeg[i];
      if (!jpeg_dir.empty()) {
        const std::string file = output_stem(name) + ".q" + std::to_string(qs[i]) + ".jpg";
        p.file = std::filesystem::path(jpeg_dir).filename().string() + "/" + file;
        write_file_atomic((std::filesystem::path(jpeg_dir) / file).string(), files[i]);
      }
      points.push_back(std::move(p));
    }
  }
  // Gaussian bound from the eigenvalues (components beyond the computed rank: their
  // variance is charged to distortion, never coded).
  const Eigen::VectorXd& ev = a.basis.eigenvalues;
  const double tail = std::max(0.0, a.basis.total_variance - ev.sum());
  const double top = image.max_value();
  const double d = double(a.basis.dimension()), n = double(a.observations());
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
  // Each curve by increasing rate, curves in the order pca, dct, jpeg, gaussian_bound.
  const auto rank = [](const std::string& m) { return m == "pca" ? 0 : m == "dct" ? 1 : m == "jpeg" ? 2 : 3; };
  std::stable_sort(points.begin(), points.end(), [&](const RdPoint& x, const RdPoint& y) {
    return rank(x.method) != rank(y.method) ? rank(x.method) < rank(y.method) : x.bits_per_pixel < y.bits_per_pixel;
  });
  spent.total_seconds = seconds_since(study_start);
  if (cost) *cost = spent;
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
  report.points = rate_distortion(a, settings, (std::filesystem::path(out_dir) / "jpeg").string(), &report.cost);
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
      {"jpeg", "JPEG (libjpeg-turbo, 4:2:0)", MarkerShape::triangle, ""},
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
