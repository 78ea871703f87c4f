// pcasweep/codec/image_codec.hpp — one image to coded bytes and back.
//
// Contract: encode_image() cuts the image into patches (PatchLayout), projects
// them on the decoder's copy of the basis (for an embedded basis the 16-bit
// mean and columns of quantize.hpp, so encoder and decoder use the very same
// numbers), measures each component's coefficient power λ_j = Σ c²/(N−1),
// picks the water level θ from --quality or --target-psnr, quantises the
// components with λ_j > θ among the first k, and writes the container with
// the adaptive range coder (or, on request, zstd with whichever packing is
// smaller). decode_coded_image()
// rebuilds X̂ = C·Vᵀ + 1·μᵀ, folds it and rounds/clips to the bit depth: the
// only way a coded image becomes pixels, used by both `decode` and `sweep`.
#pragma once

#include <optional>
#include <string>
#include <string_view>

#include "codec/basis_file.hpp"
#include "codec/container.hpp"
#include "io/image.hpp"
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
  double coefficient_entropy_bits = 0.0;  // order-0 entropy of the quantised streams
  std::size_t side_bytes = 0;     // steps, indices, mean, columns before compression
};

// image: W×H×c samples; patch: geometry (PatchLayout rules); choice: the basis;
// settings.k in 1..(basis rank, or d for DCT). Returns the file and figures.
// Throws Error(usage) for a k out of range, an unreachable --target-psnr, or a basis
// whose dimension does not fit the patch geometry; `name` is used in messages.
EncodeResult encode_image(const Image& image, const PatchOptions& patch, const BasisChoice& choice,
                          const CodecSettings& settings, const std::string& name);

// bytes: a coded image (untrusted). external: the basis file it was made with, when it
// names one (its SHA-256 in `external_sha256`). Returns the decoded image (bit depth and
// channel count from the file). Throws Error(usage) when an external basis is needed and
// missing; Error(data) for a corrupt file or a basis whose hash or geometry differs.
// clipped (optional) receives how many samples were clipped to the bit depth's range.
Image decode_coded_image(std::string_view bytes, const std::string& name, const SavedBasis* external = nullptr,
                         const Sha256* external_sha256 = nullptr, std::size_t* clipped = nullptr);

// Pixels (not samples) of the image a coded file holds, for bits per pixel.
inline double pixel_count(const Image& image) { return double(image.width) * double(image.height); }

}  // namespace pcasweep
