// Every prefix of a valid image, coded image or basis file is refused with one line naming the
// file (a cut at every byte offset), and headers that declare more than the file can hold are
// refused before anything is allocated.
// Sources: the files are made by independent encoders where the project has one (libjpeg-turbo
// for JPEG, our PNG encoder read back by libpng) and laid out by hand after the formats'
// documents otherwise: Microsoft BITMAPFILEHEADER/BITMAPINFOHEADER (BMP), Truevision TGA 2.0
// (18-byte header, 26-byte footer ending "TRUEVISION-XFILE.\0"), Netpbm ppm(5)/pgm(5).
#include <doctest/doctest.h>

#include <algorithm>
#include <cstring>
#include <string>

#include "codec/basis_file.hpp"
#include "codec/container.hpp"
#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "io/image.hpp"
#include "io/jpeg.hpp"
#include "pipeline/image_study.hpp"
#include "../support/errors.hpp"
#include "../support/synthetic.hpp"

using namespace pcasweep;
using pcasweep::testing::scene_image;

namespace {

void put_le(std::string& s, std::uint64_t v, int bytes) {
  for (int i = 0; i < bytes; ++i) s.push_back(char((v >> (8 * i)) & 0xFF));
}

// 24-bit BI_RGB BMP, bottom-up rows padded to 4 bytes.
std::string bmp_of(const Image& im) {
  const std::uint32_t row = (im.width * 3 + 3) / 4 * 4, raster = row * im.height;
  std::string s = "BM";
  put_le(s, 54 + raster, 4);
  put_le(s, 0, 4);
  put_le(s, 54, 4);
  for (std::uint64_t v : {std::uint64_t(40), std::uint64_t(im.width), std::uint64_t(im.height)}) put_le(s, v, 4);
  put_le(s, 1, 2);
  put_le(s, 24, 2);
  for (int i = 0; i < 6; ++i) put_le(s, i == 2 || i == 3 ? 2835 : 0, 4);
  for (int y = im.height - 1; y >= 0; --y) {
    for (int x = 0; x < im.width; ++x)
      for (int c = 2; c >= 0; --c) s.push_back(char(im.at(x, y, c)));
    s.append(row - im.width * 3, '\0');
  }
  return s;
}

// Uncompressed true-colour TGA (type 2, 24 bits, top-left origin) with the TGA 2.0 footer.
// `pixel_end` receives where the pixel data end.
std::string tga_of(const Image& im, std::size_t& pixel_end) {
  std::string s;
  put_le(s, 0, 2);
  put_le(s, 2, 1);
  put_le(s, 0, 5);
  put_le(s, 0, 4);
  put_le(s, im.width, 2);
  put_le(s, im.height, 2);
  put_le(s, 24, 1);
  put_le(s, 0x20, 1);
  for (int y = 0; y < im.height; ++y)
    for (int x = 0; x < im.width; ++x)
      for (int c = 2; c >= 0; --c) s.push_back(char(im.at(x, y, c)));
  pixel_end = s.size();
  put_le(s, 0, 8);
  s.append("TRUEVISION-XFILE.", 17);
  s.push_back('\0');
  return s;
}

std::string ppm_of(const Image& im) {
  std::string s = "P6\n" + std::to_string(im.width) + " " + std::to_string(im.height) + "\n255\n";
  for (auto v : im.samples) s.push_back(char(v));
  return s;
}

// Asserts that decode_image refuses every prefix of `file` (except the lengths in `complete`)
// with one line starting with the name; returns how many prefixes were tried.
std::size_t check_every_cut(const std::string& file, const std::string& name,
                            std::initializer_list<std::size_t> complete = {}) {
  std::size_t tried = 0;
  for (std::size_t at = 0; at < file.size(); ++at) {
    if (std::find(complete.begin(), complete.end(), at) != complete.end()) continue;
    ++tried;
    try {
      decode_image(file.substr(0, at), name);
      FAIL_CHECK(name << " cut to " << at << " of " << file.size() << " bytes was accepted");
    } catch (const Error& e) {
      const std::string what = e.what();
      if (what.rfind(name + ": ", 0) != 0 || what.find('\n') != std::string::npos)
        FAIL_CHECK(name << " cut to " << at << ": message is not one line naming the file: " << what);
    }
  }
  return tried;
}

}  // namespace

TEST_CASE("damaged images: every cut of every image format is refused with one line") {
  const Image rgb = scene_image(19, 13, 3, 8, 11);
  SUBCASE("PNG (libpng: chunk CRCs, zlib stream end, IEND)") {
    const std::string png = encode_png(rgb);
    REQUIRE(decode_image(png, "a.png").samples == rgb.samples);
    CHECK(check_every_cut(png, "a.png") == png.size());
  }
  SUBCASE("JPEG baseline and 4:4:4 (libjpeg-turbo, premature end is an error)") {
    for (bool sub : {true, false}) {
      JpegOptions options;
      options.chroma_420 = sub;
      const std::string jpg = encode_jpeg(rgb, options);
      REQUIRE(decode_image(jpg, "a.jpg").width == rgb.width);
      CHECK(check_every_cut(jpg, "a.jpg") == jpg.size());
    }
  }
  SUBCASE("BMP (raster size from the header)") {
    const std::string bmp = bmp_of(rgb);
    REQUIRE(decode_image(bmp, "a.bmp").samples == rgb.samples);
    CHECK(check_every_cut(bmp, "a.bmp") == bmp.size());
  }
  SUBCASE("TGA (pixel data, then the TGA 2.0 footer)") {
    std::size_t pixel_end = 0;
    const std::string tga = tga_of(rgb, pixel_end);
    REQUIRE(decode_image(tga, "a.tga").samples == rgb.samples);
    // Cut exactly where the pixel data end, the file is a whole TGA 1.0 image (no footer).
    REQUIRE(decode_image(tga.substr(0, pixel_end), "a.tga").samples == rgb.samples);
    CHECK(check_every_cut(tga, "a.tga", {pixel_end}) == tga.size() - 1);
  }
  SUBCASE("binary PPM (raster size from the header)") {
    const std::string ppm = ppm_of(rgb);
    REQUIRE(decode_image(ppm, "a.ppm").samples == rgb.samples);
    CHECK(check_every_cut(ppm, "a.ppm") == ppm.size());
  }
}

// stb_image 2.27 takes 0xFF fill bytes before SOI for a JPEG and then reads past its Huffman
// arrays on a hostile DHT segment (fuzz/image_fuzz.cpp found it; the bytes below are the shape of
// that input). Such a file must reach libjpeg-turbo, which refuses it: a JPEG starts FF D8
// (ITU-T T.81 B.1.1.3; libjpeg's "Not a JPEG file").
TEST_CASE("damaged images: fill bytes before a JPEG's SOI are refused by libjpeg, never read by stb_image") {
  const std::string jpg = encode_jpeg(scene_image(19, 13, 3, 8, 11), JpegOptions{});
  for (std::size_t fill : {1u, 2u, 27u}) {
    const std::string padded = std::string(fill, '\xFF') + jpg;
    const std::string message = testing::error_message_of([&] { decode_image(padded, "fill.jpg"); });
    CAPTURE(fill);
    CHECK(message.find("fill.jpg") == 0);
    CHECK(message.find("JPEG") != std::string::npos);
    CHECK(message.find('\n') == std::string::npos);
  }
}

TEST_CASE("damaged images: a PNG with a bad ancillary CRC or a bad Adler-32 is refused") {
  // ISO/IEC 15948: every chunk ends with the CRC-32 of its type and data; the zlib stream
  // (RFC 1950) ends with the Adler-32 of the filtered rows.
  const Image rgb = scene_image(9, 7, 3, 8, 5);
  const std::string png = encode_png(rgb);
  const std::size_t idat = png.find("IDAT");
  REQUIRE(idat != std::string::npos);
  std::uint32_t length = 0;
  for (int i = 0; i < 4; ++i) length = (length << 8) | static_cast<unsigned char>(png[idat - 4 + i]);
  std::string adler = png;
  adler[idat + 4 + length - 1] ^= 0x01;  // last byte of the zlib data: the Adler-32
  // Re-seal the chunk's CRC so that only the Adler-32 is wrong.
  const std::uint32_t crc = crc32_of(std::string_view(adler).substr(idat, 4 + length));
  for (int i = 0; i < 4; ++i) adler[idat + 4 + length + i] = char((crc >> (24 - 8 * i)) & 0xFF);
  CHECK(decode_image(png, "a.png").samples == rgb.samples);
  CHECK_THROWS_AS(decode_image(adler, "a.png"), Error);
  // A tEXt chunk after IHDR whose CRC is wrong.
  std::string text = png;
  const std::string body("Comment\0hello", 13);
  std::string chunk;
  for (int i = 3; i >= 0; --i) chunk.push_back(char((body.size() >> (8 * i)) & 0xFF));
  chunk += "tEXt" + body + std::string(4, '\x55');
  text.insert(8 + 25, chunk);
  CHECK_THROWS_AS(decode_image(text, "a.png"), Error);
}

TEST_CASE("damaged coded images and basis files: every cut is refused") {
  const Image image = scene_image(24, 16, 3, 8, 3);
  const PatchOptions patch{8, 8, 0, 0, ColourMode::joint};
  auto layout = std::make_unique<PatchLayout>(image, patch, "t.png");
  const ImageAnalysis a = analyze_sources({"t.png"}, {image}, std::move(layout), SolverSettings{});
  CodecSettings s;
  s.k = 6;
  BasisChoice own;
  own.basis = &a.basis;
  const std::string coded = encode_image(image, patch, own, s, "t.png").bytes;
  REQUIRE_NOTHROW(read_container(coded, "c.pcsc"));
  SavedBasis saved;
  saved.patch = patch;
  saved.channels = 3;
  saved.basis = a.basis;
  const std::string basis = write_basis_file(saved);
  REQUIRE_NOTHROW(read_basis_file(basis, "b.pcsb"));
  // Every prefix of `file` through `read`: counts the accepted ones and the refusals whose
  // message does not start with "NAME: ".
  std::size_t accepted = 0, unnamed = 0;
  const auto every_cut = [&](const std::string& file, const std::string& name, const auto& read) {
    for (std::size_t at = 0; at < file.size(); ++at) {
      const std::string message = testing::error_message_of([&] { read(std::string_view(file).substr(0, at), name); });
      if (message.empty()) ++accepted;
      else unnamed += message.rfind(name + ": ", 0) != 0;
    }
  };
  every_cut(coded, "c.pcsc", [](std::string_view b, const std::string& n) { read_container(b, n); });
  every_cut(basis, "b.pcsb", [](std::string_view b, const std::string& n) { read_basis_file(b, n); });
  CAPTURE(coded.size());
  CAPTURE(basis.size());
  CHECK(accepted == 0);
  CHECK(unnamed == 0);
}
