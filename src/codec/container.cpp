#include "codec/container.hpp"

#include <openssl/evp.h>
#include <zlib.h>

#include <bit>
#include <cmath>
#include <cstring>

#include "core/error.hpp"
#include "io/image.hpp"

namespace pcasweep {

namespace {

template <typename T>
void put(std::string& out, T value) {
  unsigned char b[sizeof(T)];
  std::memcpy(b, &value, sizeof(T));  // the build targets little-endian hosts (checked below)
  out.append(reinterpret_cast<const char*>(b), sizeof(T));
}
static_assert(std::endian::native == std::endian::little, "container I/O assumes a little-endian host");

class Reader {
 public:
  Reader(std::string_view bytes, const std::string& name, const char* what)
      : bytes_(bytes), name_(name), what_(what) {}
  template <typename T>
  T get() {
    if (bytes_.size() - pos_ < sizeof(T)) throw data_error(name_ + ": " + what_ + " ends early (truncated)");
    T v;
    std::memcpy(&v, bytes_.data() + pos_, sizeof(T));
    pos_ += sizeof(T);
    return v;
  }
  template <typename T>
  void get_array(std::vector<T>& out, std::size_t count) {
    if ((bytes_.size() - pos_) / sizeof(T) < count) throw data_error(name_ + ": " + what_ + " ends early (truncated)");
    out.resize(count);
    if (count) std::memcpy(out.data(), bytes_.data() + pos_, count * sizeof(T));
    pos_ += count * sizeof(T);
  }
  std::string_view rest() const { return bytes_.substr(pos_); }
  std::size_t position() const { return pos_; }

 private:
  std::string_view bytes_;
  const std::string& name_;
  const char* what_;
  std::size_t pos_ = 0;
};

template <typename T>
void put_array(std::string& out, const std::vector<T>& v) {
  if (!v.empty()) out.append(reinterpret_cast<const char*>(v.data()), v.size() * sizeof(T));
}

std::uint32_t per_observation_channels(const CodedImage& c) {
  return c.patch.colour == ColourMode::joint ? c.channels : 1u;
}

}  // namespace

std::uint32_t crc32_of(std::string_view bytes) {
  uLong crc = crc32(0L, Z_NULL, 0);
  std::size_t pos = 0;
  while (pos < bytes.size()) {
    const uInt chunk = uInt(std::min<std::size_t>(bytes.size() - pos, 1u << 30));
    crc = crc32(crc, reinterpret_cast<const Bytef*>(bytes.data() + pos), chunk);
    pos += chunk;
  }
  return std::uint32_t(crc);
}

Sha256 sha256_of(std::string_view bytes) {
  Sha256 digest{};
  unsigned int len = 0;
  if (!EVP_Digest(bytes.data(), bytes.size(), digest.data(), &len, EVP_sha256(), nullptr) || len != 32) {
    throw data_error("SHA-256 computation failed in libcrypto");
  }
  return digest;
}

std::string to_hex(const Sha256& digest) {
  static const char* hex = "0123456789abcdef";
  std::string s;
  for (std::uint8_t b : digest) {
    s.push_back(hex[b >> 4]);
    s.push_back(hex[b & 15]);
  }
  return s;
}

CoefficientGrid coefficient_grid(const CodedImage& c) {
  Image geometry;
  geometry.width = int(c.width);
  geometry.height = int(c.height);
  geometry.channels = c.channels;
  const PatchLayout layout(geometry, c.patch, "coded image");
  CoefficientGrid g;
  g.patches_across = std::size_t(layout.patches_across());
  g.patches_down = std::size_t(layout.patches_down());
  g.planes = c.patch.colour == ColourMode::joint ? 1 : c.channels;
  return g;
}

namespace {
void check_parts(const CodedImage& c, bool with_coefficients) {
  const std::size_t m = c.coded();
  const bool has_mean = c.basis_kind != BasisKind::external;
  const bool has_columns = c.basis_kind == BasisKind::embedded;
  if (c.steps.size() != m || (has_mean && c.mean_fixed.size() != c.dimension) ||
      (has_columns && (c.column_scale.size() != m || c.column_fixed.size() != std::size_t(c.dimension) * m)) ||
      (with_coefficients && c.coefficients.size() != std::size_t(c.observations) * m)) {
    throw usage_error("internal: coded image parts disagree with its header");
  }
}

std::string assemble(const CodedImage& c, int zstd_level, std::string_view coefficient_stream) {
  const std::size_t m = c.coded();
  const bool has_mean = c.basis_kind != BasisKind::external;
  const bool has_columns = c.basis_kind == BasisKind::embedded;
  const bool adaptive = c.coder == EntropyCoder::adaptive;
  std::string body;  // what the zstd frame holds
  put_array(body, c.component_index);
  put_array(body, c.steps);
  if (has_mean) put_array(body, c.mean_fixed);
  if (has_columns) put_array(body, c.column_scale);
  std::string columns_stream;
  if (adaptive) {
    if (has_columns) columns_stream = code_columns(c.column_fixed, c.dimension);
  } else {
    if (has_columns) put_array(body, c.column_fixed);
    body += pack_integers(c.coefficients, c.coder == EntropyCoder::varint_zstd ? Packing::varint : Packing::planes);
  }
  const std::string frame = zstd_compress(body, zstd_level);

  std::string out;
  out.reserve(kCodedImageHeaderSize + frame.size() + columns_stream.size() + coefficient_stream.size() + 4);
  out.append(kCodedImageMagic, 4);
  put<std::uint16_t>(out, kCodedImageVersion);
  put<std::uint8_t>(out, 1);  // layout: patches
  put<std::uint8_t>(out, c.patch.colour == ColourMode::joint ? 0 : 1);
  put<std::uint32_t>(out, c.width);
  put<std::uint32_t>(out, c.height);
  put<std::uint8_t>(out, c.channels);
  put<std::uint8_t>(out, c.bit_depth);
  put<std::uint16_t>(out, std::uint16_t(c.patch.patch_height));
  put<std::uint16_t>(out, std::uint16_t(c.patch.patch_width));
  put<std::uint16_t>(out, std::uint16_t(c.patch.stride_y));
  put<std::uint16_t>(out, std::uint16_t(c.patch.stride_x));
  put<std::uint8_t>(out, std::uint8_t(c.basis_kind));
  put<std::uint8_t>(out, std::uint8_t(c.coder));
  put<std::uint32_t>(out, c.dimension);
  put<std::uint32_t>(out, c.k);
  put<std::uint32_t>(out, std::uint32_t(m));
  put<std::uint32_t>(out, c.observations);
  put<double>(out, c.water_level);
  out.append(reinterpret_cast<const char*>(c.basis_sha256.data()), 32);
  put<std::uint64_t>(out, body.size());
  put<std::uint64_t>(out, frame.size());
  put<std::uint64_t>(out, columns_stream.size());
  put<std::uint64_t>(out, coefficient_stream.size());
  out += frame;
  out += columns_stream;
  out += coefficient_stream;
  put<std::uint32_t>(out, crc32_of(out));
  return out;
}
}  // namespace

std::string write_container_coded(const CodedImage& c, std::string_view coefficient_stream, int zstd_level) {
  if (c.coder != EntropyCoder::adaptive) throw usage_error("internal: pre-coded coefficients need the adaptive coder");
  check_parts(c, false);
  return assemble(c, zstd_level, coefficient_stream);
}

std::string write_container(const CodedImage& c, int zstd_level) {
  check_parts(c, true);
  if (c.coder != EntropyCoder::adaptive && c.coder != EntropyCoder::varint_zstd && c.coder != EntropyCoder::planes_zstd) {
    throw usage_error("internal: unknown entropy coder");
  }
  if (c.coder != EntropyCoder::adaptive) return assemble(c, zstd_level, {});
  // The file's row order: per patch row, plane after plane, patch after patch, component after component.
  const CoefficientGrid g = coefficient_grid(c);
  const std::size_t m = c.coded(), n = g.observations(), nx = g.patches_across, per_plane = nx * g.patches_down;
  CoefficientRowEncoder encoder(m, g);
  std::vector<std::int32_t> row(g.planes * nx * m);
  for (std::size_t py = 0; py < g.patches_down; ++py) {
    for (std::size_t p = 0; p < g.planes; ++p)
      for (std::size_t px = 0; px < nx; ++px)
        for (std::size_t j = 0; j < m; ++j)
          row[(p * nx + px) * m + j] = c.coefficients[j * n + p * per_plane + py * nx + px];
    encoder.add_row(row.data());
  }
  return assemble(c, zstd_level, encoder.finish());
}

std::string with_components_asked(std::string_view file, std::uint32_t k) {
  // Header offsets (docs/format.md): version at 4, k at 32, m at 36.
  constexpr std::size_t kVersionAt = 4, kAskedAt = 32, kCodedAt = 36;
  std::uint16_t version = 0;
  std::uint32_t m = 0;
  if (file.size() < kCodedImageHeaderSize + 4 || std::memcmp(file.data(), kCodedImageMagic, 4) != 0)
    throw usage_error("internal: not a coded image");
  std::memcpy(&version, file.data() + kVersionAt, 2);
  std::memcpy(&m, file.data() + kCodedAt, 4);
  if (version != kCodedImageVersion || k < m) throw usage_error("internal: cannot relabel this coded image");
  std::string out(file);
  std::memcpy(out.data() + kAskedAt, &k, 4);
  const std::uint32_t crc = crc32_of(std::string_view(out).substr(0, out.size() - 4));
  std::memcpy(out.data() + out.size() - 4, &crc, 4);
  return out;
}

OpenedContainer open_container(std::string_view bytes, const std::string& name) {
  if (bytes.size() < 4 || std::memcmp(bytes.data(), kCodedImageMagic, 4) != 0) {
    throw data_error(name + ": not a pcasweep coded image (magic is not \"PSCI\")");
  }
  if (bytes.size() < kCodedImageHeaderSize + 4) throw data_error(name + ": file is truncated (" + std::to_string(bytes.size()) + " bytes)");
  Reader h(bytes, name, "header");
  h.get<std::uint32_t>();
  const auto version = h.get<std::uint16_t>();
  if (version != kCodedImageVersion && version != 2) {
    throw data_error(name + ": format version " + std::to_string(version) + " is not supported (this build reads versions 2 and " +
                     std::to_string(kCodedImageVersion) + ")");
  }
  std::uint32_t stored_crc;
  std::memcpy(&stored_crc, bytes.data() + bytes.size() - 4, 4);
  if (crc32_of(bytes.substr(0, bytes.size() - 4)) != stored_crc) {
    throw data_error(name + ": checksum mismatch: the file is truncated or corrupt");
  }
  CodedImage c;
  const auto layout_code = h.get<std::uint8_t>();
  const auto colour = h.get<std::uint8_t>();
  if (layout_code != 1) throw data_error(name + ": unknown layout code " + std::to_string(layout_code));
  if (colour > 1) throw data_error(name + ": unknown colour mode code " + std::to_string(colour));
  c.patch.colour = colour == 0 ? ColourMode::joint : ColourMode::channels;
  c.width = h.get<std::uint32_t>();
  c.height = h.get<std::uint32_t>();
  c.channels = h.get<std::uint8_t>();
  c.bit_depth = h.get<std::uint8_t>();
  c.patch.patch_height = h.get<std::uint16_t>();
  c.patch.patch_width = h.get<std::uint16_t>();
  c.patch.stride_y = h.get<std::uint16_t>();
  c.patch.stride_x = h.get<std::uint16_t>();
  const auto kind = h.get<std::uint8_t>();
  const auto coder = h.get<std::uint8_t>();
  c.dimension = h.get<std::uint32_t>();
  c.k = h.get<std::uint32_t>();
  const std::uint32_t m = h.get<std::uint32_t>();
  c.observations = h.get<std::uint32_t>();
  c.water_level = h.get<double>();
  for (auto& b : c.basis_sha256) b = h.get<std::uint8_t>();
  const auto body_size = h.get<std::uint64_t>();
  const auto frame_size = h.get<std::uint64_t>();
  const auto columns_size = h.get<std::uint64_t>();
  const auto coefficients_size = h.get<std::uint64_t>();

  // Geometry, against caps, before any allocation.
  if (c.width == 0 || c.height == 0 || c.channels < 1 || c.channels > 4) {
    throw data_error(name + ": header declares an impossible image (" + std::to_string(c.width) + "x" +
                     std::to_string(c.height) + ", " + std::to_string(c.channels) + " channels)");
  }
  if (std::uint64_t(c.width) * c.height * c.channels > kMaxImageSamples) {
    throw data_error(name + ": header declares an image of " + std::to_string(c.width) + "x" + std::to_string(c.height) +
                     "x" + std::to_string(c.channels) + " samples, above the cap of " + std::to_string(kMaxImageSamples));
  }
  if (c.bit_depth != 8 && c.bit_depth != 16) throw data_error(name + ": bit depth " + std::to_string(c.bit_depth) + " is not 8 or 16");
  const auto& p = c.patch;
  if (p.patch_height < 1 || p.patch_width < 1 || std::uint32_t(p.patch_height) > kMaxPatchSide ||
      std::uint32_t(p.patch_width) > kMaxPatchSide || p.stride_y < 1 || p.stride_x < 1 ||
      p.stride_y > p.patch_height || p.stride_x > p.patch_width || std::uint32_t(p.patch_height) > c.height ||
      std::uint32_t(p.patch_width) > c.width) {
    throw data_error(name + ": header declares an impossible patch geometry");
  }
  if (kind > 2) throw data_error(name + ": unknown basis kind " + std::to_string(kind));
  c.basis_kind = BasisKind(kind);
  if (coder < 1 || coder > 3) throw data_error(name + ": unknown entropy coder " + std::to_string(coder));
  c.coder = EntropyCoder(coder);
  const bool adaptive = c.coder == EntropyCoder::adaptive;
  const std::uint64_t d = std::uint64_t(p.patch_height) * p.patch_width * per_observation_channels(c);
  if (c.dimension != d || d > kMaxDimension) {
    throw data_error(name + ": header declares d = " + std::to_string(c.dimension) + " but the patch geometry gives " +
                     std::to_string(d));
  }
  Image geometry;
  geometry.width = int(c.width);
  geometry.height = int(c.height);
  geometry.channels = c.channels;
  const PatchLayout layout(geometry, p, name);
  if (std::uint64_t(layout.observation_count()) != c.observations) {
    throw data_error(name + ": header declares N = " + std::to_string(c.observations) + " observations, the geometry gives " +
                     std::to_string(layout.observation_count()));
  }
  if (m > d || c.k > d || m > c.k) {
    throw data_error(name + ": header declares " + std::to_string(m) + " coded of k = " + std::to_string(c.k) +
                     " components with d = " + std::to_string(d));
  }
  const std::uint64_t count = std::uint64_t(c.observations) * m;
  const bool has_mean = c.basis_kind != BasisKind::external;
  const bool has_columns = c.basis_kind == BasisKind::embedded;
  const std::uint64_t side_part = m * 8 + (has_mean ? d * 2 : 0) + (has_columns ? m * 4 : 0);
  const std::uint64_t column_part = has_columns ? d * m * 2 : 0;
  if (adaptive) {
    if (body_size != side_part) {
      throw data_error(name + ": header declares a body of " + std::to_string(body_size) + " bytes, the side information of " +
                       std::to_string(m) + " components takes " + std::to_string(side_part));
    }
  } else {
    const bool varint = c.coder == EntropyCoder::varint_zstd;
    const std::uint64_t packed_max = varint ? count * 5 : 1 + count * 4;
    const std::uint64_t packed_min = varint ? count : 1 + count;
    if (body_size < side_part + column_part + packed_min || body_size > side_part + column_part + packed_max) {
      throw data_error(name + ": header declares a body of " + std::to_string(body_size) + " bytes, impossible for " +
                       std::to_string(count) + " coefficients");
    }
  }
  const std::uint64_t held = bytes.size() - kCodedImageHeaderSize - 4;
  if (frame_size > held || columns_size > held || coefficients_size > held ||
      frame_size + columns_size + coefficients_size != held) {
    throw data_error(name + ": header declares parts of " + std::to_string(frame_size) + " + " + std::to_string(columns_size) +
                     " + " + std::to_string(coefficients_size) + " bytes, the file holds " + std::to_string(held));
  }
  if (adaptive) {
    // A range-coded stream of R bytes holds at most ~5678·R decisions (adaptive_coder.hpp):
    // refuse counts it cannot hold before allocating for them.
    if (coefficients_size < 5 || count > kMaxBinsPerByte * coefficients_size) {
      throw data_error(name + ": range-coded coefficients of " + std::to_string(coefficients_size) +
                       " bytes cannot hold " + std::to_string(count) + " values");
    }
    if (has_columns ? (columns_size < 5 || d * m > kMaxBinsPerByte * columns_size) : columns_size != 0) {
      throw data_error(name + ": range-coded basis columns of " + std::to_string(columns_size) +
                       " bytes do not fit " + std::to_string(has_columns ? d * m : 0) + " entries");
    }
  } else if (columns_size != 0 || coefficients_size != 0) {
    throw data_error(name + ": zstd-coded file declares range-coded parts");
  }
  const std::string body = zstd_decompress(bytes.substr(kCodedImageHeaderSize, frame_size), std::size_t(body_size), name);

  Reader b(body, name, "body");
  b.get_array(c.component_index, m);
  b.get_array(c.steps, m);
  if (has_mean) b.get_array(c.mean_fixed, std::size_t(d));
  if (has_columns) b.get_array(c.column_scale, m);
  if (has_columns && !adaptive) b.get_array(c.column_fixed, std::size_t(d * m));
  std::vector<bool> seen(std::size_t(d), false);
  for (std::uint32_t i : c.component_index) {
    if (i >= d || seen[i]) throw data_error(name + ": component list is invalid (index " + std::to_string(i) + ")");
    seen[i] = true;
  }
  for (float s : c.steps)
    if (!(s > 0.0f) || !std::isfinite(s)) throw data_error(name + ": a quantiser step is not a positive number");
  for (float s : c.column_scale)
    if (!(s > 0.0f) || !std::isfinite(s)) throw data_error(name + ": a basis column scale is not a positive number");
  OpenedContainer opened;
  opened.version = version;
  const std::string_view streams = bytes.substr(kCodedImageHeaderSize + frame_size);
  if (adaptive) {
    if (has_columns) c.column_fixed = decode_columns(streams.substr(0, columns_size), std::size_t(d), m, name);
    opened.coefficient_stream = streams.substr(columns_size, coefficients_size);
  }
  const bool whole = !adaptive || (version == 2 && c.patch.colour == ColourMode::channels);
  if (whole) {
    if (count > kMaxDecodedValues) {
      throw data_error(name + ": decoding would hold " + std::to_string(count) + " coefficients at once, above the cap of " +
                       std::to_string(kMaxDecodedValues));
    }
    c.coefficients = adaptive ? decode_coefficients(opened.coefficient_stream, m, coefficient_grid(c),
                                                    CodingOrder::patch_major, name)
                              : unpack_integers(b.rest(), std::size_t(count),
                                                c.coder == EntropyCoder::varint_zstd ? Packing::varint : Packing::planes, name);
    opened.coefficients_decoded = true;
    opened.coefficient_stream = {};
  }
  opened.image = std::move(c);
  return opened;
}

CodedImage read_container(std::string_view bytes, const std::string& name) {
  OpenedContainer opened = open_container(bytes, name);
  CodedImage& c = opened.image;
  if (opened.coefficients_decoded) return std::move(c);
  const CoefficientGrid g = coefficient_grid(c);
  const std::size_t m = c.coded(), n = g.observations(), nx = g.patches_across, per_plane = nx * g.patches_down;
  if (std::uint64_t(n) * m > kMaxDecodedValues) {
    throw data_error(name + ": decoding would hold " + std::to_string(std::uint64_t(n) * m) +
                     " coefficients at once, above the cap of " + std::to_string(kMaxDecodedValues));
  }
  c.coefficients.assign(n * m, 0);
  CoefficientRowDecoder decoder(opened.coefficient_stream, m, g, name);
  std::vector<std::int32_t> row(g.planes * nx * m);
  for (std::size_t py = 0; py < g.patches_down; ++py) {
    decoder.next_row(row.data());
    for (std::size_t p = 0; p < g.planes; ++p)
      for (std::size_t px = 0; px < nx; ++px)
        for (std::size_t j = 0; j < m; ++j)
          c.coefficients[j * n + p * per_plane + py * nx + px] = row[(p * nx + px) * m + j];
  }
  decoder.finish();
  return std::move(c);
}

}  // namespace pcasweep
