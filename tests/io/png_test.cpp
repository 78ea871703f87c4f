// PNG writing (PngRowWriter, encode_png) and strict streaming reading (libpng), and the header
// size guard of every reader.
//
// Sources: the PNG specification (ISO/IEC 15948 / W3C PNG 2nd edition): chunk layout (§5.3:
// length, type, data, CRC-32 over type and data), IHDR fields (§11.2.2), colour types and the
// scaling of 1/2/4-bit gray to 8 bits (§13.12: replicate or multiply by 255/(2^depth − 1)),
// tRNS (§11.3.2.1), filter byte per row (§9). The channel behaviour expected of our reader is
// stb_image's (what the rest of the code was written against): each hand-built file below is also
// decoded by stb_image and must give the same samples. The round trips decode our files with
// libpng (not our encoder), an independent decoder. The size bounds are documented beside the
// code (src/io/png.cpp, src/io/image.cpp); the header-only files here claim far more than any
// bound allows.
#include <doctest/doctest.h>
#include <stb/stb_image.h>
#include <zlib.h>

#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "io/image.hpp"
#include "io/png.hpp"
#include "../support/errors.hpp"
#include "../support/temp_dir.hpp"

using pcasweep::Image;
using pcasweep::PngRowWriter;
using pcasweep::PngWriteOptions;
using pcasweep::testing::error_message_of;
using pcasweep::testing::TempDir;
namespace fs = std::filesystem;

namespace {

// Deterministic test image: a gradient with noise, so filters and deflate have real work.
Image test_image(int w, int h, int channels, int depth, std::uint32_t seed) {
  Image im = pcasweep::make_image(w, h, channels, depth);
  std::mt19937 rng(seed);
  const int top = depth == 16 ? 65535 : 255;
  for (int y = 0; y < h; ++y)
    for (int x = 0; x < w; ++x)
      for (int c = 0; c < channels; ++c) {
        const int smooth = (x * 7 + y * 3 + c * 50) * (top / 255) % (top + 1);
        const int noise = int(rng() % 9) - 4;
        im.at(x, y, c) = std::uint16_t(std::clamp(smooth + noise * (top / 255), 0, top));
      }
  if (w * h > 2) {  // the extremes must survive too
    im.samples.front() = 0;
    im.samples.back() = std::uint16_t(top);
  }
  return im;
}

std::string read_bytes(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

void write_bytes(const std::string& path, const std::string& bytes) {
  std::ofstream out(path, std::ios::binary);
  out.write(bytes.data(), std::streamsize(bytes.size()));
}

// Writes `im` through PngRowWriter in bands of 1 row, 7 rows, then the rest.
void write_in_uneven_bands(const std::string& path, const Image& im, const PngWriteOptions& o) {
  PngRowWriter w(path, im.width, im.height, im.channels, im.bit_depth, o);
  const std::size_t row = std::size_t(im.width) * im.channels;
  int y = 0;
  for (int band : {1, 7, im.height}) {
    const int n = std::min(band, im.height - y);
    w.write_rows(im.samples.data() + std::size_t(y) * row, n);
    y += n;
  }
  CHECK(w.rows_written() == im.height);
  w.finish();
}

bool same_image(const Image& a, const Image& b) {
  return a.width == b.width && a.height == b.height && a.channels == b.channels && a.bit_depth == b.bit_depth &&
         a.samples == b.samples;
}

// --- Hand-built PNGs (§5.3 chunk layout) ---------------------------------------------------

std::string be32(std::uint32_t v) {
  return {char(v >> 24), char(v >> 16), char(v >> 8), char(v)};
}

std::string chunk(const std::string& type, const std::string& data) {
  const std::string body = type + data;
  const uLong crc = crc32(0, reinterpret_cast<const Bytef*>(body.data()), uInt(body.size()));
  return be32(std::uint32_t(data.size())) + body + be32(std::uint32_t(crc));
}

std::string ihdr(std::uint32_t w, std::uint32_t h, int depth, int colour_type, int interlace = 0) {
  return chunk("IHDR", be32(w) + be32(h) + std::string{char(depth), char(colour_type), 0, 0, char(interlace)});
}

// A PNG from packed rows (each without its filter byte; filter 0 is prepended) and extra
// chunks between IHDR and IDAT (PLTE, tRNS).
std::string build_png(std::uint32_t w, std::uint32_t h, int depth, int colour_type,
                      const std::vector<std::string>& rows, const std::string& extra = "") {
  std::string raw;
  for (const auto& r : rows) raw += '\0' + r;
  uLongf n = compressBound(uLong(raw.size()));
  std::string z(n, '\0');
  REQUIRE(compress2(reinterpret_cast<Bytef*>(z.data()), &n, reinterpret_cast<const Bytef*>(raw.data()),
                    uLong(raw.size()), 6) == Z_OK);
  z.resize(n);
  return std::string("\x89PNG\r\n\x1a\n", 8) + ihdr(w, h, depth, colour_type) + extra + chunk("IDAT", z) +
         chunk("IEND", "");
}

// stb_image's decode of `bytes` (its own channel count, 8 or 16 bits), for the behaviour check.
std::vector<std::uint16_t> stb_samples(const std::string& bytes, int& w, int& h, int& c, bool sixteen) {
  const auto* p = reinterpret_cast<const stbi_uc*>(bytes.data());
  std::vector<std::uint16_t> out;
  if (sixteen) {
    stbi_us* d = stbi_load_16_from_memory(p, int(bytes.size()), &w, &h, &c, 0);
    REQUIRE(d != nullptr);
    out.assign(d, d + std::size_t(w) * h * c);
    stbi_image_free(d);
  } else {
    stbi_uc* d = stbi_load_from_memory(p, int(bytes.size()), &w, &h, &c, 0);
    REQUIRE(d != nullptr);
    out.assign(d, d + std::size_t(w) * h * c);
    stbi_image_free(d);
  }
  return out;
}

void check_matches_stb(const std::string& bytes, const Image& ours) {
  int w = 0, h = 0, c = 0;
  const auto s = stb_samples(bytes, w, h, c, ours.bit_depth == 16);
  CHECK(w == ours.width);
  CHECK(h == ours.height);
  CHECK(c == ours.channels);
  CHECK(s == ours.samples);
}

}  // namespace

TEST_CASE("png: PngRowWriter round trips 8/16-bit, 1-4 channels, odd sizes, uneven bands") {
  TempDir dir;
  const int sizes[][2] = {{1, 1}, {37, 23}, {5, 301}, {513, 9}};
  for (int depth : {8, 16})
    for (int channels = 1; channels <= 4; ++channels)
      for (const auto& size : sizes) {
        CAPTURE(depth);
        CAPTURE(channels);
        CAPTURE(size[0]);
        CAPTURE(size[1]);
        const Image im = test_image(size[0], size[1], channels, depth, std::uint32_t(depth * 10 + channels));
        PngWriteOptions o;
        o.chunk_bytes = 700;  // several groups and batches even in small images
        o.threads = 2;
        const std::string path = dir / "rt.png";
        write_in_uneven_bands(path, im, o);
        const Image back = pcasweep::read_image(path);
        CHECK(same_image(back, im));
        CHECK(back.channel_names == pcasweep::default_channel_names(channels));
        // encode_png, same encoder, decoded in memory.
        const Image mem = pcasweep::decode_image(pcasweep::encode_png(im, o), "mem.png");
        CHECK(same_image(mem, im));
      }
}

TEST_CASE("png: every level, filter and strategy decodes to the same samples") {
  const Image im = test_image(61, 40, 3, 8, 3);
  const Image im16 = test_image(19, 17, 4, 16, 4);
  using F = pcasweep::PngFilter;
  using S = pcasweep::PngStrategy;
  for (int level = 0; level <= 9; ++level)
    for (F f : {F::none, F::sub, F::up, F::average, F::paeth, F::adaptive})
      for (S s : {S::automatic, S::standard, S::rle, S::filtered}) {
        CAPTURE(level);
        PngWriteOptions o;
        o.level = level;
        o.filter = f;
        o.strategy = s;
        CHECK(same_image(pcasweep::decode_image(pcasweep::encode_png(im, o), "a.png"), im));
        CHECK(same_image(pcasweep::decode_image(pcasweep::encode_png(im16, o), "b.png"), im16));
      }
  // automatic is rle at level 1 and zlib's default strategy elsewhere (io/png.hpp): the same bytes.
  for (int level : {1, 2, 6, 9}) {
    CAPTURE(level);
    PngWriteOptions a, explicit_choice;
    a.level = explicit_choice.level = level;
    explicit_choice.strategy = level == 1 ? S::rle : S::standard;
    CHECK(pcasweep::encode_png(im, a) == pcasweep::encode_png(im, explicit_choice));
  }
  CHECK(PngWriteOptions{}.strategy == S::automatic);
  // Level 0 stores: the file is at least the filtered raw size (rows·(1 + row bytes)).
  PngWriteOptions store;
  store.level = 0;
  CHECK(pcasweep::encode_png(im, store).size() >= std::size_t(40) * (1 + 61 * 3));
  PngWriteOptions bad;
  bad.level = 10;
  CHECK_THROWS_AS(pcasweep::encode_png(im, bad), pcasweep::Error);
}

TEST_CASE("png: the bytes do not depend on the thread count, the bands, or a parallel region") {
  const Image im = test_image(300, 97, 3, 8, 5);
  PngWriteOptions o;
  o.chunk_bytes = 4000;  // 4 rows per group: 25 groups
  o.threads = 1;
  const std::string one = pcasweep::encode_png(im, o);
  o.threads = 2;
  CHECK(pcasweep::encode_png(im, o) == one);
  TempDir dir;
  write_in_uneven_bands(dir / "bands.png", im, o);
  CHECK(read_bytes(dir / "bands.png") == one);
  // One writer per thread inside a parallel region (nested parallelism off): each runs in its
  // own thread and gives the same bytes.
  std::vector<std::string> out(4);
#pragma omp parallel for num_threads(2) schedule(static, 1)
  for (int k = 0; k < 4; ++k) {
    const std::string path = dir / ("t" + std::to_string(k) + ".png");
    write_in_uneven_bands(path, im, o);
    out[k] = read_bytes(path);
  }
  for (const auto& s : out) CHECK(s == one);
}

TEST_CASE("png: write_png and encode_png(image) keep working") {
  TempDir dir;
  const Image im = test_image(40, 30, 3, 16, 6);
  pcasweep::write_png(dir / "w.png", im);
  CHECK(same_image(pcasweep::read_image(dir / "w.png"), im));
  CHECK(same_image(pcasweep::decode_image(pcasweep::encode_png(im), "e.png"), im));
  // An 8-bit image with a sample above 255 cannot be stored.
  Image bad = test_image(4, 4, 1, 8, 7);
  bad.samples[5] = 256;
  CHECK(error_message_of([&] { pcasweep::encode_png(bad); }).find("above 255") != std::string::npos);
  CHECK_THROWS_AS(pcasweep::write_png(dir / "bad.png", bad), pcasweep::Error);
  CHECK_FALSE(fs::exists(dir / "bad.png"));
}

TEST_CASE("png: no partial file: destroyed before finish, too few or too many rows") {
  TempDir dir;
  const Image im = test_image(50, 20, 3, 8, 8);
  const std::size_t row = 50 * 3;
  {
    PngRowWriter w(dir / "never.png", 50, 20, 3, 8);
    w.write_rows(im.samples.data(), 10);
  }
  {
    PngRowWriter w(dir / "short.png", 50, 20, 3, 8);
    w.write_rows(im.samples.data(), 19);
    const std::string m = error_message_of([&] { w.finish(); });
    CHECK(m.find("short.png") != std::string::npos);
  }
  {
    PngRowWriter w(dir / "long.png", 50, 20, 3, 8);
    w.write_rows(im.samples.data(), 15);
    CHECK(error_message_of([&] { w.write_rows(im.samples.data() + 15 * row, 6); }).find("long.png") !=
          std::string::npos);
  }
  // Nothing at all in the folder: neither the files nor a temporary.
  CHECK(fs::is_empty(dir.path()));
  // A folder that does not exist: Error(data) naming the path, at construction.
  const std::string missing = (dir.path() / "no" / "such" / "x.png").string();
  const std::string m = error_message_of([&] { PngRowWriter w(missing, 2, 2, 1, 8); });
  CHECK(m.find(missing) != std::string::npos);
  // An existing file is replaced only by a finished one.
  pcasweep::write_png(dir / "keep.png", im);
  const std::string before = read_bytes(dir / "keep.png");
  {
    PngRowWriter w(dir / "keep.png", 50, 20, 3, 8);
    w.write_rows(im.samples.data(), 3);
  }
  CHECK(read_bytes(dir / "keep.png") == before);
}

TEST_CASE("png: truncated files and a flipped CRC byte are refused, naming the file") {
  TempDir dir;
  const Image im = test_image(200, 150, 3, 8, 9);
  const std::string good = pcasweep::encode_png(im, PngWriteOptions{});
  REQUIRE(good.size() > 20000);
  for (double cut : {0.10, 0.50, 0.99}) {
    CAPTURE(cut);
    const std::string path = dir / "cut.png";
    write_bytes(path, good.substr(0, std::size_t(double(good.size()) * cut)));
    const std::string m = error_message_of([&] { pcasweep::read_image(path); });
    CHECK(m.find(path + ": ") == 0);
    CHECK(error_message_of([&] { pcasweep::decode_image(good.substr(0, std::size_t(double(good.size()) * cut)), "mem.png"); })
              .find("mem.png: ") == 0);
  }
  // Only IEND missing: every row decodes, but the stream end is checked.
  write_bytes(dir / "noend.png", good.substr(0, good.size() - 12));
  CHECK(error_message_of([&] { pcasweep::read_image(dir / "noend.png"); }).find(dir / "noend.png" + ": truncated") == 0);
  // A flipped byte in the CRC of the first IDAT (signature 8 + IHDR 25, then IDAT length and type).
  std::string flipped = good;
  const std::uint32_t idat_len = (std::uint32_t(std::uint8_t(good[33])) << 24) |
                                 (std::uint32_t(std::uint8_t(good[34])) << 16) |
                                 (std::uint32_t(std::uint8_t(good[35])) << 8) | std::uint8_t(good[36]);
  REQUIRE(good.substr(37, 4) == "IDAT");
  flipped[41 + idat_len] = char(flipped[41 + idat_len] ^ 0x01);
  write_bytes(dir / "crc.png", flipped);
  const std::string m = error_message_of([&] { pcasweep::read_image(dir / "crc.png"); });
  CHECK(m.find(dir / "crc.png") == 0);
  CHECK(m.find("CRC") != std::string::npos);
  // A flipped data byte inside the IDAT: the CRC no longer matches either.
  std::string data_flip = good;
  data_flip[41 + idat_len / 2] = char(data_flip[41 + idat_len / 2] ^ 0x40);
  CHECK(error_message_of([&] { pcasweep::decode_image(data_flip, "d.png"); }).find("d.png: ") == 0);
  // The untouched file still reads.
  CHECK(same_image(pcasweep::decode_image(good, "good.png"), im));
}

TEST_CASE("png: reader keeps stb_image's channels and depths (palette, tRNS, 1/2/4-bit, 16-bit)") {
  // 1-bit gray, 9 pixels wide (two bytes per row, the last partly used): 0 -> 0, 1 -> 255 (§13.12).
  {
    const std::string bytes = build_png(9, 2, 1, 0, {std::string{char(0b10110000), char(0b10000000)},
                                                     std::string{char(0b01001111), char(0b00000000)}});
    const Image im = pcasweep::decode_image(bytes, "g1.png");
    CHECK(im.channels == 1);
    CHECK(im.bit_depth == 8);
    const std::vector<std::uint16_t> expected = {255, 0, 255, 255, 0, 0, 0, 0, 255, 0, 255, 0, 0, 255, 255, 255, 255, 0};
    CHECK(im.samples == expected);
    check_matches_stb(bytes, im);
  }
  // 2-bit and 4-bit gray: value·85 and value·17 (255/(2^depth − 1)).
  {
    const std::string bytes = build_png(4, 1, 2, 0, {std::string{char(0b00011011)}});
    const Image im = pcasweep::decode_image(bytes, "g2.png");
    CHECK(im.samples == std::vector<std::uint16_t>{0, 85, 170, 255});
    check_matches_stb(bytes, im);
    const std::string b4 = build_png(3, 1, 4, 0, {std::string{char(0x0F), char(0x70)}});
    const Image i4 = pcasweep::decode_image(b4, "g4.png");
    CHECK(i4.samples == std::vector<std::uint16_t>{0, 255, 119});
    check_matches_stb(b4, i4);
  }
  // Palette without tRNS -> RGB; with tRNS -> RGBA (entries past the tRNS list are opaque).
  {
    const std::string plte = chunk("PLTE", std::string{10, 20, 30, 40, 50, 60, char(200), char(210), char(220)});
    const std::vector<std::string> rows = {std::string{0, 1, 2}, std::string{2, 2, 0}};
    const std::string rgb = build_png(3, 2, 8, 3, rows, plte);
    const Image a = pcasweep::decode_image(rgb, "p.png");
    CHECK(a.channels == 3);
    CHECK(a.samples == std::vector<std::uint16_t>{10, 20, 30, 40, 50, 60, 200, 210, 220, 200, 210, 220, 200, 210,
                                                  220, 10, 20, 30});
    check_matches_stb(rgb, a);
    const std::string rgba = build_png(3, 2, 8, 3, rows, plte + chunk("tRNS", std::string{0, char(128)}));
    const Image b = pcasweep::decode_image(rgba, "pt.png");
    CHECK(b.channels == 4);
    CHECK(b.channel_names.back() == "alpha");
    CHECK(b.at(0, 0, 3) == 0);
    CHECK(b.at(1, 0, 3) == 128);
    CHECK(b.at(2, 0, 3) == 255);
    check_matches_stb(rgba, b);
    // 4-bit palette indices, two per byte.
    const std::string p4 = build_png(3, 1, 4, 3, {std::string{char(0x12), char(0x00)}}, plte);
    const Image c = pcasweep::decode_image(p4, "p4.png");
    CHECK(c.samples == std::vector<std::uint16_t>{40, 50, 60, 200, 210, 220, 10, 20, 30});
    check_matches_stb(p4, c);
  }
  // Gray 8-bit with tRNS -> gray+alpha; RGB 16-bit with tRNS -> RGBA 16-bit.
  {
    const std::string g = build_png(3, 1, 8, 0, {std::string{5, 7, 5}}, chunk("tRNS", std::string{0, 5}));
    const Image im = pcasweep::decode_image(g, "gt.png");
    CHECK(im.channels == 2);
    CHECK(im.samples == std::vector<std::uint16_t>{5, 0, 7, 255, 5, 0});
    check_matches_stb(g, im);
    const std::string row = std::string{1, 2, 3, 4, 5, 6} + std::string{0, 0, 0, 0, char(0xFF), char(0xFF)};
    const std::string rgb16 = build_png(2, 1, 16, 2, {row}, chunk("tRNS", std::string{1, 2, 3, 4, 5, 6}));
    const Image c = pcasweep::decode_image(rgb16, "c16.png");
    CHECK(c.channels == 4);
    CHECK(c.bit_depth == 16);
    CHECK(c.samples == std::vector<std::uint16_t>{0x0102, 0x0304, 0x0506, 0, 0, 0, 0xFFFF, 65535});
    check_matches_stb(rgb16, c);
  }
  // drop_alpha removes the alpha channel while reading.
  {
    const Image rgba = test_image(17, 5, 4, 16, 10);
    pcasweep::ImageReadOptions o;
    o.drop_alpha = true;
    const Image back = pcasweep::decode_image(pcasweep::encode_png(rgba), "d.png", o);
    CHECK(back.channels == 3);
    CHECK(back.alpha_dropped);
    for (int y = 0; y < 5; ++y)
      for (int x = 0; x < 17; ++x)
        for (int c = 0; c < 3; ++c) CHECK(back.at(x, y, c) == rgba.at(x, y, c));
  }
}

TEST_CASE("png: the size guard refuses header-only files claiming 30000x30000 and sizes above max_pixels") {
  TempDir dir;
  // PNG: signature, IHDR 30000x30000 RGBA 8-bit, one tiny IDAT, IEND.
  {
    const std::string png = std::string("\x89PNG\r\n\x1a\n", 8) + ihdr(30000, 30000, 8, 6) +
                            chunk("IDAT", std::string("\x78\x01\x03\x00\x00\x00\x00\x01", 8)) + chunk("IEND", "");
    write_bytes(dir / "huge.png", png);
    const std::string m = error_message_of([&] { pcasweep::read_image(dir / "huge.png"); });
    CHECK(m.find(dir / "huge.png" + ": declares 30000x30000") == 0);
    CHECK(m.find("1032:1") != std::string::npos);
    // The 5 KB file claiming 8512x6685 RGBA.
    const std::string five_kb = std::string("\x89PNG\r\n\x1a\n", 8) + ihdr(8512, 6685, 8, 6) +
                                chunk("IDAT", std::string(5000, 'x')) + chunk("IEND", "");
    CHECK(error_message_of([&] { pcasweep::decode_image(five_kb, "5k.png"); }).find("5k.png: declares 8512x6685") == 0);
  }
  // BMP: 14-byte file header + 40-byte BITMAPINFOHEADER, 24 bpp, no raster.
  {
    std::string bmp = "BM" + std::string(12, '\0');
    std::string info(40, '\0');
    auto le32 = [](std::string& s, std::size_t at, std::uint32_t v) {
      for (int i = 0; i < 4; ++i) s[at + i] = char(v >> (8 * i));
    };
    le32(info, 0, 40);
    le32(info, 4, 30000);
    le32(info, 8, 30000);
    info[12] = 1;   // planes
    info[14] = 24;  // bits per pixel
    bmp += info;
    le32(bmp, 2, std::uint32_t(bmp.size()));
    le32(bmp, 10, std::uint32_t(bmp.size()));
    write_bytes(dir / "huge.bmp", bmp);
    const std::string m = error_message_of([&] { pcasweep::read_image(dir / "huge.bmp"); });
    CHECK(m.find(dir / "huge.bmp" + ": declares 30000x30000") == 0);
  }
  // TGA: 18-byte header, uncompressed true colour (type 2) and RLE (type 10), 24 bpp.
  for (char type : {char(2), char(10)}) {
    CAPTURE(int(type));
    std::string tga(18, '\0');
    tga[2] = type;
    tga[12] = char(30000 & 0xFF);
    tga[13] = char(30000 >> 8);
    tga[14] = char(30000 & 0xFF);
    tga[15] = char(30000 >> 8);
    tga[16] = 24;
    tga += std::string(64, '\0');
    const std::string m = error_message_of([&] { pcasweep::decode_image(tga, "huge.tga"); });
    CHECK(m.find("huge.tga: declares 30000x30000") == 0);
  }
  // PNM: header only.
  {
    const std::string m = error_message_of([&] { pcasweep::decode_image("P6\n30000 30000\n255\n", "huge.ppm"); });
    CHECK(m.find("huge.ppm: declares 30000x30000") == 0);
  }
  // max_pixels smaller than a real image refuses it, for PNG and for PNM; the message says how.
  {
    const Image im = test_image(64, 48, 3, 8, 11);
    pcasweep::write_png(dir / "real.png", im);
    pcasweep::ImageReadOptions o;
    o.max_pixels = 64 * 48 - 1;
    const std::string m = error_message_of([&] { pcasweep::read_image(dir / "real.png", o); });
    CHECK(m.find(dir / "real.png" + ": declares 64x48 = 3072 pixels, above --max-pixels (3071)") == 0);
    CHECK(m.find("raise --max-pixels") != std::string::npos);
    o.max_pixels = 64 * 48;
    CHECK(same_image(pcasweep::read_image(dir / "real.png", o), im));
    pcasweep::ImageReadOptions tiny;
    tiny.max_pixels = 1;
    CHECK(error_message_of([&] { pcasweep::decode_image(std::string("P5 2 1 255\n\x01\x02", 13), "t.pgm", tiny); })
              .find("t.pgm: declares 2x1") == 0);
  }
}

TEST_CASE("png: every bundled sample and the skimage PNGs pass the size guard and read") {
  // Source of the files: samples/ (this repository) and the images Debian's python3-skimage ships.
  std::vector<fs::path> files;
  for (const auto& e : fs::directory_iterator(fs::path(PCASWEEP_SOURCE_DIR) / "samples"))
    if (e.path().extension() == ".png") files.push_back(e.path());
  const fs::path skimage = "/usr/lib/python3/dist-packages/skimage/data";
  if (fs::is_directory(skimage))
    for (const auto& e : fs::directory_iterator(skimage))
      if (e.path().extension() == ".png" || e.path().extension() == ".jpg") files.push_back(e.path());
  CHECK(files.size() >= 5);
  for (const auto& f : files) {
    CAPTURE(f.string());
    const std::string bytes = read_bytes(f.string());
    int w = 0, h = 0, c = 0;
    const bool stb_can = stbi_info_from_memory(reinterpret_cast<const stbi_uc*>(bytes.data()), int(bytes.size()), &w,
                                               &h, &c) != 0;
    if (!stb_can) continue;  // not an image stb reads either (none expected)
    const std::string m = error_message_of([&] { pcasweep::read_image(f.string()); });
    CHECK(m.find("declares") == std::string::npos);  // the size guard lets every real file through
    // skimage ships truncated.jpg on purpose (a JPEG cut short); every other file reads.
    if (f.filename() != "truncated.jpg") CHECK(m == "");
    if (m.empty() && f.extension() == ".png") {
      // Same samples as stb_image gave before the switch to libpng.
      const Image ours = pcasweep::read_image(f.string());
      check_matches_stb(bytes, ours);
    }
  }
}
