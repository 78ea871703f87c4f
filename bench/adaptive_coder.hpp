// pcasweep/bench/adaptive_coder.hpp — a context-adaptive binary range coder for
// the quantised coefficients, kept as a measurement mode (docs/codec.md:
// "A dedicated adaptive coder").
//
// Contract: code_coefficients() turns the N·m quantised coefficients of a
// coded image (component-major, as CodedImage::coefficients holds them) into
// one range-coded byte stream; decode_coefficients() is its exact inverse and
// treats the bytes as untrusted (every loop bounded, magnitudes capped at
// 2^30, reads past the end counted and refused, never undefined behaviour).
//
// Binarisation of each integer q:
//   zero flag          [q == 0]
//   sign               [q < 0]                    (only when q != 0)
//   exponent e         bit length of |q| minus 1, in unary (e ones, then a zero)
//   mantissa           the e bits of |q| below its top bit, high bit first
// Every bin has its own adaptive probability (two estimators with fast and
// slow adaptation, averaged; faster warm-up while few bits have been seen). Contexts (all from coefficients the decoder already has):
//   activity  a = 2|L| + 2|U| + |P1| + |P2| (+ 2|C| in channels mode), where
//             L / U are the same component of the patch to the left / above,
//             P1 / P2 the two previous components of the same patch, C the same
//             component and patch of the previous channel; bucketed on a log scale;
//   scale     the running mean of |q| of the component so far, bucketed on a
//             log scale (stands in for the component's variance, which the
//             decoder does not know);
//   band      the component's rank: 0, 1–3, 4–15, 16–63, 64+.
// Zero flag: (band, scale, activity). Sign: (band, signs of L and U).
// Exponent bin t: (scale, activity, min(t, 15)). First mantissa bit: (e, scale);
// the others: (e, bit position).
// Order: component-major (all N coefficients of one component, then the next)
// or patch-major (all m coefficients of one patch, then the next); the
// contexts are the same in both, only the adaptation order differs.
//
// Range coder: 32-bit range, 64-bit low with carry propagation through a
// cached byte (the classic carry-less-output scheme), 16-bit probabilities.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace pcasweep::bench {

// Where each observation sits: observation i is patch (i mod (nx·ny)) of
// channel plane i / (nx·ny); patches are row-major, nx across.
struct CoefficientGrid {
  std::size_t patches_across = 1;  // nx
  std::size_t patches_down = 1;    // ny
  std::size_t planes = 1;          // 1 (joint colour) or c (channels colour)
  std::size_t observations() const { return patches_across * patches_down * planes; }
};

enum class CodingOrder { component_major, patch_major };

// q: N·m integers, component-major (q[j·N + i]), |q| < 2^30; N = grid.observations().
// Returns the coded bytes.
std::string code_coefficients(const std::vector<std::int32_t>& q, std::size_t m, const CoefficientGrid& grid,
                              CodingOrder order);

// bytes: a stream from code_coefficients() with the same m, grid, order (untrusted).
// Returns the N·m integers. Throws Error(data) naming `name` on a malformed stream.
std::vector<std::int32_t> decode_coefficients(std::string_view bytes, std::size_t m, const CoefficientGrid& grid,
                                              CodingOrder order, const std::string& name);

// The 12-bit basis entries (column after column, d each, |v| ≤ 2047) with the same
// binarisation; contexts: magnitude of the previous entry of the column and of the
// same entry of the previous column, and the column's rank band.
std::string code_columns(const std::vector<std::int16_t>& v, std::size_t d);
std::vector<std::int16_t> decode_columns(std::string_view bytes, std::size_t d, std::size_t m, const std::string& name);

}  // namespace pcasweep::bench
