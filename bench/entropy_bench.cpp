// pcasweep-bench entropy IMAGE... [--qualities 40,60,75,90] [--methods pca,dct]
//
// Whole-file sizes of a coded image with the shipped entropy stage (zstd over
// the body, src/codec/entropy.*) against the context-adaptive range coder of
// bench/adaptive_coder.* (docs/codec.md, "A dedicated adaptive coder").
// One JSON object per image, method and quality on stdout:
//   zstd_file      the file `pcasweep encode` writes (k = rank of the own basis, or d for DCT)
//   adaptive_file  header 100 + CRC 4 + two u64 stream lengths 16 + zstd(side information)
//                  + range-coded coefficients (component-major)
//   adaptive_all   the same, with the 12-bit basis columns range-coded too (embedded basis)
//   coef_zstd      zstd alone on the packed coefficients (smaller packing), for the part comparison
//   coef_rc, coef_rc_patch_major   range-coded coefficients, component- and patch-major order
//   coef_order0    order-0 entropy bound per component stream, bytes
// Every range-coded stream is decoded again and compared with the input; a
// mismatch aborts the run.
#include <chrono>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "adaptive_coder.hpp"
#include "codec/container.hpp"
#include "codec/entropy.hpp"
#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep::bench {

namespace {

std::string raw_bytes(const void* p, std::size_t n) { return std::string(static_cast<const char*>(p), n); }

template <typename T>
std::string raw(const std::vector<T>& v) {
  return v.empty() ? std::string() : raw_bytes(v.data(), v.size() * sizeof(T));
}

std::vector<std::string> split(const std::string& s) {
  std::vector<std::string> out;
  std::stringstream in(s);
  std::string item;
  while (std::getline(in, item, ','))
    if (!item.empty()) out.push_back(item);
  return out;
}

}  // namespace

int mode_entropy(const std::vector<std::string>& images, const std::string& qualities_text,
                 const std::string& methods_text) {
  std::vector<int> qualities;
  for (const auto& q : split(qualities_text)) qualities.push_back(std::stoi(q));
  const std::vector<std::string> methods = split(methods_text);
  for (const std::string& path : images) {
    const ImageStudySettings settings;
    const ImageAnalysis a = analyze_image(path, settings);
    const auto* layout = dynamic_cast<const PatchLayout*>(a.layout.get());
    if (!layout) throw usage_error(path + ": needs the patch layout");
    CoefficientGrid grid;
    grid.patches_across = std::size_t(layout->patches_across());
    grid.patches_down = std::size_t(layout->patches_down());
    grid.planes = layout->options().colour == ColourMode::joint ? 1 : std::size_t(a.image().channels);
    for (const std::string& method : methods) {
      BasisChoice choice;
      choice.kind = method == "dct" ? BasisKind::dct : BasisKind::embedded;
      choice.basis = &a.basis;
      for (int quality : qualities) {
        CodecSettings codec;
        codec.k = int(method == "dct" ? a.basis.dimension() : a.basis.rank());
        codec.quality = quality;
        const EncodeResult r = encode_image(a.image(), layout->options(), choice, codec, path);
        const CodedImage c = read_container(r.bytes, path);
        const std::size_t m = c.coded();
        if (grid.observations() != c.observations) throw usage_error(path + ": grid and container disagree");

        std::string side_without_columns = raw(c.component_index) + raw(c.steps) + raw(c.mean_fixed) + raw(c.column_scale);
        const std::string columns = raw(c.column_fixed);
        const std::size_t side_z = zstd_compress(side_without_columns + columns, 19).size();
        const std::size_t side_nocol_z = zstd_compress(side_without_columns, 19).size();
        const std::size_t coef_zstd = std::min(zstd_compress(pack_integers(c.coefficients, Packing::varint), 19).size(),
                                               zstd_compress(pack_integers(c.coefficients, Packing::planes), 19).size());

        const auto t0 = std::chrono::steady_clock::now();
        const std::string rc = code_coefficients(c.coefficients, m, grid, CodingOrder::component_major);
        const auto t1 = std::chrono::steady_clock::now();
        if (decode_coefficients(rc, m, grid, CodingOrder::component_major, path) != c.coefficients)
          throw data_error(path + ": range coder round trip failed (component-major)");
        const auto t2 = std::chrono::steady_clock::now();
        const std::string rc_pm = code_coefficients(c.coefficients, m, grid, CodingOrder::patch_major);
        if (decode_coefficients(rc_pm, m, grid, CodingOrder::patch_major, path) != c.coefficients)
          throw data_error(path + ": range coder round trip failed (patch-major)");
        std::size_t col_rc = 0;
        if (!c.column_fixed.empty()) {
          const std::string cc = code_columns(c.column_fixed, c.dimension);
          if (decode_columns(cc, c.dimension, m, path) != c.column_fixed)
            throw data_error(path + ": range coder round trip failed (columns)");
          col_rc = cc.size();
        }
        const std::size_t fixed = kCodedImageHeaderSize + 4 + 16;
        const std::size_t adaptive = fixed + side_z + std::min(rc.size(), rc_pm.size());
        const std::size_t adaptive_all =
            c.column_fixed.empty() ? adaptive : fixed + side_nocol_z + col_rc + std::min(rc.size(), rc_pm.size());
        nlohmann::json j;
        j["image"] = path;
        j["method"] = method;
        j["quality"] = quality;
        j["N"] = c.observations;
        j["d"] = c.dimension;
        j["m"] = m;
        j["zstd_file"] = r.bytes.size();
        j["adaptive_file"] = adaptive;
        j["adaptive_all"] = adaptive_all;
        j["side_raw"] = side_without_columns.size() + columns.size();
        j["side_zstd"] = side_z;
        j["columns_zstd_alone"] = columns.empty() ? 0 : zstd_compress(columns, 19).size();
        j["columns_rc"] = col_rc;
        j["coef_zstd"] = coef_zstd;
        j["coef_rc"] = rc.size();
        j["coef_rc_patch_major"] = rc_pm.size();
        j["coef_order0"] = r.coefficient_entropy_bits / 8.0;
        j["rc_encode_s"] = std::chrono::duration<double>(t1 - t0).count();
        j["rc_decode_s"] = std::chrono::duration<double>(t2 - t1).count();
        std::cout << j.dump() << std::endl;
      }
    }
  }
  return 0;
}

}  // namespace pcasweep::bench
