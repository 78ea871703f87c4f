// Tests for the band-by-band codec: the patch-row coefficient coder, container
// version 3, and the streaming encoder/decoder. References: the whole-array
// coder (code_coefficients / decode_coefficients, whose own checks are in
// adaptive_coder_test.cpp), the container's documented header layout
// (docs/format.md), and the in-memory observation matrix.
#include <doctest/doctest.h>

#include <cstring>

#include "../support/synthetic.hpp"
#include "codec/adaptive_coder.hpp"
#include "codec/container.hpp"
#include "core/error.hpp"
#include "codec/image_codec.hpp"
#include "observe/patches.hpp"
#include "pipeline/image_study.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;
using pcasweep::testing::SplitMix64;

namespace {

std::vector<std::int32_t> laplacian_like(std::size_t count, std::uint64_t seed) {
  SplitMix64 rng(seed);
  std::vector<std::int32_t> q(count);
  for (auto& v : q) {
    const double u = rng.uniform();
    const double mag = -std::log(1.0 - rng.uniform()) * 3.0;
    v = std::int32_t(std::lround(u < 0.5 ? -mag : mag));
  }
  return q;
}

// Component-major N·m → the row encoder's patch-row order, fed row by row.
std::string code_rows(const std::vector<std::int32_t>& q, std::size_t m, const CoefficientGrid& g) {
  const std::size_t n = g.observations(), nx = g.patches_across, per_plane = nx * g.patches_down;
  CoefficientRowEncoder enc(m, g);
  std::vector<std::int32_t> row(g.planes * nx * m);
  for (std::size_t py = 0; py < g.patches_down; ++py) {
    for (std::size_t p = 0; p < g.planes; ++p)
      for (std::size_t px = 0; px < nx; ++px)
        for (std::size_t j = 0; j < m; ++j) row[(p * nx + px) * m + j] = q[j * n + p * per_plane + py * nx + px];
    enc.add_row(row.data());
  }
  return enc.finish();
}

}  // namespace

TEST_CASE("row coder: one plane is the whole-array patch-major coder byte for byte") {
  const CoefficientGrid g{13, 7, 1};
  for (std::size_t m : {1u, 3u, 10u}) {
    const auto q = laplacian_like(g.observations() * m, 100 + m);
    CHECK(code_rows(q, m, g) == code_coefficients(q, m, g, CodingOrder::patch_major));
  }
}

TEST_CASE("row coder: the decoder inverts the encoder, and refuses damage") {
  for (const CoefficientGrid& g : {CoefficientGrid{9, 5, 1}, CoefficientGrid{9, 5, 3}, CoefficientGrid{1, 1, 4}}) {
    const std::size_t m = 6, nx = g.patches_across;
    const auto q = laplacian_like(g.observations() * m, 7);
    const std::string bytes = code_rows(q, m, g);
    CoefficientRowDecoder dec(bytes, m, g, "t.pcsc");
    const std::size_t n = g.observations(), per_plane = nx * g.patches_down;
    std::vector<std::int32_t> row(g.planes * nx * m);
    std::size_t differing = 0;
    for (std::size_t py = 0; py < g.patches_down; ++py) {
      dec.next_row(row.data());
      for (std::size_t p = 0; p < g.planes; ++p)
        for (std::size_t px = 0; px < nx; ++px)
          for (std::size_t j = 0; j < m; ++j)
            differing += row[(p * nx + px) * m + j] != q[j * n + p * per_plane + py * nx + px];
    }
    CHECK(differing == 0);
    CHECK_NOTHROW(dec.finish());
    // A stream cut short is refused (at a row or at finish), never read past its end silently.
    const std::string cut = bytes.substr(0, bytes.size() / 2);
    CHECK_THROWS_AS(
        [&] {
          CoefficientRowDecoder d(cut, m, g, "cut.pcsc");
          for (std::size_t py = 0; py < g.patches_down; ++py) d.next_row(row.data());
          d.finish();
        }(),
        Error);
  }
}

TEST_CASE("streaming encode/decode: the file decodes to what the encoder reconstructed") {
  for (ColourMode colour : {ColourMode::joint, ColourMode::channels}) {
    const Image image = scene_image(53, 45, 3, 8, 13);
    PatchOptions patch{8, 8, 0, 0, colour};
    auto layout = std::make_unique<PatchLayout>(image, patch, "t.png");
    const ImageAnalysis a = analyze_sources({"t.png"}, {image}, std::move(layout), SolverSettings{});
    SweepCoding coding;
    coding.enabled = true;
    coding.quality = 60;
    std::vector<Image> measured;
    std::vector<std::string> files;
    coding.on_coded = [&](int, const std::string& bytes) { files.push_back(bytes); };
    const std::vector<int> ks = {2, 9, int(a.basis.rank())};
    const auto rows = sweep_ks(a, ks, [&](int, std::size_t, const Image& im) { measured.push_back(im); }, coding);
    REQUIRE(files.size() == ks.size());
    REQUIRE(measured.size() == ks.size());
    for (std::size_t i = 0; i < ks.size(); ++i) {
      const Image decoded = decode_coded_image(files[i], "t.pcsc");
      CHECK(decoded.samples == measured[i].samples);
      CHECK(rows[i].bytes == std::int64_t(files[i].size()));
      const CodedImage c = read_container(files[i], "t.pcsc");
      CHECK(c.k == std::uint32_t(ks[i]));
      CHECK(int(c.coded()) == rows[i].coded_components);
    }
  }
}

TEST_CASE("with_components_asked changes only the recorded k") {
  const Image image = scene_image(40, 32, 1, 8, 2);
  auto layout = std::make_unique<PatchLayout>(image, PatchOptions{}, "t.png");
  const ImageAnalysis a = analyze_sources({"t.png"}, {image}, std::move(layout), SolverSettings{});
  BasisChoice own;
  own.basis = &a.basis;
  CodecSettings s;
  s.k = 20;
  s.quality = 30;
  const EncodeResult r = encode_image(image, PatchOptions{}, own, s, "t.png");
  const std::string relabelled = with_components_asked(r.bytes, 64);
  CHECK(relabelled.size() == r.bytes.size());
  CHECK(read_container(relabelled, "x").k == 64);
  CHECK(decode_coded_image(relabelled, "x").samples == decode_coded_image(r.bytes, "y").samples);
  CHECK_THROWS(with_components_asked(r.bytes, std::uint32_t(r.coded) - 1));
  // A joint-colour file of version 2 is the same bytes but for the version field: it still reads.
  std::string v2 = r.bytes;
  const std::uint16_t two = 2;
  std::memcpy(v2.data() + 4, &two, 2);
  const std::uint32_t crc = crc32_of(std::string_view(v2).substr(0, v2.size() - 4));
  std::memcpy(v2.data() + v2.size() - 4, &crc, 4);
  CHECK(decode_coded_image(v2, "v2").samples == decode_coded_image(r.bytes, "v3").samples);
}
