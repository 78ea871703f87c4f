#include "pipeline/codec_study.hpp"

#include <algorithm>
#include <chrono>
#include <exception>
#include <numeric>
#include <optional>

#include "codec/dct_basis.hpp"
#include "codec/rd_curve.hpp"
#include "io/jpeg.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "measure/image_metrics.hpp"
#include "observe/patch_blocks.hpp"
#include "pipeline/patch_sweep.hpp"
#include "solve/blocked_operator.hpp"
#include "solve/scatter_sum.hpp"

namespace pcasweep {

namespace {

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
      saved.basis = dct_basis(sum.mean(), sum.scatter(), sum.rows(), settings.patch, saved.channels);
      saved.report.solver = "dct";
      saved.report.reason = "fixed orthonormal DCT-II basis, columns sorted by the data's coefficient variance";
    } else {
      SolverSettings exact = settings.solver;
      exact.choice = SolverChoice::exact;
      Solution solved = solve(sum, nullptr, 1.0, exact);
      saved.basis = std::move(solved.basis);
      saved.report = std::move(solved.report);
      if (settings.solver.choice == SolverChoice::automatic)
        saved.report.reason = "d = " + std::to_string(d) + " <= " + std::to_string(kAlwaysExactDimension) +
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
  Solution solved = solve(X, settings.solver);
  saved.basis = std::move(solved.basis);
  saved.report = std::move(solved.report);
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

EncodedFile encode_image_file(const std::string& input, const EncodeFileSettings& settings) {
  if (!settings.basis_file.empty() && settings.dct) throw usage_error("--basis and --dct are alternatives; give one");
  std::optional<LoadedBasis> loaded;
  if (!settings.basis_file.empty()) loaded = load_basis_file(settings.basis_file);
  Image image = read_image(input, read_options(settings.image));
  EncodedFile out;
  out.width = image.width;
  out.height = image.height;
  out.max_value = image.max_value();
  PatchOptions patch = settings.image.patch;
  if (loaded) {
    // The basis fixes patch size and colour mode; an explicit --patch/--colour must agree.
    if (!settings.patch_given) {
      patch.patch_height = loaded->saved.patch.patch_height;
      patch.patch_width = loaded->saved.patch.patch_width;
    }
    if (!settings.colour_given) patch.colour = loaded->saved.patch.colour;
    check_basis_geometry(loaded->saved, image, patch, input, settings.basis_file);
    const BasisChoice choice{BasisKind::external, &loaded->saved.basis, loaded->sha256};
    out.result = encode_image(image, patch, choice, settings.codec, input);
    return out;
  }
  if (settings.dct) {
    BasisChoice choice;
    choice.kind = BasisKind::dct;
    out.result = encode_image(image, patch, choice, settings.codec, input);
    return out;
  }
  auto layout = std::make_unique<PatchLayout>(image, patch, input);
  if (layout->observation_count() < 2)
    throw usage_error(input + ": only one patch fits; use a smaller --patch or --stride");
  std::vector<Image> sources;
  sources.push_back(std::move(image));  // one copy of the samples, not two
  const ImageAnalysis a = analyze_sources({input}, std::move(sources), std::move(layout), settings.image.solver);
  BasisChoice choice;
  choice.basis = &a.basis;
  out.result = encode_image(a.image(), patch, choice, settings.codec, input, a.moments ? &*a.moments : nullptr);
  return out;
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

using Clock = std::chrono::steady_clock;
double seconds_since(Clock::time_point t) { return std::chrono::duration<double>(Clock::now() - t).count(); }

using Wanted = std::vector<std::pair<int, int>>;  // (method: 0 pca, 1 dct; --quality)
const char* const kCodedMethod[2] = {"pca", "dct"};

// The PCA curve (own basis, every computed component available) and the DCT curve
// (all d columns): both decoder bases fixed once, their points measured through the
// codec, every point of a pass in one streaming pass over the image.
class CodedCurves {
 public:
  CodedCurves(const ImageAnalysis& a, int zstd_level)
      : layout_(*a.patches()), image_(a.image()), name_(a.input()), zstd_level_(zstd_level),
        k_{int(a.basis.rank()), int(a.basis.dimension())} {
    PatchMoments computed;
    if (!a.moments) computed = patch_moments(layout_, image_);
    const PatchMoments& moments = a.moments ? *a.moments : computed;
    BasisChoice pca;
    pca.basis = &a.basis;
    BasisChoice dct;
    dct.kind = BasisKind::dct;
    bases_[0] = decoder_basis(layout_, image_.bit_depth, moments, pca, name_);
    bases_[1] = decoder_basis(layout_, image_.bit_depth, moments, dct, name_);
  }

  // For each method, the --quality nearest each target rate, in increasing quality, once each.
  Wanted first_pass(const RdSettings& settings) const {
    Wanted wanted;
    for (int method = 0; method < 2; ++method) {
      std::vector<int> qs;
      for (double bpp : settings.target_bits_per_pixel)
        qs.push_back(quality_for_rate(layout_, image_.bit_depth, bases_[method], k_[method], bpp));
      std::sort(qs.begin(), qs.end());
      qs.erase(std::unique(qs.begin(), qs.end()), qs.end());
      for (int q : qs) wanted.emplace_back(method, q);
    }
    return wanted;
  }

  // For each method, one point 15 qualities beyond its lowest (highest) when a reported
  // rate lies below (above) the whole measured curve.
  Wanted refinement(const std::vector<RdPoint>& points, const RdSettings& settings) const {
    Wanted wanted;
    for (int method = 0; method < 2; ++method) {
      const std::string name = kCodedMethod[method];
      int lowest = 101, highest = 0;
      for (const auto& p : points)
        if (p.method == name) lowest = std::min(lowest, p.quality), highest = std::max(highest, p.quality);
      bool need_low = false, need_high = false;
      for (double bpp : settings.reported_bits_per_pixel) {
        if (curve_brackets(points, name, bpp)) continue;
        bool any_below = false;
        for (const auto& p : points) any_below = any_below || (p.method == name && p.bits_per_pixel <= bpp);
        (any_below ? need_high : need_low) = true;
      }
      if (need_low && lowest > 1) wanted.emplace_back(method, std::max(1, lowest - 15));
      if (need_high && highest < 100) wanted.emplace_back(method, std::min(100, highest + 15));
    }
    return wanted;
  }

  // Codes, decodes and measures every wanted point in one pass; appends the points and
  // the pass's wall time to `cost`.
  void measure(const Wanted& wanted, std::vector<RdPoint>& points, RdCost& cost) const {
    std::vector<CodingPlan> plans;
    plans.reserve(wanted.size());  // the sweep points keep pointers into it
    std::vector<PatchSweepPoint> sweep_points;
    for (const auto& [method, q] : wanted) {
      CodecSettings s;
      s.k = k_[method];
      s.quality = q;
      s.zstd_level = zstd_level_;
      plans.push_back(plan_coding(layout_, image_.bit_depth, bases_[method], s, name_));
      PatchSweepPoint p;
      p.k = s.k;
      p.plan = &plans.back();
      p.decoder_basis = method;
      sweep_points.push_back(p);
    }
    PatchSweepInputs in;
    in.image = &image_;
    in.layout = &layout_;
    in.decoder_bases = {&bases_[0], &bases_[1]};
    in.codec.zstd_level = zstd_level_;
    const Clock::time_point start = Clock::now();
    const auto results = run_patch_sweep(in, sweep_points);
    cost.coded_pass_seconds.push_back(seconds_since(start));
    cost.coded_pass_points.push_back(int(sweep_points.size()));
    for (std::size_t i = 0; i < wanted.size(); ++i)
      points.push_back(coded_point(kCodedMethod[wanted[i].first], wanted[i].second, results[i], image_));
  }

 private:
  const PatchLayout& layout_;
  const Image& image_;
  const std::string& name_;
  int zstd_level_;
  int k_[2];
  DecoderBasis bases_[2];
};

// JPEG at every quality of `qs`, in parallel: appends one point each (file left empty)
// and the encoded bytes, and the wall time to `cost`. Rethrows the first failure.
void measure_jpeg(const Image& image, const std::string& name, const std::vector<int>& qs,
                  std::vector<RdPoint>& points, std::vector<RdJpegFile>& files, RdCost& cost) {
  std::vector<RdPoint> jpeg(qs.size());
  std::vector<std::string> bytes(qs.size());
  std::exception_ptr failure;
  const Clock::time_point start = Clock::now();
#pragma omp parallel for schedule(dynamic, 1)
  for (std::ptrdiff_t i = 0; i < std::ptrdiff_t(qs.size()); ++i) {
    try {
      jpeg[std::size_t(i)] = jpeg_rd_point(image, qs[std::size_t(i)], name, bytes[std::size_t(i)]);
    } catch (...) {
#pragma omp critical
      if (!failure) failure = std::current_exception();
    }
  }
  if (failure) std::rethrow_exception(failure);
  cost.jpeg_seconds = seconds_since(start);
  cost.jpeg_points = int(qs.size());
  for (std::size_t i = 0; i < qs.size(); ++i) {
    points.push_back(std::move(jpeg[i]));
    files.push_back({qs[i], std::move(bytes[i])});
  }
}

}  // namespace

RdStudy rate_distortion(const ImageAnalysis& a, const RdSettings& settings) {
  const Clock::time_point study_start = Clock::now();
  if (!a.patches() || a.sources.size() != 1)
    throw usage_error("rate-distortion comparison needs one image cut into patches");
  RdStudy study;
  const CodedCurves coded(a, settings.zstd_level);
  coded.measure(coded.first_pass(settings), study.points, study.cost);
  const Wanted more = coded.refinement(study.points, settings);
  if (!more.empty()) coded.measure(more, study.points, study.cost);
  if (jpeg_supports_channels(a.image().channels))
    measure_jpeg(a.image(), a.input(), settings.jpeg_qualities, study.points, study.jpeg_files, study.cost);
  for (RdPoint& p : gaussian_bound_points(a.basis.eigenvalues, a.basis.total_variance, a.basis.dimension(),
                                          a.image().max_value(), double(a.observations()),
                                          double(a.image().width) * double(a.image().height)))
    study.points.push_back(std::move(p));
  sort_curves(study.points);
  study.cost.total_seconds = seconds_since(study_start);
  return study;
}

}  // namespace pcasweep
