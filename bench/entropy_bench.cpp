// pcasweep-bench entropy IMAGE... [--qualities 40,60,75,90] [--methods pca,dct]
//
// Whole-file sizes of a coded image with each entropy coder of the container
// (docs/format.md byte 27): the context-adaptive range coder the encoder writes
// (src/codec/adaptive_coder.*) and the zstd stage it replaced (src/codec/entropy.*).
// One JSON object per image, method and quality on stdout (k = rank of the own
// basis, or d for DCT; default image options, as `pcasweep encode` and sweep):
//   adaptive_file   the file `pcasweep encode` writes (coder 3)
//   zstd_file       the smaller of the two zstd files (coders 1 and 2, `--entropy zstd`)
// and the parts, each coded alone:
//   coef_zstd       zstd 19 on the packed coefficients (smaller packing)
//   coef_rc, coef_rc_component_major   range-coded coefficients, patch-major (the
//                   format's order) and component-major
//   coef_order0     order-0 entropy of each component's stream, summed, bytes
//   columns_zstd, columns_rc   the 12-bit basis columns, zstd 19 alone / range-coded
// Every range-coded stream is decoded again and compared with the input, and the
// written file is decoded back to the same integers; a mismatch aborts the run.
#include <chrono>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "codec/adaptive_coder.hpp"
#include "codec/container.hpp"
#include "codec/entropy.hpp"
#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep::bench {

namespace {

template <typename T>
std::string raw(const std::vector<T>& v) {
  return v.empty() ? std::string() : std::string(reinterpret_cast<const char*>(v.data()), v.size() * sizeof(T));
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
    const PatchLayout* layout = a.patches();
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
        codec.compare_entropy = true;
        const EncodeResult r = encode_image(a.image(), layout->options(), choice, codec, path);
        const CodedImage c = read_container(r.bytes, path);
        const std::size_t m = c.coded();
        if (grid.observations() != c.observations) throw usage_error(path + ": grid and container disagree");
        const std::size_t zstd_file = std::min(r.varint_file_bytes, r.planes_file_bytes);
        const std::size_t coef_zstd = std::min(zstd_compress(pack_integers(c.coefficients, Packing::varint), 19).size(),
                                               zstd_compress(pack_integers(c.coefficients, Packing::planes), 19).size());
        const auto t0 = std::chrono::steady_clock::now();
        const std::string rc = code_coefficients(c.coefficients, m, grid, CodingOrder::patch_major);
        const auto t1 = std::chrono::steady_clock::now();
        if (decode_coefficients(rc, m, grid, CodingOrder::patch_major, path) != c.coefficients)
          throw data_error(path + ": range coder round trip failed (patch-major)");
        const auto t2 = std::chrono::steady_clock::now();
        const std::string rc_cm = code_coefficients(c.coefficients, m, grid, CodingOrder::component_major);
        if (decode_coefficients(rc_cm, m, grid, CodingOrder::component_major, path) != c.coefficients)
          throw data_error(path + ": range coder round trip failed (component-major)");
        std::size_t col_rc = 0, col_z = 0;
        if (!c.column_fixed.empty()) {
          const std::string cc = code_columns(c.column_fixed, c.dimension);
          if (decode_columns(cc, c.dimension, m, path) != c.column_fixed)
            throw data_error(path + ": range coder round trip failed (columns)");
          col_rc = cc.size();
          col_z = zstd_compress(raw(c.column_fixed), 19).size();
        }
        nlohmann::json j;
        j["image"] = path;
        j["method"] = method;
        j["quality"] = quality;
        j["N"] = c.observations;
        j["d"] = c.dimension;
        j["m"] = m;
        j["adaptive_file"] = r.bytes.size();
        j["zstd_file"] = zstd_file;
        j["change_percent"] = 100.0 * (double(r.bytes.size()) / double(zstd_file) - 1.0);
        j["coef_zstd"] = coef_zstd;
        j["coef_rc"] = rc.size();
        j["coef_rc_component_major"] = rc_cm.size();
        j["coef_order0"] = r.coefficient_entropy_bits / 8.0;
        j["columns_zstd"] = col_z;
        j["columns_rc"] = col_rc;
        j["rc_encode_s"] = std::chrono::duration<double>(t1 - t0).count();
        j["rc_decode_s"] = std::chrono::duration<double>(t2 - t1).count();
        std::cout << j.dump() << std::endl;
      }
    }
  }
  return 0;
}

}  // namespace pcasweep::bench
