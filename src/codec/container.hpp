// pcasweep/codec/container.hpp — the coded-image file (".pcsc", magic "PSCI").
//
// Contract: write_container() lays a CodedImage out byte by byte as
// docs/format.md describes (little-endian, fixed 116-byte header, a zstd frame
// with the side information, then — entropy coder 3 — the range-coded basis
// columns and coefficients, CRC-32 trailer); read_container() is its inverse
// and treats the bytes as untrusted: it checks the length and CRC-32 first,
// then every header field against caps before anything is allocated, then
// every part's exact length, and throws Error(data) "<name>: <what is wrong>"
// on any defect.
// The container knows nothing about how the numbers were chosen.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "codec/adaptive_coder.hpp"
#include "codec/entropy.hpp"
#include "observe/patches.hpp"

namespace pcasweep {

inline constexpr char kCodedImageMagic[4] = {'P', 'S', 'C', 'I'};
// Version 3 codes the coefficients in patch-row order (adaptive_coder.hpp),
// so files are written and read one band at a time; version 2 (whole-image
// patch-major order, different only in channels colour) is still read.
inline constexpr std::uint16_t kCodedImageVersion = 3;
inline constexpr std::size_t kCodedImageHeaderSize = 116;

// Where the decoder finds the basis.
enum class BasisKind : std::uint8_t {
  embedded = 0,  // coded columns and mean stored in the file (16-bit, see quantize.hpp)
  external = 1,  // a basis file, identified by its SHA-256; mean and columns come from it
  dct = 2,       // the fixed DCT-II basis (codec/dct.hpp); mean stored in the file
};

using Sha256 = std::array<std::uint8_t, 32>;

struct CodedImage {
  std::uint32_t width = 0, height = 0;
  std::uint8_t channels = 0, bit_depth = 8;
  PatchOptions patch;                     // strides normalised (never 0)
  BasisKind basis_kind = BasisKind::embedded;
  EntropyCoder coder = EntropyCoder::adaptive;
  std::uint32_t dimension = 0;            // d
  std::uint32_t k = 0;                    // components asked for
  std::uint32_t observations = 0;         // N
  double water_level = 0.0;               // θ (informational)
  Sha256 basis_sha256{};                  // external only, else zeros
  std::vector<std::uint32_t> component_index;  // m: column of the basis each coded component is
  std::vector<float> steps;                    // m, > 0
  std::vector<std::uint16_t> mean_fixed;       // d (embedded, dct); empty for external
  std::vector<float> column_scale;             // m (embedded only)
  std::vector<std::int16_t> column_fixed;      // d·m, column after column (embedded only)
  std::vector<std::int32_t> coefficients;      // N·m, component after component

  std::size_t coded() const { return component_index.size(); }
};

// Returns the file bytes, body coded with image.coder. zstd_level: 1..22 (the side
// information's frame, and the whole body for the zstd coders). Throws Error(usage)
// if the vectors' sizes disagree with the header fields.
std::string write_container(const CodedImage& image, int zstd_level);

// As write_container() for the adaptive coder, with the coefficients already
// coded by a CoefficientRowEncoder over coefficient_grid(image) (image.coder
// must be adaptive; image.coefficients is ignored).
std::string write_container_coded(const CodedImage& image, std::string_view coefficient_stream, int zstd_level);

// file: a coded image written by this build. Returns the same file recording
// `k` as the components asked for (header field and CRC-32 rewritten): the
// file of a larger k whose coded components are the same. Throws Error(usage)
// when `file` is not a current-version container or k is below its coded count.
std::string with_components_asked(std::string_view file, std::uint32_t k);

// A coded file checked and parsed except for its range-coded coefficients.
struct OpenedContainer {
  CodedImage image;                     // all fields; coefficients only when `coefficients_decoded`
  std::uint16_t version = 0;
  bool coefficients_decoded = false;    // zstd coders and version 2 channels files: decoded whole
  std::string_view coefficient_stream;  // otherwise: the stream for a CoefficientRowDecoder (views `bytes`)
};

// Parses and validates `bytes` (untrusted; must outlive the result). `name` is used in messages.
OpenedContainer open_container(std::string_view bytes, const std::string& name);

// Parses and validates `bytes` (untrusted) and decodes every coefficient
// (image.coefficients, component-major). `name` is used in messages.
CodedImage read_container(std::string_view bytes, const std::string& name);

// Where each coded image's observations sit on the patch grid (contexts of the range coder).
CoefficientGrid coefficient_grid(const CodedImage& image);

// CRC-32 (ISO-HDLC, as zlib and PNG compute it) of `bytes`.
std::uint32_t crc32_of(std::string_view bytes);

// SHA-256 (FIPS 180-4, via OpenSSL's libcrypto) of `bytes`.
Sha256 sha256_of(std::string_view bytes);

// Lower-case hex of a digest.
std::string to_hex(const Sha256& digest);

// Caps applied by every reader (a file declaring more is refused before allocation).
inline constexpr std::uint32_t kMaxPatchSide = 1024;
inline constexpr std::uint64_t kMaxDimension = 65536;                    // d
// Coefficients held at once by read_container() (N·m int32); the band-wise
// decoder (image_codec.hpp) holds two patch rows and has no such cap.
inline constexpr std::uint64_t kMaxDecodedValues = std::uint64_t(1) << 28;

}  // namespace pcasweep
