// fuzz_seeds — writes the seed corpora of the fuzz harnesses, made here from a
// fixed seed (SplitMix64, core/random.hpp), so no binary file comes from elsewhere.
//
//   fuzz_seeds OUT      writes OUT/<harness>/<seed name> for the harnesses
//                       image, signal, csv, raw, container and basis
//
// Every seed is a small valid file of its format, written by our own writers
// (PNG, JPEG, WAV/AIFF/FLAC/AU through libsndfile, .pcsc, .pcsb) or laid out
// byte by byte here (BMP, TGA, PNM, CSV, raw) following the format's
// specification. Harnesses whose first byte picks options get that byte
// prepended. Exit status 1 with one line on stderr if a file cannot be written.
#include <sndfile.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iostream>

#include "codec/basis_file.hpp"
#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "core/random.hpp"
#include "io/image.hpp"
#include "io/jpeg.hpp"
#include "io/signal.hpp"
#include "observe/patches.hpp"
#include "solve/solver.hpp"

namespace fs = std::filesystem;
using namespace pcasweep;

namespace {

SplitMix64Stream rng(2026);

void put(const fs::path& dir, const std::string& name, const std::string& bytes) {
  fs::create_directories(dir);
  std::ofstream out(dir / name, std::ios::binary);
  out.write(bytes.data(), std::streamsize(bytes.size()));
  if (!out) throw data_error((dir / name).string() + ": cannot write");
}

// A smooth gradient with a little seeded noise: what a patch basis has something to learn from.
Image scene(int w, int h, int channels, int bits) {
  Image im = make_image(w, h, channels, bits);
  const double top = im.max_value();
  for (int y = 0; y < h; ++y)
    for (int x = 0; x < w; ++x)
      for (int c = 0; c < channels; ++c) {
        const double v = 0.5 + 0.4 * std::sin(0.3 * x + 0.2 * y + c) + 0.05 * double(rng.next() % 100) / 100.0;
        im.at(x, y, c) = std::uint16_t(std::lround(std::clamp(v, 0.0, 1.0) * top));
      }
  return im;
}

void append_le(std::string& s, std::uint64_t v, int bytes) {
  for (int i = 0; i < bytes; ++i) s.push_back(char((v >> (8 * i)) & 0xff));
}

// BMP (Microsoft BITMAPINFOHEADER, 24-bit BGR, bottom-up rows padded to 4 bytes).
std::string bmp_of(const Image& im) {
  const int row = (im.width * 3 + 3) / 4 * 4;
  std::string s = "BM";
  append_le(s, 54 + std::uint64_t(row) * im.height, 4);
  append_le(s, 0, 4);
  append_le(s, 54, 4);
  for (std::uint64_t v : {std::uint64_t(40), std::uint64_t(im.width), std::uint64_t(im.height)}) append_le(s, v, 4);
  append_le(s, 1, 2);
  append_le(s, 24, 2);
  for (int i = 0; i < 6; ++i) append_le(s, 0, 4);
  for (int y = im.height - 1; y >= 0; --y) {
    for (int x = 0; x < im.width; ++x)
      for (int c = 2; c >= 0; --c) s.push_back(char(im.at(x, y, c)));
    s.append(std::size_t(row - im.width * 3), '\0');
  }
  return s;
}

// TGA (Truevision TGA 2.0): type 2 uncompressed or type 10 run-length, BGR(A), top-left origin.
std::string tga_of(const Image& im, bool rle) {
  std::string s;
  s += char(0); s += char(0); s += char(rle ? 10 : 2);
  s.append(5, '\0');
  append_le(s, 0, 2); append_le(s, 0, 2);
  append_le(s, std::uint64_t(im.width), 2); append_le(s, std::uint64_t(im.height), 2);
  s += char(8 * im.channels);
  s += char(0x20 | (im.channels == 4 ? 8 : 0));
  for (int y = 0; y < im.height; ++y)
    for (int x = 0; x < im.width; ++x) {
      if (rle) s += char(0);  // a raw packet of one pixel
      const int order[4] = {2, 1, 0, 3};
      for (int c = 0; c < im.channels; ++c) s.push_back(char(im.at(x, y, order[c])));
    }
  return s;
}

// Binary PNM (Netpbm): P5 gray or P6 RGB, maxval 255 or 65535 (16-bit most significant byte first).
std::string pnm_of(const Image& im) {
  std::string s = (im.channels == 1 ? "P5\n" : "P6\n") + std::to_string(im.width) + " " +
                  std::to_string(im.height) + "\n" + (im.bit_depth == 16 ? "65535\n" : "255\n");
  for (std::uint16_t v : im.samples) {
    if (im.bit_depth == 16) s.push_back(char(v >> 8));
    s.push_back(char(v & 0xff));
  }
  return s;
}

void image_seeds(const fs::path& dir) {
  const std::string no_option(1, '\0');
  put(dir, "gray8.png", no_option + encode_png(scene(12, 9, 1, 8)));
  put(dir, "rgba16.png", std::string(1, '\1') + encode_png(scene(7, 5, 4, 16)));
  put(dir, "ga8.png", no_option + encode_png(scene(6, 6, 2, 8)));
  put(dir, "rgb.jpg", no_option + encode_jpeg(scene(16, 16, 3, 8), 75));
  put(dir, "gray.jpg", no_option + encode_jpeg(scene(9, 11, 1, 8), JpegOptions{50, false, false}));
  put(dir, "rgb.bmp", no_option + bmp_of(scene(5, 4, 3, 8)));
  put(dir, "rgb.tga", no_option + tga_of(scene(6, 3, 3, 8), false));
  put(dir, "rgba_rle.tga", std::string(1, '\1') + tga_of(scene(4, 4, 4, 8), true));
  put(dir, "gray8.pgm", no_option + pnm_of(scene(8, 5, 1, 8)));
  put(dir, "rgb16.ppm", no_option + pnm_of(scene(5, 3, 3, 16)));
}

void signal_seeds(const fs::path& dir) {
  const fs::path scratch = fs::temp_directory_path() / ("pcasweep-seeds-" + std::to_string(rng.next() % 1000000));
  fs::create_directories(scratch);
  struct Kind { const char* name; int format; int channels; };
  const Kind kinds[] = {{"pcm16.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, 2}, {"u8.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_U8, 1},
                        {"float.wav", SF_FORMAT_WAV | SF_FORMAT_FLOAT, 1}, {"pcm24.aiff", SF_FORMAT_AIFF | SF_FORMAT_PCM_24, 2},
                        {"pcm16.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, 1}, {"pcm16.au", SF_FORMAT_AU | SF_FORMAT_PCM_16, 3},
                        {"double.w64", SF_FORMAT_W64 | SF_FORMAT_DOUBLE, 1}};
  for (const Kind& k : kinds) {
    Signal like;
    like.sample_rate = 8000;
    like.sndfile_format = k.format;
    like.channel_names = default_signal_channel_names(k.channels);
    Eigen::MatrixXd x(48, k.channels);
    for (Eigen::Index i = 0; i < x.size(); ++i) x.data()[i] = double(std::int64_t(rng.next() % 2001) - 1000);
    switch (k.format & SF_FORMAT_SUBMASK) {
      case SF_FORMAT_PCM_U8: like.sample_type = SampleType::pcm8; x /= 10.0; break;
      case SF_FORMAT_PCM_24: like.sample_type = SampleType::pcm24; break;
      case SF_FORMAT_FLOAT: like.sample_type = SampleType::float32; x /= 1000.0; break;
      case SF_FORMAT_DOUBLE: like.sample_type = SampleType::float64; x /= 1000.0; break;
      default: like.sample_type = SampleType::pcm16;
    }
    like.samples = x;  // the writer takes its channel count from `like`
    const fs::path path = scratch / k.name;
    write_signal(path.string(), x, like);
    std::ifstream in(path, std::ios::binary);
    put(dir, k.name, std::string(std::istreambuf_iterator<char>(in), {}));
  }
  fs::remove_all(scratch);
}

void text_seeds(const fs::path& csv, const fs::path& raw) {
  put(csv, "header.csv", std::string(1, '\0') + "a,b,c\n1,2,3\n4,5,6\n-7,8.5,9e1\n");
  put(csv, "plain.csv", std::string(1, '\1') + "0.25,1\n0.5,2\n0.75,3\n");
  put(csv, "semicolon.csv", std::string(1, '\3') + "a;b\n1;2\n3;4\n");
  put(csv, "tabs.csv", std::string(1, '\6') + "x\ty\tz\n1\t2\t3\n");
  std::string int16(1, '\2'), float32(1, '\3');  // int16 × 1 channel; float32 × 1 channel
  for (int i = 0; i < 32; ++i) append_le(int16, std::uint16_t(std::int16_t(rng.next() % 4000) - 2000), 2);
  for (int i = 0; i < 16; ++i) {
    const float v = float(std::int64_t(rng.next() % 200) - 100) / 100.0f;
    std::uint32_t bits;
    std::memcpy(&bits, &v, 4);
    append_le(float32, bits, 4);
  }
  put(raw, "int16.raw", int16);
  put(raw, "float32.raw", float32);
  std::string stereo(1, '\4');  // int16 × 2 channels
  stereo += int16.substr(1);
  put(raw, "stereo.raw", stereo);
}

Basis basis_of(const Image& im, const PatchOptions& patch) {
  const PatchLayout layout(im, patch, "seed");
  return solve(layout.observe({im}), SolverSettings{}).basis;
}

void coded_seeds(const fs::path& container, const fs::path& basis_dir) {
  struct Case { const char* name; int w, h, c, bits; ColourMode colour; BasisKind kind; EntropyStage entropy; };
  const Case cases[] = {{"gray_dct.pcsc", 24, 16, 1, 8, ColourMode::joint, BasisKind::dct, EntropyStage::adaptive},
                        {"rgb_own.pcsc", 20, 12, 3, 8, ColourMode::joint, BasisKind::embedded, EntropyStage::adaptive},
                        {"rgb16_channels.pcsc", 16, 16, 3, 16, ColourMode::channels, BasisKind::embedded, EntropyStage::adaptive},
                        {"gray_zstd.pcsc", 16, 12, 1, 8, ColourMode::joint, BasisKind::embedded, EntropyStage::zstd}};
  for (const Case& k : cases) {
    const Image im = scene(k.w, k.h, k.c, k.bits);
    const PatchOptions patch{4, 4, 0, 0, k.colour};
    const Basis own = basis_of(im, patch);
    CodecSettings settings;
    settings.k = 6;
    settings.quality = 70;
    settings.zstd_level = 3;
    settings.entropy = k.entropy;
    BasisChoice choice;
    choice.kind = k.kind;
    choice.basis = k.kind == BasisKind::embedded ? &own : nullptr;
    put(container, k.name, encode_image(im, patch, choice, settings, k.name).bytes);
  }
  SavedBasis saved;
  saved.patch = PatchOptions{4, 4, 0, 0, ColourMode::joint};
  saved.channels = 1;
  saved.basis = basis_of(scene(20, 16, 1, 8), saved.patch);
  put(basis_dir, "gray4x4.pcsb", write_basis_file(saved));
  saved.patch = PatchOptions{2, 3, 0, 0, ColourMode::joint};
  saved.channels = 3;
  saved.bit_depth = 16;
  saved.basis = basis_of(scene(12, 10, 3, 16), saved.patch);
  put(basis_dir, "rgb16_2x3.pcsb", write_basis_file(saved));
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: fuzz_seeds OUT\n";
    return 2;
  }
  try {
    const fs::path out = argv[1];
    image_seeds(out / "image");
    signal_seeds(out / "signal");
    text_seeds(out / "csv", out / "raw");
    coded_seeds(out / "container", out / "basis");
  } catch (const std::exception& e) {
    std::cerr << "fuzz_seeds: " << e.what() << "\n";
    return 1;
  }
  return 0;
}
