#include "codec/basis_file.hpp"

#include <cmath>
#include <cstring>

#include "core/error.hpp"

namespace pcasweep {

namespace {
template <typename T>
void put(std::string& out, T value) {
  char b[sizeof(T)];
  std::memcpy(b, &value, sizeof(T));
  out.append(b, sizeof(T));
}
template <typename T>
T get(std::string_view bytes, std::size_t& pos) {
  T v;
  std::memcpy(&v, bytes.data() + pos, sizeof(T));
  pos += sizeof(T);
  return v;
}
constexpr std::size_t kHeader = 40;
}  // namespace

Eigen::Index basis_dimension(const PatchOptions& patch, int channels) {
  return Eigen::Index(patch.patch_height) * patch.patch_width * (patch.colour == ColourMode::joint ? channels : 1);
}

std::string write_basis_file(const SavedBasis& s) {
  const Basis& b = s.basis;
  const Eigen::Index d = b.dimension(), r = b.rank();
  if (d != basis_dimension(s.patch, s.channels) || b.components.rows() != d || b.components.cols() != r) {
    throw usage_error("internal: basis shape disagrees with its patch geometry");
  }
  std::string out;
  out.append(kBasisFileMagic, 4);
  put<std::uint16_t>(out, kBasisFileVersion);
  put<std::uint8_t>(out, 1);  // layout: patches
  put<std::uint8_t>(out, s.patch.colour == ColourMode::joint ? 0 : 1);
  put<std::uint16_t>(out, std::uint16_t(s.patch.patch_height));
  put<std::uint16_t>(out, std::uint16_t(s.patch.patch_width));
  put<std::uint8_t>(out, std::uint8_t(s.channels));
  put<std::uint8_t>(out, std::uint8_t(s.bit_depth));
  put<std::uint8_t>(out, std::uint8_t(s.transform));
  put<std::uint8_t>(out, 0);
  put<std::uint32_t>(out, std::uint32_t(d));
  put<std::uint32_t>(out, std::uint32_t(r));
  put<std::uint64_t>(out, std::uint64_t(b.observation_count));
  put<double>(out, b.total_variance);
  for (Eigen::Index i = 0; i < d; ++i) put<double>(out, b.mean(i));
  for (Eigen::Index j = 0; j < r; ++j)
    for (Eigen::Index i = 0; i < d; ++i) put<double>(out, b.components(i, j));
  for (Eigen::Index j = 0; j < r; ++j) put<double>(out, b.eigenvalues(j));
  put<std::uint32_t>(out, crc32_of(out));
  return out;
}

SavedBasis read_basis_file(std::string_view bytes, const std::string& name) {
  if (bytes.size() < 4 || std::memcmp(bytes.data(), kBasisFileMagic, 4) != 0) {
    throw data_error(name + ": not a pcasweep basis file (magic is not \"PSBF\")");
  }
  if (bytes.size() < kHeader + 4) throw data_error(name + ": basis file is truncated");
  std::size_t pos = 4;
  const auto version = get<std::uint16_t>(bytes, pos);
  if (version != kBasisFileVersion) {
    throw data_error(name + ": basis file version " + std::to_string(version) + " is not supported (this build reads " +
                     std::to_string(kBasisFileVersion) + ")");
  }
  std::uint32_t stored_crc;
  std::memcpy(&stored_crc, bytes.data() + bytes.size() - 4, 4);
  if (crc32_of(bytes.substr(0, bytes.size() - 4)) != stored_crc) {
    throw data_error(name + ": checksum mismatch: the basis file is truncated or corrupt");
  }
  SavedBasis s;
  const auto layout = get<std::uint8_t>(bytes, pos);
  const auto colour = get<std::uint8_t>(bytes, pos);
  if (layout != 1 || colour > 1) throw data_error(name + ": unknown layout or colour mode in basis file");
  s.patch.colour = colour == 0 ? ColourMode::joint : ColourMode::channels;
  s.patch.patch_height = get<std::uint16_t>(bytes, pos);
  s.patch.patch_width = get<std::uint16_t>(bytes, pos);
  s.channels = get<std::uint8_t>(bytes, pos);
  s.bit_depth = get<std::uint8_t>(bytes, pos);
  const auto transform = get<std::uint8_t>(bytes, pos);
  get<std::uint8_t>(bytes, pos);
  const std::uint64_t d = get<std::uint32_t>(bytes, pos), r = get<std::uint32_t>(bytes, pos);
  const std::uint64_t n = get<std::uint64_t>(bytes, pos);
  const double total = get<double>(bytes, pos);
  if (s.patch.patch_height < 1 || s.patch.patch_width < 1 || std::uint32_t(s.patch.patch_height) > kMaxPatchSide ||
      std::uint32_t(s.patch.patch_width) > kMaxPatchSide || s.channels < 1 || s.channels > 4 ||
      (s.bit_depth != 8 && s.bit_depth != 16) || transform > 1) {
    throw data_error(name + ": basis file declares an impossible geometry");
  }
  s.transform = BasisTransform(transform);
  if (d != std::uint64_t(basis_dimension(s.patch, s.channels)) || d > kMaxDimension || r < 1 || r > d) {
    throw data_error(name + ": basis file declares d = " + std::to_string(d) + ", r = " + std::to_string(r) +
                     ", impossible for its patch geometry");
  }
  const std::uint64_t expected = kHeader + 8 * (d + d * r + r) + 4;
  if (bytes.size() != expected) {
    throw data_error(name + ": basis file is " + std::to_string(bytes.size()) + " bytes, its header implies " +
                     std::to_string(expected) + " (truncated or corrupt)");
  }
  Basis& b = s.basis;
  b.mean.resize(Eigen::Index(d));
  b.components.resize(Eigen::Index(d), Eigen::Index(r));
  b.eigenvalues.resize(Eigen::Index(r));
  for (std::uint64_t i = 0; i < d; ++i) b.mean(Eigen::Index(i)) = get<double>(bytes, pos);
  for (std::uint64_t j = 0; j < r; ++j)
    for (std::uint64_t i = 0; i < d; ++i) b.components(Eigen::Index(i), Eigen::Index(j)) = get<double>(bytes, pos);
  for (std::uint64_t j = 0; j < r; ++j) b.eigenvalues(Eigen::Index(j)) = get<double>(bytes, pos);
  if (!b.mean.allFinite() || !b.components.allFinite() || !b.eigenvalues.allFinite() || !std::isfinite(total)) {
    throw data_error(name + ": basis file holds non-finite numbers");
  }
  b.total_variance = total;
  b.observation_count = Eigen::Index(n);
  s.report.solver = transform == 0 ? "loaded" : "dct";
  s.report.reason = "read from " + name;
  return s;
}

}  // namespace pcasweep
