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

namespace {

// The fixed header as read, before the body: the image fields in `c`, the
// raw codes and the part sizes beside them.
struct Header {
  std::uint16_t version = 0;
  CodedImage c;
  std::uint32_t m = 0;  // coded components
  std::uint64_t body_size = 0, frame_size = 0, columns_size = 0, coefficients_size = 0;
  std::uint8_t kind = 0, coder = 0;

  std::uint64_t d() const { return c.dimension; }
  std::uint64_t count() const { return std::uint64_t(c.observations) * m; }  // N·m coefficients
  bool adaptive() const { return c.coder == EntropyCoder::adaptive; }
  bool has_mean() const { return c.basis_kind != BasisKind::external; }
  bool has_columns() const { return c.basis_kind == BasisKind::embedded; }
};

// Magic, length, version and the CRC-32 over everything before the trailer.
// Returns the version. Throws Error(data).
std::uint16_t check_envelope(std::string_view bytes, const std::string& name) {
  if (bytes.size() < 4 || std::memcmp(bytes.data(), kCodedImageMagic, 4) != 0) {
    throw data_error(name + ": not a pcasweep coded image (magic is not \"PSCI\")");
  }
  if (bytes.size() < kCodedImageHeaderSize + 4) throw data_error(name + ": file is truncated (" + std::to_string(bytes.size()) + " bytes)");
  std::uint16_t version = 0;
  std::memcpy(&version, bytes.data() + 4, 2);
  if (version != kCodedImageVersion && version != 2) {
    throw data_error(name + ": format version " + std::to_string(version) + " is not supported (this build reads versions 2 and " +
                     std::to_string(kCodedImageVersion) + ")");
  }
  std::uint32_t stored_crc;
  std::memcpy(&stored_crc, bytes.data() + bytes.size() - 4, 4);
  if (crc32_of(bytes.substr(0, bytes.size() - 4)) != stored_crc) {
    throw data_error(name + ": checksum mismatch: the file is truncated or corrupt");
  }
  return version;
}

// Reads the fixed header fields (docs/format.md); checks the layout and colour codes.
Header read_header(std::string_view bytes, std::uint16_t version, const std::string& name) {
  Header hd;
  hd.version = version;
  CodedImage& c = hd.c;
  Reader h(bytes, name, "header");
  h.get<std::uint32_t>();
  h.get<std::uint16_t>();
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
  hd.kind = h.get<std::uint8_t>();
  hd.coder = h.get<std::uint8_t>();
  c.dimension = h.get<std::uint32_t>();
  c.k = h.get<std::uint32_t>();
  hd.m = h.get<std::uint32_t>();
  c.observations = h.get<std::uint32_t>();
  c.water_level = h.get<double>();
  for (auto& b : c.basis_sha256) b = h.get<std::uint8_t>();
  hd.body_size = h.get<std::uint64_t>();
  hd.frame_size = h.get<std::uint64_t>();
  hd.columns_size = h.get<std::uint64_t>();
  hd.coefficients_size = h.get<std::uint64_t>();
  return hd;
}

// Image and patch geometry, basis kind, coder, d, N and m against caps and
// against one another, before any allocation. Sets c.basis_kind and c.coder.
void check_geometry(Header& hd, const std::string& name) {
  CodedImage& c = hd.c;
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
  if (hd.kind > 2) throw data_error(name + ": unknown basis kind " + std::to_string(hd.kind));
  c.basis_kind = BasisKind(hd.kind);
  if (hd.coder < 1 || hd.coder > 3) throw data_error(name + ": unknown entropy coder " + std::to_string(hd.coder));
  c.coder = EntropyCoder(hd.coder);
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
  if (hd.m > d || c.k > d || hd.m > c.k) {
    throw data_error(name + ": header declares " + std::to_string(hd.m) + " coded of k = " + std::to_string(c.k) +
                     " components with d = " + std::to_string(d));
  }
}

// The body and the three parts' sizes against what m components and N·m
// coefficients can take, and against the file's length. Throws Error(data).
void check_part_sizes(const Header& hd, std::size_t file_size, const std::string& name) {
  const std::uint64_t d = hd.d(), m = hd.m, count = hd.count();
  const std::uint64_t side_part = m * 8 + (hd.has_mean() ? d * 2 : 0) + (hd.has_columns() ? m * 4 : 0);
  const std::uint64_t column_part = hd.has_columns() ? d * m * 2 : 0;
  if (hd.adaptive()) {
    if (hd.body_size != side_part) {
      throw data_error(name + ": header declares a body of " + std::to_string(hd.body_size) + " bytes, the side information of " +
                       std::to_string(m) + " components takes " + std::to_string(side_part));
    }
  } else {
    const bool varint = hd.c.coder == EntropyCoder::varint_zstd;
    const std::uint64_t packed_max = varint ? count * 5 : 1 + count * 4;
    const std::uint64_t packed_min = varint ? count : 1 + count;
    if (hd.body_size < side_part + column_part + packed_min || hd.body_size > side_part + column_part + packed_max) {
      throw data_error(name + ": header declares a body of " + std::to_string(hd.body_size) + " bytes, impossible for " +
                       std::to_string(count) + " coefficients");
    }
  }
  const std::uint64_t held = file_size - kCodedImageHeaderSize - 4;
  if (hd.frame_size > held || hd.columns_size > held || hd.coefficients_size > held ||
      hd.frame_size + hd.columns_size + hd.coefficients_size != held) {
    throw data_error(name + ": header declares parts of " + std::to_string(hd.frame_size) + " + " + std::to_string(hd.columns_size) +
                     " + " + std::to_string(hd.coefficients_size) + " bytes, the file holds " + std::to_string(held));
  }
  if (hd.adaptive()) {
    // A range-coded stream of R bytes holds at most ~5678·R decisions (adaptive_coder.hpp):
    // refuse counts it cannot hold before allocating for them.
    if (hd.coefficients_size < 5 || count > kMaxBinsPerByte * hd.coefficients_size) {
      throw data_error(name + ": range-coded coefficients of " + std::to_string(hd.coefficients_size) +
                       " bytes cannot hold " + std::to_string(count) + " values");
    }
    if (hd.has_columns() ? (hd.columns_size < 5 || d * m > kMaxBinsPerByte * hd.columns_size) : hd.columns_size != 0) {
      throw data_error(name + ": range-coded basis columns of " + std::to_string(hd.columns_size) +
                       " bytes do not fit " + std::to_string(hd.has_columns() ? d * m : 0) + " entries");
    }
  } else if (hd.columns_size != 0 || hd.coefficients_size != 0) {
    throw data_error(name + ": zstd-coded file declares range-coded parts");
  }
}

// Reads the side information (component list, steps, mean, column scales;
// zstd coders: the columns too) from the decompressed body into hd.c and
// checks it. Returns what follows it in the body (zstd coders: the packed
// coefficients).
std::string_view read_side_information(std::string_view body, Header& hd, const std::string& name) {
  CodedImage& c = hd.c;
  const std::uint64_t d = hd.d();
  Reader b(body, name, "body");
  b.get_array(c.component_index, hd.m);
  b.get_array(c.steps, hd.m);
  if (hd.has_mean()) b.get_array(c.mean_fixed, std::size_t(d));
  if (hd.has_columns()) b.get_array(c.column_scale, hd.m);
  if (hd.has_columns() && !hd.adaptive()) b.get_array(c.column_fixed, std::size_t(d * hd.m));
  std::vector<bool> seen(std::size_t(d), false);
  for (std::uint32_t i : c.component_index) {
    if (i >= d || seen[i]) throw data_error(name + ": component list is invalid (index " + std::to_string(i) + ")");
    seen[i] = true;
  }
  for (float s : c.steps)
    if (!(s > 0.0f) || !std::isfinite(s)) throw data_error(name + ": a quantiser step is not a positive number");
  for (float s : c.column_scale)
    if (!(s > 0.0f) || !std::isfinite(s)) throw data_error(name + ": a basis column scale is not a positive number");
  return b.rest();
}

// Decodes the basis columns (range coder) and, where the file's order does
// not allow reading band by band (zstd coders, version 2 channels colour),
// every coefficient at once; otherwise leaves the coefficient stream for the caller.
OpenedContainer decode_parts(std::string_view bytes, std::string_view packed, Header hd, const std::string& name) {
  CodedImage& c = hd.c;
  OpenedContainer opened;
  opened.version = hd.version;
  const std::string_view streams = bytes.substr(kCodedImageHeaderSize + hd.frame_size);
  if (hd.adaptive()) {
    if (hd.has_columns()) c.column_fixed = decode_columns(streams.substr(0, hd.columns_size), std::size_t(hd.d()), hd.m, name);
    opened.coefficient_stream = streams.substr(hd.columns_size, hd.coefficients_size);
  }
  const bool whole = !hd.adaptive() || (hd.version == 2 && c.patch.colour == ColourMode::channels);
  if (whole) {
    const std::uint64_t count = hd.count();
    if (count > kMaxDecodedValues) {
      throw data_error(name + ": decoding would hold " + std::to_string(count) + " coefficients at once, above the cap of " +
                       std::to_string(kMaxDecodedValues));
    }
    c.coefficients = hd.adaptive() ? decode_coefficients(opened.coefficient_stream, hd.m, coefficient_grid(c),
                                                         CodingOrder::patch_major, name)
                                   : unpack_integers(packed, std::size_t(count),
                                                     c.coder == EntropyCoder::varint_zstd ? Packing::varint : Packing::planes, name);
    opened.coefficients_decoded = true;
    opened.coefficient_stream = {};
  }
  opened.image = std::move(c);
  return opened;
}

}  // namespace

OpenedContainer open_container(std::string_view bytes, const std::string& name) {
  const std::uint16_t version = check_envelope(bytes, name);
  Header hd = read_header(bytes, version, name);
  check_geometry(hd, name);
  check_part_sizes(hd, bytes.size(), name);
  const std::string body = zstd_decompress(bytes.substr(kCodedImageHeaderSize, hd.frame_size), std::size_t(hd.body_size), name);
  const std::string_view packed = read_side_information(body, hd, name);
  return decode_parts(bytes, packed, std::move(hd), name);
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
