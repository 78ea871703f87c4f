// pcasweep/codec/adaptive_coder.hpp — the entropy stage: a context-adaptive
// binary range coder for the quantised coefficients and the 12-bit basis
// columns (docs/codec.md, "Entropy stage", has the measurements that chose it
// over zstd; docs/format.md the streams' place in the file).
//
// Contract: code_coefficients() turns the N·m quantised coefficients of a
// coded image (component-major, as CodedImage::coefficients holds them) into
// one range-coded byte stream; decode_coefficients() is its exact inverse and
// treats the bytes as untrusted: every loop is bounded, values are checked to
// fit int32, a stream must be consumed exactly and end in the encoder's final
// state, reads past its end are refused; a damaged stream gives Error(data) or
// wrong but bounded integers (caught by the file's CRC-32), never undefined
// behaviour. The file format always uses CodingOrder::patch_major; the other
// order exists for the measurement in bench/entropy_bench.cpp.
//
// Binarisation of each integer q:
//   zero flag          [q == 0]
//   sign               [q < 0]                    (only when q != 0)
//   exponent e         bit length of |q| minus 1, in unary (e ones, then a zero)
//   mantissa           the e bits of |q| below its top bit, high bit first
// (any int32; |q| ≤ 2^31 needs e ≤ 31, which ends the unary code without its zero).
// Every bin has its own adaptive probability (two estimators with fast and
// slow adaptation, averaged; faster warm-up while few bits have been seen).
// Contexts (all from coefficients the decoder already has):
//   activity  a = 2|L| + 2|U| + |P1| + |P2| (+ 2|C| in channels mode), where
//             L / U are the same component of the patch to the left / above,
//             P1 / P2 the two previous components of the same patch, C the same
//             component and patch of the previous channel; bucketed on a log scale;
//   scale     the running mean of |q| of the component so far, bucketed on a
//             log scale (stands in for the component's variance, which the
//             decoder does not know);
//   band      the component's rank: 0, 1–3, 4–15, 16–63, 64+.
// Zero flag: (band, scale, activity). Sign: (band, signs of L and U).
// Exponent bin t: (scale, activity / 2, min(t, 15)). First mantissa bit: (e, scale);
// the others: (e, bit position).
// Order: component-major (all N coefficients of one component, then the next)
// or patch-major (all m coefficients of one patch, then the next); the
// contexts are the same in both, only the adaptation order differs. The file
// (container version 3) uses the row order of CoefficientRowEncoder: patch
// row after patch row, and within a patch row plane after plane, patches left
// to right, each patch's m values; for one plane (joint colour) that is the
// patch-major order exactly. It lets a whole image be coded and decoded one
// band of patch rows at a time, holding two patch rows of coefficients.
//
// Range coder: 32-bit range, 64-bit low with carry propagation through a
// cached byte (the classic carry-less-output scheme), 16-bit probabilities
// clamped to [64, 65472]/65536. Stream = 1 zero byte, then the bytes of low;
// the encoder flushes 5 bytes, so a decoder that has read a valid stream
// stands exactly at its end with code 0.
// Every bin costs at least −log2(65472/65536) = 0.00141 bits, so a stream of
// R bytes holds at most 5678·R bins; readers refuse declared counts above
// kMaxBinsPerByte·R before allocating.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pcasweep {

// Where each observation sits: observation i is patch (i mod (nx·ny)) of
// channel plane i / (nx·ny); patches are row-major, nx across.
struct CoefficientGrid {
  std::size_t patches_across = 1;  // nx
  std::size_t patches_down = 1;    // ny
  std::size_t planes = 1;          // 1 (joint colour) or c (channels colour)
  std::size_t observations() const { return patches_across * patches_down * planes; }
};

enum class CodingOrder { component_major, patch_major };

inline constexpr std::uint64_t kMaxBinsPerByte = 6000;

// q: N·m integers, component-major (q[j·N + i]), any int32 values; N = grid.observations().
// Returns the coded bytes.
std::string code_coefficients(const std::vector<std::int32_t>& q, std::size_t m, const CoefficientGrid& grid,
                              CodingOrder order);

// bytes: a stream from code_coefficients() with the same m, grid, order (untrusted).
// Returns the N·m integers. Throws Error(data) naming `name` on a malformed stream.
std::vector<std::int32_t> decode_coefficients(std::string_view bytes, std::size_t m, const CoefficientGrid& grid,
                                              CodingOrder order, const std::string& name);

// Codes the coefficients of one image patch row by patch row, in the file's
// row order (above), with the contexts of code_coefficients().
class CoefficientRowEncoder {
 public:
  // m ≥ 0 components per observation; grid: the image's patch grid.
  CoefficientRowEncoder(std::size_t m, const CoefficientGrid& grid);
  // q: the next patch row, planes × patches_across × m values (plane, then
  // patch, then component). Throws Error(usage) after the last row.
  void add_row(const std::int32_t* q);
  // After every patch row: the coded bytes. Throws Error(usage) before.
  std::string finish();
  ~CoefficientRowEncoder();
  CoefficientRowEncoder(const CoefficientRowEncoder&) = delete;
  CoefficientRowEncoder& operator=(const CoefficientRowEncoder&) = delete;

 private:
  struct State;
  State* state_;
};

// Its inverse, over an untrusted stream (same guarantees as decode_coefficients()).
class CoefficientRowDecoder {
 public:
  // bytes: must outlive the decoder; `name` is used in messages.
  CoefficientRowDecoder(std::string_view bytes, std::size_t m, const CoefficientGrid& grid, const std::string& name);
  // Fills q (planes × patches_across × m values) with the next patch row.
  // Throws Error(data) on a malformed stream, Error(usage) after the last row.
  void next_row(std::int32_t* q);
  // After every row: throws Error(data) unless the stream ended exactly.
  void finish();
  ~CoefficientRowDecoder();
  CoefficientRowDecoder(const CoefficientRowDecoder&) = delete;
  CoefficientRowDecoder& operator=(const CoefficientRowDecoder&) = delete;

 private:
  struct State;
  State* state_;
};

// The basis entries (column after column, d each; 12-bit values in int16) with the same
// binarisation; contexts: magnitudes of the two previous entries of the column and of
// the same entry of the previous column (activity), the running mean |v| of the column
// (scale), the column's rank (band); sign: signs of the previous entry and of the
// previous column's entry.
// v: d·m entries. Returns the coded bytes.
std::string code_columns(const std::vector<std::int16_t>& v, std::size_t d);

// bytes: a stream from code_columns() (untrusted). Returns the d·m entries; Error(data)
// naming `name` on a malformed stream or a value outside int16.
std::vector<std::int16_t> decode_columns(std::string_view bytes, std::size_t d, std::size_t m, const std::string& name);

}  // namespace pcasweep
