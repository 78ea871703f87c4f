#include "pipeline/image_study.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <filesystem>
#include <map>
#include <set>

#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "measure/ssim.hpp"
#include "observe/patch_blocks.hpp"
#include "observe/raster.hpp"
#include "pipeline/image_set.hpp"
#include "codec/patch_sweep.hpp"
#include "reconstruct/reconstruct.hpp"
#include "solve/blocked_operator.hpp"

namespace pcasweep {

ImageAnalysis analyze_image(const std::string& path, const ImageStudySettings& settings) {
  Image image = read_image(path, read_options(settings));
  auto layout = std::make_unique<PatchLayout>(image, settings.patch, path);
  if (layout->observation_count() < 2) {
    throw usage_error(path + ": only one patch fits; use a smaller --patch or --stride");
  }
  return analyze_sources({path}, {std::move(image)}, std::move(layout), settings.solver);
}

ImageAnalysis analyze_sources(std::vector<std::string> inputs, std::vector<Image> sources,
                              std::unique_ptr<Layout> layout, const SolverSettings& solver, bool hold_observations) {
  ImageAnalysis a;
  a.inputs = std::move(inputs);
  a.sources = std::move(sources);
  for (const auto& s : a.sources) a.alpha_dropped = a.alpha_dropped || s.alpha_dropped;
  a.layout = std::move(layout);
  const PatchLayout* patches = a.patches();
  if (patches && !hold_observations) {
    // Streamed: the solver reads the patches band by band from the image.
    const PatchBlocks blocks(*patches, a.image());
    const BlockedOperator<double> op(blocks);
    Solution solved;
    if (uses_single_precision(op.rows(), op.cols(), solver)) {
      const BlockedOperator<float> single(blocks);
      solved = solve(op, &single, single.offset_ratio(), solver);
    } else {
      solved = solve(op, nullptr, 1.0, solver);
    }
    a.basis = std::move(solved.basis);
    a.solve_report = std::move(solved.report);
    if (a.solve_report.solver == "exact") a.moments = PatchMoments{op.rows(), op.mean(), op.scatter()};
    return a;
  }
  a.X = a.layout->observe(a.sources);
  Solution solved = solve(a.X, solver);
  a.basis = std::move(solved.basis);
  a.solve_report = std::move(solved.report);
  return a;
}

Eigen::MatrixXd coefficients_of(const ImageAnalysis& a, Eigen::Index k) {
  if (!a.streamed()) return project(a.basis, a.X, k);
  return project(a.basis, PatchBlocks(*a.patches(), a.image()), k);
}

std::vector<int> default_ks(Eigen::Index d) {
  std::vector<int> ks;
  for (Eigen::Index k = 1; k < d; k *= 2) ks.push_back(int(k));
  ks.push_back(int(d));
  return ks;
}

std::vector<int> parse_k_list(const std::string& text) {
  std::set<int> values;
  std::size_t start = 0;
  while (start <= text.size()) {
    const std::size_t comma = text.find(',', start);
    const std::string part = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    int v = 0;
    auto [ptr, ec] = std::from_chars(part.data(), part.data() + part.size(), v);
    if (part.empty() || ec != std::errc() || ptr != part.data() + part.size()) {
      throw usage_error("--k takes a comma-separated list of whole numbers like 1,2,4,8, not '" + text + "'");
    }
    if (v < 1) throw usage_error("--k: k must be at least 1, got " + std::to_string(v));
    values.insert(v);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return {values.begin(), values.end()};
}

void check_ks(const std::vector<int>& ks, Eigen::Index d) {
  for (int k : ks) {
    if (k < 1 || k > d) {
      throw usage_error("--k: k = " + std::to_string(k) + " is outside 1.." + std::to_string(d) +
                        " (d, the number of variables per observation)");
    }
  }
}

namespace {

// Rows of a sweep before measuring: k, energy and the size estimate.
SweepRow size_row(const ImageAnalysis& a, int k, const Eigen::VectorXd& cumulative) {
  const std::int64_t n = a.observations(), d = a.dimension();
  double raw = 0.0;
  for (const auto& s : a.sources) raw += double(s.sample_count());
  SweepRow row;
  row.k = k;
  row.energy_retained = cumulative(k - 1);
  row.stored_values = std::int64_t(k) * d + n * k + d;
  row.ratio = double(row.stored_values) / raw;
  return row;
}

// The codec's byte figures for one row.
void fill_bytes(SweepRow& row, const Image& image, const std::string& file, double png_bytes, int coded) {
  const double raw_bytes = double(image.sample_count()) * (image.bit_depth / 8);
  row.bytes = std::int64_t(file.size());
  row.coded_components = coded;
  row.bits_per_pixel = 8.0 * double(file.size()) / pixel_count(image);
  row.compression_ratio = raw_bytes / double(file.size());
  row.ratio_to_png = png_bytes / double(file.size());
}

// Size of a lossless PNG of the analysed image: the input file itself when it is that
// PNG (nothing dropped), else our encoding at level 6.
double lossless_png_bytes(const ImageAnalysis& a) {
  std::error_code ec;
  const std::string& path = a.input();
  if (!a.alpha_dropped) {
    std::string ext = std::filesystem::path(path).extension().string();
    std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return char(std::tolower(c)); });
    const auto size = std::filesystem::file_size(path, ec);
    if (ext == ".png" && !ec) return double(size);
  }
  PngWriteOptions o;
  o.level = 6;
  return double(encode_png(a.image(), o).size());
}

// Collects a point's rows into a whole image (for on_image callers).
class CollectSink : public RowSink {
 public:
  explicit CollectSink(const Image& like) : image_(make_image(like.width, like.height, like.channels, like.bit_depth)) {
    image_.channel_names = like.channel_names;
  }
  void add(const std::uint16_t*, const std::uint16_t* written, int y0, int count) override {
    const std::size_t row = std::size_t(image_.width) * image_.channels;
    std::copy(written, written + row * std::size_t(count), image_.samples.begin() + std::ptrdiff_t(row * std::size_t(y0)));
  }
  const Image& image() const { return image_; }

 private:
  Image image_;
};

// The points of a streamed sweep: one per k, or, with coding, one per distinct set of
// coded components (the k whose coded components are the same make the same file but
// for the k it records, so each set is coded and measured once).
struct StreamedPlan {
  std::vector<PatchSweepPoint> points;
  std::vector<std::size_t> point_of;  // the point each k is measured at
  std::vector<CodingPlan> plans;      // the points keep pointers into it (reserved)
  std::optional<DecoderBasis> decoder;
};

void plan_plain_points(const std::vector<int>& ks, StreamedPlan& plan) {
  for (int k : ks) {
    plan.point_of.push_back(plan.points.size());
    PatchSweepPoint p;
    p.k = k;
    plan.points.push_back(p);
  }
}

void plan_coded_points(const ImageAnalysis& a, const std::vector<int>& ks, const SweepCoding& coding,
                       StreamedPlan& plan) {
  const PatchLayout& layout = *a.patches();
  const Image& image = a.image();
  PatchMoments computed;
  if (!a.moments) computed = patch_moments(layout, image);
  BasisChoice choice;
  choice.basis = &a.basis;
  plan.decoder = decoder_basis(layout, image.bit_depth, a.moments ? *a.moments : computed, choice, a.input());
  plan.plans.reserve(ks.size());
  std::map<std::vector<Eigen::Index>, std::size_t> seen;
  for (int k : ks) {
    CodecSettings settings;
    settings.k = k;
    settings.quality = coding.quality;
    settings.zstd_level = coding.zstd_level;
    plan.plans.push_back(plan_coding(layout, image.bit_depth, *plan.decoder, settings, a.input()));
    const auto [it, fresh] = seen.emplace(plan.plans.back().coded, plan.points.size());
    plan.point_of.push_back(it->second);
    if (fresh) {
      PatchSweepPoint p;
      p.k = k;
      p.plan = &plan.plans.back();
      plan.points.push_back(p);
    }
  }
}

// Row of k = ks[i] from its point's result; with coding, hands its coded file to coding.on_coded.
SweepRow streamed_row(const ImageAnalysis& a, int k, int owner, const PatchSweepResult& r,
                      const Eigen::VectorXd& cumulative, const SweepCoding& coding, double png_bytes) {
  SweepRow row = size_row(a, k, cumulative);
  row.quality = r.quality;
  row.ssim = r.ssim.ssim;
  row.channel_ssim = r.ssim.channel_ssim;
  row.clipped_samples = r.clipped;
  if (coding.enabled) {
    const std::string file = owner == k ? r.encoded.bytes : with_components_asked(r.encoded.bytes, std::uint32_t(k));
    fill_bytes(row, a.image(), file, png_bytes, r.encoded.coded);
    if (coding.on_coded) coding.on_coded(k, file);
  }
  return row;
}

}  // namespace

std::vector<SweepRow> sweep_streamed(const ImageAnalysis& a, const std::vector<int>& ks, const SweepCoding& coding,
                                     const StreamedSinks& sinks, const SweepOutput& output) {
  check_ks(ks, a.basis.rank());
  if (!a.streamed() || !a.patches()) throw usage_error("internal: a streamed sweep needs one image cut into patches");
  StreamedPlan plan;
  if (coding.enabled) plan_coded_points(a, ks, coding, plan);
  else plan_plain_points(ks, plan);
  for (auto& p : plan.points) {
    if (sinks.for_k) p.sinks = sinks.for_k(p.k);
    if (sinks.ssim_map_for_k) p.on_ssim_map_row = sinks.ssim_map_for_k(p.k);
  }
  PatchSweepInputs in;
  in.image = &a.image();
  in.layout = a.patches();
  in.basis = &a.basis;
  in.ssim_precision = output.ssim_precision;
  in.codec.zstd_level = coding.zstd_level;
  if (plan.decoder) in.decoder_bases = {&*plan.decoder};
  const std::vector<PatchSweepResult> results = run_patch_sweep(in, plan.points);
  const Eigen::VectorXd cumulative = cumulative_proportions(a.basis);
  const double png_bytes = coding.enabled ? lossless_png_bytes(a) : 0.0;
  std::vector<SweepRow> rows;
  for (std::size_t i = 0; i < ks.size(); ++i) {
    const int owner = plan.points[plan.point_of[i]].k;
    rows.push_back(streamed_row(a, ks[i], owner, results[plan.point_of[i]], cumulative, coding, png_bytes));
    if (sinks.after_k) sinks.after_k(ks[i], owner);
  }
  return rows;
}

namespace {

// The streamed sweep with each k's image collected whole for `on_image` (it costs an image's memory).
std::vector<SweepRow> sweep_collected(const ImageAnalysis& a, const std::vector<int>& ks, const ImageSink& on_image,
                                      const SweepCoding& coding) {
  std::map<int, std::unique_ptr<CollectSink>> collected;
  StreamedSinks sinks;
  if (on_image) {
    sinks.for_k = [&](int k) -> std::vector<RowSink*> {
      auto& c = collected[k];
      c = std::make_unique<CollectSink>(a.image());
      return {c.get()};
    };
    sinks.after_k = [&](int k, int owner) { on_image(k, 0, collected.at(owner)->image()); };
  }
  return sweep_streamed(a, ks, coding, sinks, SweepOutput{});
}

// Real bytes in memory: encodes the image at k with its own basis and returns what the decoder gives back.
Image coded_image(const ImageAnalysis& a, int k, const SweepCoding& coding, double png_bytes, SweepRow& row) {
  CodecSettings settings;
  settings.k = k;
  settings.quality = coding.quality;
  settings.zstd_level = coding.zstd_level;
  BasisChoice choice;
  choice.basis = &a.basis;
  const EncodeResult encoded = encode_image(a.image(), a.patches()->options(), choice, settings, a.input());
  Image decoded = decode_coded_image(encoded.bytes, a.input(), nullptr, nullptr, &row.clipped_samples);
  fill_bytes(row, a.image(), encoded.bytes, png_bytes, encoded.coded);
  if (coding.on_coded) coding.on_coded(k, encoded.bytes);
  return decoded;
}

// X̂_k folded, rounded and clipped: one image per source; clipped samples counted in `row`.
std::vector<Image> folded_images(const ImageAnalysis& a, const Eigen::MatrixXd& xk, SweepRow& row) {
  const std::vector<Raster> folded = a.layout->fold(xk);
  std::vector<Image> written;
  for (std::size_t i = 0; i < folded.size(); ++i) {
    std::size_t clipped = 0;
    written.push_back(quantize(folded[i], a.sources[i], &clipped));
    row.clipped_samples += clipped;
  }
  return written;
}

}  // namespace

std::vector<SweepRow> sweep_ks(const ImageAnalysis& a, const std::vector<int>& ks, const ImageSink& on_image,
                               const SweepCoding& coding) {
  check_ks(ks, a.basis.rank());
  if (a.streamed()) return sweep_collected(a, ks, on_image, coding);
  // In memory: X held (whole, bands, or patches held for comparison).
  const Eigen::VectorXd cumulative = cumulative_proportions(a.basis);
  ReconstructionSweep sweep(a.basis, a.X);
  // The codec handles one image cut into patches; other layouts keep the unquantised path.
  const bool coded = coding.enabled && a.sources.size() == 1 && a.patches();
  const double png_bytes = coded ? lossless_png_bytes(a) : 0.0;
  std::vector<SweepRow> rows;
  for (int k : ks) {
    SweepRow row = size_row(a, k, cumulative);
    const std::vector<Image> written =
        coded ? std::vector<Image>{coded_image(a, k, coding, png_bytes, row)} : folded_images(a, sweep.advance_to(k), row);
    row.quality = compare_image_sets(a.sources, written);
    const SsimResult structural = compute_ssim_sets(a.sources, written);
    row.ssim = structural.ssim;
    row.channel_ssim = structural.channel_ssim;
    if (on_image)
      for (std::size_t i = 0; i < written.size(); ++i) on_image(k, i, written[i]);
    rows.push_back(std::move(row));
  }
  return rows;
}

std::vector<SweepRow> sweep_into(const ImageAnalysis& a, const std::vector<int>& ks, const SweepCoding& coding,
                                 const SweepOutput& settings, SweepImageOutput* output) {
  check_ks(ks, a.basis.rank());
  if (!output) return a.streamed() ? sweep_streamed(a, ks, coding, StreamedSinks{}, settings) : sweep_ks(a, ks, {}, coding);
  output->open(a);
  SweepCoding with_files = coding;
  if (coding.enabled) {
    with_files.on_coded = [&](int k, const std::string& bytes) {
      output->coded(k, bytes);
      if (coding.on_coded) coding.on_coded(k, bytes);
    };
  }
  if (a.streamed()) return sweep_streamed(a, ks, with_files, output->streamed_sinks(a), settings);
  return sweep_ks(a, ks, [&](int k, std::size_t source, const Image& image) { output->image(k, source, image); },
                  with_files);
}

std::string output_stem(const std::string& path) { return std::filesystem::path(path).stem().string(); }

}  // namespace pcasweep
