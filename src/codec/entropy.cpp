#include "codec/entropy.hpp"

#include <zstd.h>

#include <cmath>
#include <unordered_map>

#include "core/error.hpp"

namespace pcasweep {

std::string pack_integers(const std::vector<std::int32_t>& values, Packing packing) {
  std::string out;
  if (packing == Packing::varint) {
    out.reserve(values.size() + values.size() / 4);
    for (std::int32_t v : values) {
      std::uint32_t u = zigzag(v);
      while (u >= 0x80) {
        out.push_back(char((u & 0x7F) | 0x80));
        u >>= 7;
      }
      out.push_back(char(u));
    }
    return out;
  }
  std::uint32_t all = 0;
  for (std::int32_t v : values) all |= zigzag(v);
  int planes = 1;
  while (planes < 4 && (all >> (8 * planes)) != 0) ++planes;
  out.reserve(1 + values.size() * std::size_t(planes));
  out.push_back(char(planes));
  for (int p = 0; p < planes; ++p)
    for (std::int32_t v : values) out.push_back(char((zigzag(v) >> (8 * p)) & 0xFF));
  return out;
}

std::vector<std::int32_t> unpack_integers(std::string_view bytes, std::size_t count, Packing packing,
                                          const std::string& name) {
  std::vector<std::int32_t> values;
  if (packing == Packing::varint) {
    if (bytes.size() < count || bytes.size() > count * 5) {
      throw data_error(name + ": coefficient data has the wrong length for " + std::to_string(count) + " values");
    }
    values.reserve(count);
    std::size_t pos = 0;
    for (std::size_t i = 0; i < count; ++i) {
      std::uint32_t u = 0;
      for (int shift = 0;; shift += 7) {
        if (pos >= bytes.size()) throw data_error(name + ": coefficient data ends inside a value");
        if (shift > 28) throw data_error(name + ": coefficient value longer than 5 bytes");
        const std::uint8_t b = std::uint8_t(bytes[pos++]);
        if (shift == 28 && (b & 0x70)) throw data_error(name + ": coefficient value exceeds 32 bits");
        u |= std::uint32_t(b & 0x7F) << shift;
        if (!(b & 0x80)) break;
      }
      values.push_back(unzigzag(u));
    }
    if (pos != bytes.size()) throw data_error(name + ": trailing bytes after the coefficients");
    return values;
  }
  if (packing != Packing::planes) throw data_error(name + ": unknown coefficient packing");
  if (bytes.empty()) throw data_error(name + ": coefficient data is empty");
  const int planes = std::uint8_t(bytes[0]);
  if (planes < 1 || planes > 4) throw data_error(name + ": coefficient data declares " + std::to_string(planes) + " byte planes (1..4 allowed)");
  if (bytes.size() - 1 != count * std::size_t(planes)) {
    throw data_error(name + ": coefficient data has the wrong length for " + std::to_string(count) + " values");
  }
  std::vector<std::uint32_t> u(count, 0);
  for (int p = 0; p < planes; ++p)
    for (std::size_t i = 0; i < count; ++i) u[i] |= std::uint32_t(std::uint8_t(bytes[1 + p * count + i])) << (8 * p);
  values.resize(count);
  for (std::size_t i = 0; i < count; ++i) values[i] = unzigzag(u[i]);
  return values;
}

std::string zstd_compress(std::string_view bytes, int level) {
  std::string out(ZSTD_compressBound(bytes.size()), '\0');
  const std::size_t n = ZSTD_compress(out.data(), out.size(), bytes.data(), bytes.size(), level);
  if (ZSTD_isError(n)) throw data_error(std::string("zstd compression failed: ") + ZSTD_getErrorName(n));
  out.resize(n);
  return out;
}

std::string zstd_decompress(std::string_view frame, std::size_t expected_size, const std::string& name) {
  const unsigned long long declared = ZSTD_getFrameContentSize(frame.data(), frame.size());
  if (declared == ZSTD_CONTENTSIZE_ERROR) throw data_error(name + ": compressed data is not a zstd frame");
  if (declared == ZSTD_CONTENTSIZE_UNKNOWN || declared != expected_size) {
    throw data_error(name + ": compressed data declares " +
                     (declared == ZSTD_CONTENTSIZE_UNKNOWN ? std::string("no size") : std::to_string(declared)) +
                     " bytes, the header says " + std::to_string(expected_size));
  }
  std::string out(expected_size, '\0');
  const std::size_t n = ZSTD_decompress(out.data(), out.size(), frame.data(), frame.size());
  if (ZSTD_isError(n)) throw data_error(name + ": compressed data is corrupt (" + ZSTD_getErrorName(n) + ")");
  if (n != expected_size) throw data_error(name + ": compressed data is shorter than declared");
  return out;
}

double order0_entropy_bits(const std::vector<std::int32_t>& values, std::size_t streams) {
  if (streams == 0 || values.empty()) return 0.0;
  const std::size_t len = values.size() / streams;
  double bits = 0.0;
  for (std::size_t s = 0; s < streams; ++s) {
    std::unordered_map<std::int32_t, std::size_t> counts;
    for (std::size_t i = s * len; i < (s + 1) * len; ++i) ++counts[values[i]];
    for (const auto& [v, c] : counts) bits -= double(c) * std::log2(double(c) / double(len));
  }
  return bits;
}

}  // namespace pcasweep
