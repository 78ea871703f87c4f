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
#include "codec/patch_sweep.hpp"
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
      Solution solved = solve_scatter(sum, settings.solver);
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

RdStudy rate_distortion(const ImageAnalysis& a, const RdSettings& settings) {
  const auto study_start = std::chrono::steady_clock::now();
  if (!a.patches() || a.sources.size() != 1)
    throw usage_error("rate-distortion comparison needs one image cut into patches");
  RdStudy study;
  const CodedCurves coded(*a.patches(), a.image(), a.basis, a.moments ? &*a.moments : nullptr, a.input(),
                          settings.zstd_level);
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
  study.cost.total_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - study_start).count();
  return study;
}

}  // namespace pcasweep
