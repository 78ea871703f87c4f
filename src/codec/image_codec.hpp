// pcasweep/codec/image_codec.hpp — one image to coded bytes and back, band by band.
//
// Contract: an image cut into patches (PatchLayout) is coded in three steps,
// each usable alone so that a sweep can share the expensive parts:
//   1. decoder_basis(): from the patches' moments (mean and scatter, one pass;
//      PatchMoments) fix the decoder's copy of the basis — for an embedded basis
//      the 16-bit mean and 12-bit columns of quantize.hpp, for DCT the DCT-II
//      columns ordered by the image's coefficient power, for an external basis
//      its own numbers — and each candidate component's coefficient power
//      λ_j = v̂ᵀ·S_μ̂·v̂/(N−1), S_μ̂ the scatter about the decoder's mean.
//   2. plan_coding(): pick the water level θ from --quality or --target-psnr
//      and the components among the first k with λ_j > θ (quantize.hpp).
//   3. PatchEncoder: bands of projected coefficients C = (X_b − 1μ̂ᵀ)·V̂ in,
//      quantised, range-coded in the file's patch-row order, and — for the
//      sweep's measurements — the decoder's reconstruction of the band out.
// decode_coded_image() and PatchDecoder run the decoder over the same bands
// (band_patch_rows() of the geometry): dequantise, X̂ = Ĉ·V̂ᵀ + 1·μ̂ᵀ
// (reconstruct_coded_band), fold (PatchFolder), round and clip. That is the
// only way a coded image becomes pixels, used by `decode` and `sweep` alike,
// so what the sweep measures is what `decode` writes, bit for bit (on the
// same build; the band product's result does not depend on the thread count).
// Memory: the image, O(band·(d + r)) and the coded bytes; never N×d.
#pragma once

#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "codec/basis_file.hpp"
#include "codec/container.hpp"
#include "io/image.hpp"
#include "observe/observation_blocks.hpp"
#include "observe/patch_folder.hpp"
#include "observe/patches.hpp"
#include "solve/basis.hpp"

namespace pcasweep {

struct CodecSettings {
  int k = 0;                          // components to consider, 1..d (1..r for a basis of rank r)
  int quality = 90;                   // 1..100, used when target_psnr is empty
  std::optional<double> target_psnr;  // dB; solves for θ instead of --quality
  int zstd_level = 19;                // side information (and the whole body with zstd)
  EntropyStage entropy = EntropyStage::adaptive;
  bool compare_entropy = false;       // also write the other coders and record their file sizes
};

// Which basis the encoder uses.
struct BasisChoice {
  BasisKind kind = BasisKind::embedded;
  const Basis* basis = nullptr;  // embedded: the image's own basis; external: the loaded file's basis
  Sha256 sha256{};               // external: SHA-256 of the basis file
};

struct EncodeResult {
  std::string bytes;              // the whole file
  double water_level = 0.0;       // θ
  double nominal_psnr_db = 0.0;   // the PSNR θ was chosen for
  double predicted_mse = 0.0;     // model MSE per sample (quantize.hpp)
  double gaussian_rate_bits = 0;  // Σ ½log2(λ_j/θ) per observation over the first k (model)
  int coded = 0;                  // m, components that got bits
  EntropyCoder coder = EntropyCoder::adaptive;  // the coder of `bytes`
  // File sizes with each coder: the one written always; all three with compare_entropy;
  // both zstd packings whenever zstd was asked for (the smaller is kept). 0 = not tried.
  std::size_t adaptive_file_bytes = 0, varint_file_bytes = 0, planes_file_bytes = 0;
  // Order-0 entropy of the quantised streams; computed only with compare_entropy or zstd
  // (it needs every coefficient at once), else 0.
  double coefficient_entropy_bits = 0.0;
  std::size_t side_bytes = 0;     // steps, indices, mean, columns before compression
};

// The patches' moments: all the encoder needs to know about an image before coding.
struct PatchMoments {
  Eigen::Index observations = 0;  // N
  Eigen::VectorXd mean;           // d
  Eigen::MatrixXd scatter;        // d×d, Σ (x − mean)(x − mean)ᵀ
};

// One pass over image's patches (layout's geometry). Returns N, the mean and the scatter.
PatchMoments patch_moments(const PatchLayout& layout, const Image& image);

// The decoder's copy of a basis for one image, and the image's coefficient power on each
// candidate component, in the order components are considered.
struct DecoderBasis {
  BasisKind kind = BasisKind::embedded;
  Sha256 sha256{};                          // external only
  Eigen::VectorXd mean;                     // d, as the decoder rebuilds it
  std::vector<std::uint16_t> mean_fixed;    // d (embedded, dct); empty for external
  Eigen::MatrixXd columns;                  // d×r_avail, as the decoder rebuilds them
  std::vector<std::uint32_t> column_index;  // r_avail: the basis column (or DCT index) of each candidate
  std::vector<float> scales;                // r_avail (embedded): float32 scale per column
  std::vector<std::int16_t> fixed_columns;  // d·r_avail (embedded): 12-bit entries, column after column
  Eigen::VectorXd power;                    // r_avail: Σ_i c_ij²/(N−1), c = (x − mean)·column
  double total = 0.0;                       // Σ_i ‖x_i − mean‖²/(N−1)
  Eigen::Index observations = 0;            // N
  Eigen::Index available() const { return columns.cols(); }
};

// layout: the image's patch geometry; bit_depth: 8 or 16; moments: patch_moments() of the
// image; choice: the basis (embedded/external: choice.basis required). Returns the
// decoder's basis. Throws Error(usage) naming `name` when the basis's dimension does not
// fit the patch geometry.
DecoderBasis decoder_basis(const PatchLayout& layout, int bit_depth, const PatchMoments& moments,
                           const BasisChoice& choice, const std::string& name);

// band: rows × d observations (observe_band). Sets out = (band − 1·meanᵀ)·columns,
// rows × r_avail: the coefficients every coding plan over `basis` quantises.
void project_band(const DecoderBasis& basis, const RowBlock& band, RowBlock& out);

// Everything a coded file holds but its coefficients, and the model's figures.
struct CodingPlan {
  CodedImage header;                   // coefficients empty
  std::vector<Eigen::Index> coded;     // m positions (into the decoder basis's candidates), ascending
  Eigen::MatrixXd columns;             // d×m: the decoder's columns of the coded components
  Eigen::VectorXd mean;                // d: the decoder's mean
  EncodeResult figures;                // water level, nominal and model PSNR, rate model, coded; no bytes
};

// Chooses θ and the coded components among the first settings.k candidates.
// Throws Error(usage) for a k out of 1..r_avail or an unreachable --target-psnr.
CodingPlan plan_coding(const PatchLayout& layout, int bit_depth, const DecoderBasis& basis,
                       const CodecSettings& settings, const std::string& name);

// The decoder's reconstruction of one band: out = dequantized·columnsᵀ + 1·meanᵀ,
// dequantized: rows × m (q·step), columns: d×m, mean: d; out: rows × d.
void reconstruct_coded_band(const Eigen::MatrixXd& dequantized, const Eigen::MatrixXd& columns,
                            const Eigen::VectorXd& mean, RowBlock& out);

// Codes one image band by band, in order; the bands must be those of
// band_patch_rows(layout) (so decoding repeats the same products).
class PatchEncoder {
 public:
  // plan, layout: must outlive the encoder. settings: the entropy stage and zstd level.
  PatchEncoder(const CodingPlan& plan, const PatchLayout& layout, const CodecSettings& settings);
  ~PatchEncoder();
  PatchEncoder(const PatchEncoder&) = delete;
  PatchEncoder& operator=(const PatchEncoder&) = delete;
  // projected: project_band() of patch rows [py0, py1) over the plan's decoder basis.
  // Quantises and codes the coded components; when `reconstruction` is given, sets it to
  // the decoder's X̂ of the band (rows × d, reconstruct_coded_band).
  void add_band(int py0, int py1, const RowBlock& projected, RowBlock* reconstruction);
  // After the last band: the file and its figures.
  EncodeResult finish();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// image: W×H×c samples; patch: geometry (PatchLayout rules); choice: the basis;
// settings.k in 1..(basis rank, or d for DCT). Returns the file and figures: one
// pass for the moments (or `moments` when given), one to code.
// Throws Error(usage) for a k out of range, an unreachable --target-psnr, or a basis
// whose dimension does not fit the patch geometry; `name` is used in messages.
EncodeResult encode_image(const Image& image, const PatchOptions& patch, const BasisChoice& choice,
                          const CodecSettings& settings, const std::string& name,
                          const PatchMoments* moments = nullptr);

// Decodes a coded image band by band.
class PatchDecoder {
 public:
  // bytes (untrusted; must outlive the decoder). external: the basis file it was made with,
  // when it names one (its SHA-256 in `external_sha256`). Throws Error(usage) when an
  // external basis is needed and missing; Error(data) for a corrupt file or a basis whose
  // hash or geometry differs.
  PatchDecoder(std::string_view bytes, const std::string& name, const SavedBasis* external = nullptr,
               const Sha256* external_sha256 = nullptr);
  ~PatchDecoder();
  PatchDecoder(const PatchDecoder&) = delete;
  PatchDecoder& operator=(const PatchDecoder&) = delete;
  // The coded image's geometry (coefficients empty).
  const CodedImage& header() const;
  // Decodes the next band and sets `rows` to its completed image rows, rounded and
  // clipped (count × width × channels samples); returns count, 0 after the last row.
  // Adds clipped samples to *clipped when given. Throws Error(data) on a corrupt stream.
  int next_rows(std::vector<std::uint16_t>& rows, std::size_t* clipped = nullptr);

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// bytes: a coded image (untrusted). Returns the decoded image (bit depth and channel
// count from the file), through PatchDecoder. Errors as PatchDecoder's.
// clipped (optional) receives how many samples were clipped to the bit depth's range.
Image decode_coded_image(std::string_view bytes, const std::string& name, const SavedBasis* external = nullptr,
                         const Sha256* external_sha256 = nullptr, std::size_t* clipped = nullptr);

// Pixels (not samples) of the image a coded file holds, for bits per pixel.
inline double pixel_count(const Image& image) { return double(image.width) * double(image.height); }

}  // namespace pcasweep
