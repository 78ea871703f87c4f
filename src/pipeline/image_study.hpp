// pcasweep/pipeline/image_study.hpp — wires the stages for one image:
// read -> observe -> solve -> reconstruct -> measure, and returns the rows
// (SweepRow). Tables, summary.json and the files are present/'s
// (present/sweep_tables.hpp, present/sweep_outputs.hpp).
//
// Contract: nothing here does numerical work of its own; it calls the
// stages in order. Every validation (file, patch, k list) happens before any
// output is written, so a bad input leaves no files behind.
#pragma once

#include <cmath>
#include <functional>
#include <memory>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "codec/image_codec.hpp"
#include "io/image.hpp"
#include "io/png.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
#include "observe/patches.hpp"
#include "solve/basis.hpp"
#include "solve/solver.hpp"

namespace pcasweep {

struct ImageStudySettings {
  std::string layout = "patches";  // patches | whole | bands (pipeline/image_set.hpp)
  PatchOptions patch;
  bool drop_alpha = false;
  std::uint64_t max_pixels = kDefaultMaxPixels;  // --max-pixels (io/image.hpp)
  SolverSettings solver;
};

// The reader options these settings ask for.
inline ImageReadOptions read_options(const ImageStudySettings& s) { return {s.drop_alpha, s.max_pixels}; }

struct ImageAnalysis {
  std::vector<std::string> inputs;   // paths as given, one per source
  std::vector<Image> sources;        // the samples analysed (alpha dropped if asked)
  bool alpha_dropped = false;        // a file had alpha and --drop-alpha removed it
  std::unique_ptr<Layout> layout;
  // N×d observations, held for the in-memory layouts (whole, bands) and when
  // asked for; empty for patches, which are streamed band by band from the
  // image (observe/patch_blocks.hpp) and never held.
  Eigen::MatrixXd X;
  Basis basis;
  SolveReport solve_report;  // how `basis` was solved (solver, reason, diagnostics)
  // Patches solved exactly: the patches' mean and scatter, which the codec
  // reuses instead of another pass (codec/image_codec.hpp).
  std::optional<PatchMoments> moments;

  const Image& image() const { return sources.front(); }
  const std::string& input() const { return inputs.front(); }
  Eigen::Index observations() const { return layout->observation_count(); }
  Eigen::Index dimension() const { return layout->dimension(); }
  // The patch geometry when the layout is patches, else null (Layout::patch_geometry()).
  const PatchLayout* patches() const { return layout->patch_geometry(); }
  // True when the observations are streamed (patches, X not held).
  bool streamed() const { return patches() != nullptr && X.size() == 0; }
};

// Reads `path`, cuts it into patches and solves. Throws Error.
ImageAnalysis analyze_image(const std::string& path, const ImageStudySettings& settings);

// Observes already-read sources with `layout` and solves. Patches are streamed
// (X stays empty) unless hold_observations is set, which keeps X (N×d) and
// makes every later step take the in-memory path (what the tests compare the
// streaming path against). Throws Error.
ImageAnalysis analyze_sources(std::vector<std::string> inputs, std::vector<Image> sources,
                              std::unique_ptr<Layout> layout, const SolverSettings& solver,
                              bool hold_observations = false);

// C = (X − 1μᵀ)·V[:, :k], N×k, for held or streamed observations (rows in
// observe()'s order). Holds N×k: for small images (the report's live viewer).
Eigen::MatrixXd coefficients_of(const ImageAnalysis& analysis, Eigen::Index k);

// Default k list for dimension d: 1, 2, 4, … (powers of two below d), then d.
std::vector<int> default_ks(Eigen::Index d);

// Parses "1,2,4,8" into sorted, de-duplicated values. Throws Error(usage)
// for anything that is not a list of positive integers.
std::vector<int> parse_k_list(const std::string& text);

// Throws Error(usage) unless every k is in [1, d].
void check_ks(const std::vector<int>& ks, Eigen::Index d);

struct SweepRow {
  int k = 0;
  ImageQuality quality;           // measured on the rounded, clipped image
  double ssim = 0.0;              // SSIM (measure/ssim.hpp) of the written image(s); NaN under 11x11
  std::vector<double> channel_ssim;  // per channel
  double energy_retained = 0.0;   // cumulative proportion of variance at k
  std::int64_t stored_values = 0; // k·d + N·k + d (estimate of size, not bytes)
  double ratio = 0.0;             // stored_values / raw sample count
  // Real bytes (codec/, see docs/codec.md), filled when the sweep encodes: one image, patches layout.
  std::int64_t bytes = -1;        // size of the coded file (-1: not encoded)
  int coded_components = 0;       // components of the first k above the water level
  double bits_per_pixel = NAN;    // 8·bytes / (width·height)
  double compression_ratio = NAN; // raw samples at the source bit depth / bytes
  double ratio_to_png = NAN;      // lossless PNG of the original (encode_png) / bytes
  std::size_t clipped_samples = 0;
};

// For each k (ascending, each in [1, r]): reconstruct, fold, round and clip,
// measure against the originals (all sources pooled). `on_image(k, source
// index, image)` (optional) receives each written-to-be image (whole: it
// costs an image's memory; write_sweep streams rows to files instead).
// Returns one row per k.
// With coding enabled (sweep_cmd does; the library default is off) and one image cut into patches, each k is encoded
// (codec/image_codec.hpp, own basis, --quality) and the quality is measured on the DECODED
// image; `coding.on_coded(k, bytes)` receives each file. Otherwise X̂_k is measured unquantised.
// Streamed patches go through one pass of codec/patch_sweep.hpp for every k;
// held observations through the in-memory path (reconstruct/, Layout::fold).
using ImageSink = std::function<void(int k, std::size_t source, const Image& image)>;
struct SweepCoding {
  bool enabled = false;
  int quality = 90;      // codec/quantize.hpp: water level at 10 + 0.4·quality dB
  int zstd_level = 19;
  std::function<void(int k, const std::string& bytes)> on_coded;
};

// How a sweep writes and measures its images.
struct SweepOutput {
  PngWriteOptions png;                                      // the <stem>.k<K>.png files
  SsimPrecision ssim_precision = SsimPrecision::automatic;  // measure/ssim.hpp
};
std::vector<SweepRow> sweep_ks(const ImageAnalysis& analysis, const std::vector<int>& ks,
                               const ImageSink& on_image = {}, const SweepCoding& coding = {});

class RowSink;  // codec/patch_sweep.hpp
// Where a streamed sweep's rows go. A k whose coded file repeats a smaller k's
// components is not reconstructed again: only its `owner` k gets sinks.
struct StreamedSinks {
  std::function<std::vector<RowSink*>(int k)> for_k;                                   // the sinks of k (not owned)
  std::function<std::function<void(int row, const float* values)>(int k)> ssim_map_for_k;  // local-SSIM map rows
  std::function<void(int k, int owner)> after_k;  // after the pass, once per k, ascending: k's rows were owner's
};

// The streamed sweep of one image cut into patches (analysis.streamed()): one
// pass of codec/patch_sweep.hpp for every k, rows to `sinks`. Rows as sweep_ks().
std::vector<SweepRow> sweep_streamed(const ImageAnalysis& analysis, const std::vector<int>& ks,
                                     const SweepCoding& coding, const StreamedSinks& sinks,
                                     const SweepOutput& output = {});

// Where a sweep's images go as they are made; the presentation stage
// implements it (present/sweep_outputs.hpp) so that pipeline/ writes no file.
// sweep_into() calls open() once every k is valid and before the first image,
// then, for a streamed analysis, streamed_sinks() once, else image() for each
// k and source; coded() receives each coded file (coding enabled).
class SweepImageOutput {
 public:
  virtual ~SweepImageOutput() = default;
  virtual void open(const ImageAnalysis& analysis) = 0;
  virtual StreamedSinks streamed_sinks(const ImageAnalysis& analysis) = 0;
  virtual void image(int k, std::size_t source, const Image& image) = 0;
  virtual void coded(int k, const std::string& bytes) = 0;
};

// The sweep of `ks` with its images handed to `output` (not owned; null: they
// are dropped): streamed analyses through sweep_streamed, held ones through
// sweep_ks. Rows as sweep_ks(). Throws Error(usage) for a k outside 1..r before
// output->open(), and whatever `output` throws.
std::vector<SweepRow> sweep_into(const ImageAnalysis& analysis, const std::vector<int>& ks, const SweepCoding& coding,
                                 const SweepOutput& settings, SweepImageOutput* output);

// File stem for outputs: "frame.png" -> "frame".
std::string output_stem(const std::string& path);

}  // namespace pcasweep
