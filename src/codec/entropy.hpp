// pcasweep/codec/entropy.hpp — the zstd entropy stage (coders 1 and 2 of the
// coded-image file) and the choice of coder.
//
// The shipped encoder uses coder 3, the context-adaptive range coder of
// codec/adaptive_coder.hpp (≥ 10 % smaller files on the bundled samples,
// docs/codec.md); zstd stays readable and writable for comparison
// (`encode --entropy zstd`, `pcasweep-bench entropy`), and always compresses
// the small side information (indices, steps, mean, column scales).
//
// Contract (zstd coders): the integers of each coded component form one stream, streams
// are concatenated component after component (component-major), mapped to
// unsigned by zig-zag (0, −1, 1, −2, … → 0, 1, 2, 3, …) and laid out in one of
// two packings, then the whole body is compressed by zstd:
//   varint  LEB128: 7 bits a byte, low group first, high bit = more bytes follow
//   planes  the zig-zag values as 32-bit words split into byte planes: all
//           low bytes, then all second bytes, …; `planes` (1..4) says how
//           many planes are stored (the rest are all zero)
// With zstd the encoder tries both packings and keeps the smaller file. Every
// unpacking checks its bounds and throws Error(data) naming the file on
// malformed input.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pcasweep {

enum class Packing : std::uint8_t { varint = 1, planes = 2 };

// Byte 27 of the coded-image header: how the body is coded (docs/format.md).
enum class EntropyCoder : std::uint8_t {
  varint_zstd = 1,  // side information and varint-packed coefficients in one zstd frame
  planes_zstd = 2,  // the same with byte-plane packing
  adaptive = 3,     // side information in a zstd frame; basis columns and coefficients range-coded
};

// Which stage the encoder writes: the adaptive coder, or zstd with whichever packing is smaller.
enum class EntropyStage { adaptive, zstd };

inline std::uint32_t zigzag(std::int32_t v) {
  return (std::uint32_t(v) << 1) ^ std::uint32_t(-(std::int32_t)(std::uint32_t(v) >> 31));
}
inline std::int32_t unzigzag(std::uint32_t u) { return std::int32_t((u >> 1) ^ (~(u & 1) + 1)); }

// values: the integers in stream order. Returns the packed bytes (uncompressed).
std::string pack_integers(const std::vector<std::int32_t>& values, Packing packing);

// bytes: packed data holding exactly `count` integers. Returns them; `name` is
// used in errors. Throws Error(data) if the bytes do not hold exactly `count`.
std::vector<std::int32_t> unpack_integers(std::string_view bytes, std::size_t count, Packing packing,
                                          const std::string& name);

// zstd at `level` (1..22). Returns one frame with its content size recorded.
std::string zstd_compress(std::string_view bytes, int level);

// Decompresses one zstd frame whose content must be exactly `expected_size`
// bytes (checked against the frame header before allocating). Throws Error(data).
std::string zstd_decompress(std::string_view frame, std::size_t expected_size, const std::string& name);

// Order-0 empirical entropy in bits of each stream (values split into
// `streams` equal consecutive runs), summed: a lower bound for any
// memoryless per-stream coder, used to judge whether a dedicated arithmetic
// coder could pay off. values.size() must be a multiple of streams.
double order0_entropy_bits(const std::vector<std::int32_t>& values, std::size_t streams);

}  // namespace pcasweep
