// Checks the committed Tern Point samples (samples/, made by tools/make_samples with seed 20261202):
// they exist, decode through our reader, and keep the properties that issue 2 ("Demo") and
// samples/README.md promise: at least one 16-bit file that really uses 16-bit precision, at least
// one grayscale file, sides that are not multiples of 8, a meaningful alpha in the RGBA frame, and
// images small enough to ship (under ~2 MB together). The files are read as committed, never regenerated.
//
// Source of the expected facts: the project's own promise (issue 2 and samples/README.md); the PNG
// header fields (bit depth, colour type) follow the PNG specification (ISO/IEC 15948), checked here
// independently of stb by reading the IHDR chunk bytes.
#include <doctest/doctest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <string>
#include <vector>

#include "io/image.hpp"

namespace {

namespace fs = std::filesystem;

const fs::path kSamples = fs::path(PCASWEEP_SOURCE_DIR) / "samples";

struct Promise {
  const char* name;
  int width, height, channels, bit_depth;
};

// What samples/README.md lists.
const Promise kPromised[] = {
    {"ternpoint_dawn_rgb.png", 637, 411, 3, 8},    {"ternpoint_mast_nir_gray.png", 431, 323, 1, 8},
    {"ternpoint_dusk16.png", 401, 267, 3, 16},     {"ternpoint_harbour_rgb.png", 500, 333, 3, 8},
    {"ternpoint_allsky_rgba.png", 263, 247, 4, 8},
};

// IHDR of a PNG file: width, height (big-endian at bytes 16 and 20), bit depth (24), colour type (25).
struct Ihdr {
  unsigned width = 0, height = 0, bit_depth = 0, colour_type = 0;
};
Ihdr read_ihdr(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::vector<unsigned char> b(26);
  in.read(reinterpret_cast<char*>(b.data()), 26);
  REQUIRE(in.gcount() == 26);
  const unsigned char signature[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
  REQUIRE(std::equal(signature, signature + 8, b.begin()));
  REQUIRE(std::string(b.begin() + 12, b.begin() + 16) == "IHDR");
  auto be32 = [&](int at) {
    return (unsigned(b[at]) << 24) | (unsigned(b[at + 1]) << 16) | (unsigned(b[at + 2]) << 8) | b[at + 3];
  };
  return {be32(16), be32(20), b[24], b[25]};
}

}  // namespace

TEST_CASE("samples: every promised Tern Point frame exists, decodes, and has its promised shape") {
  for (const auto& p : kPromised) {
    CAPTURE(p.name);
    const fs::path path = kSamples / p.name;
    REQUIRE(fs::is_regular_file(path));
    const pcasweep::Image img = pcasweep::read_image(path.string());
    CHECK(img.width == p.width);
    CHECK(img.height == p.height);
    CHECK(img.channels == p.channels);
    CHECK(img.bit_depth == p.bit_depth);
    CHECK(img.samples.size() == std::size_t(p.width) * p.height * p.channels);
    // The file header says the same as the decoder (PNG colour types: 0 gray, 2 RGB, 6 RGBA).
    const Ihdr h = read_ihdr(path);
    CHECK(h.width == unsigned(p.width));
    CHECK(h.height == unsigned(p.height));
    CHECK(h.bit_depth == unsigned(p.bit_depth));
    const unsigned colour_type = p.channels == 1 ? 0 : p.channels == 3 ? 2 : 6;
    CHECK(h.colour_type == colour_type);
    // Not blank: a frame with texture has many distinct sample values.
    const std::set<std::uint16_t> distinct(img.samples.begin(), img.samples.end());
    CHECK(distinct.size() > 100);
  }
}

TEST_CASE("samples: the folder holds the promised kinds (16-bit, gray, odd sizes) and no stray images") {
  int sixteen = 0, gray = 0, odd_size = 0, images = 0;
  std::uintmax_t bytes = 0;
  for (const auto& entry : fs::directory_iterator(kSamples)) {
    // Only images: other stages keep their own samples (signals) in this folder too.
    if (!entry.is_regular_file() || !pcasweep::has_image_extension(entry.path().string())) continue;
    bytes += entry.file_size();
    ++images;
    const auto name = entry.path().filename().string();
    CAPTURE(name);
    CHECK(std::any_of(std::begin(kPromised), std::end(kPromised), [&](const Promise& p) { return name == p.name; }));
    const pcasweep::Image img = pcasweep::read_image(entry.path().string());
    sixteen += img.bit_depth == 16;
    gray += img.channels == 1;
    odd_size += img.width % 8 != 0 || img.height % 8 != 0;
  }
  CHECK(images == int(std::size(kPromised)));
  CHECK(sixteen >= 1);
  CHECK(gray >= 1);
  CHECK(odd_size >= 1);
  CHECK(bytes < 2u * 1024u * 1024u);  // the "under ~2 MB" budget for the sample images
}

TEST_CASE("samples: the 16-bit dusk frame uses 16-bit precision, not 8-bit values widened") {
  // An 8-bit image widened to 16 bits has every sample a multiple of 257 (v * 65535 / 255).
  const pcasweep::Image img = pcasweep::read_image((kSamples / "ternpoint_dusk16.png").string());
  REQUIRE(img.bit_depth == 16);
  const auto widened =
      std::count_if(img.samples.begin(), img.samples.end(), [](std::uint16_t v) { return v % 257 == 0; });
  CHECK(double(widened) / img.samples.size() < 0.05);
  // One channel alone takes far more than the 256 levels that 8 bits can hold.
  std::set<std::uint16_t> red;
  for (std::size_t i = 0; i < img.samples.size(); i += 3) red.insert(img.samples[i]);
  CHECK(red.size() > 4 * 256);
}

TEST_CASE("samples: the all-sky frame's alpha marks the lens circle") {
  const pcasweep::Image img = pcasweep::read_image((kSamples / "ternpoint_allsky_rgba.png").string());
  REQUIRE(img.channels == 4);
  // Centre inside the circle: opaque. Corners outside: transparent and black.
  CHECK(img.at(img.width / 2, img.height / 2, 3) == 255);
  for (auto [x, y] : {std::pair{0, 0}, {img.width - 1, 0}, {0, img.height - 1}, {img.width - 1, img.height - 1}}) {
    CHECK(img.at(x, y, 3) == 0);
    CHECK(img.at(x, y, 0) + img.at(x, y, 1) + img.at(x, y, 2) == 0);
  }
  // Both regions are substantial and the rim is antialiased (some partial alpha values).
  std::size_t opaque = 0, clear = 0, partial = 0;
  for (int y = 0; y < img.height; ++y)
    for (int x = 0; x < img.width; ++x) {
      const auto a = img.at(x, y, 3);
      (a == 255 ? opaque : a == 0 ? clear : partial)++;
    }
  const double total = double(img.width) * img.height;
  CHECK(opaque / total > 0.6);
  CHECK(clear / total > 0.1);
  CHECK(partial > 100);
}
