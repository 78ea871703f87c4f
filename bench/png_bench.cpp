// pcasweep-bench png — PNG writers compared on large synthetic images (docs/performance.md,
// "PNG writing"). Not part of the tests.
//
//   png [--width 6000] [--height 4000] [--images photo8,photo16,blocky8] [--only SUBSTRING]
//       [--repeat 1] [--out DIR] [--read 1]
//
// Images (generated, seeded, RGB): photo8 — smooth gradients plus texture plus noise, 8-bit;
// photo16 — the same scene at 16 bits with noise in the low bits; blocky8 — photo8 blurred
// inside each 8×8 block (two passes of a 3×3 box clamped to the block), what a patch-PCA
// reconstruction at small k looks like. Each candidate starts from the uint16 Image (the
// product's form), writes a file into DIR, and is checked by decoding it with our reader. One
// JSON line per run: seconds (wall, median of --repeat), cpu_seconds (process CPU time, all
// threads), MB/s of raw samples (width·height·channels·bytes per sample / wall seconds), bytes,
// ratio (bytes / raw), extra peak RSS over the resident size before the run (VmHWM reset
// through /proc/self/clear_refs), load average at the start. With --read 1 (default) each image
// is also read back, by our libpng reader and by the previous path (file into a string, stb_image,
// copy), for time and peak RSS.
//
// Candidates: stb_image_write (8-bit only; its own zlib at its default level 8, filters chosen
// per row), libpng (levels 1/2/3/6 × filters none/sub/up/paeth/adaptive, row by row), libspng
// (progressive row encode) and libdeflate (whole filtered buffer: a reference, it cannot
// stream) when the build found them, ours (PngRowWriter, levels × filters × strategies ×
// threads × group sizes), and ours with two images written at once, one writer per thread.
#include <png.h>
#include <stb_image.h>
#include <stb_image_write.h>
#include <sys/resource.h>
#include <zlib.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <functional>
#include <iostream>
#include <map>
#include <nlohmann/json.hpp>
#include <omp.h>
#include <random>
#include <string>
#include <vector>

#ifdef PCASWEEP_BENCH_HAVE_SPNG
#include <spng.h>
#endif
#ifdef PCASWEEP_BENCH_HAVE_LIBDEFLATE
#include <libdeflate.h>
#endif

#include "core/error.hpp"
#include "core/thread_guard.hpp"
#include "io/atomic_file.hpp"
#include "io/image.hpp"
#include "io/png.hpp"

namespace pcasweep::bench {

namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;

long status_kb(const char* key) {
  std::ifstream in("/proc/self/status");
  std::string line;
  const std::size_t n = std::strlen(key);
  while (std::getline(in, line))
    if (line.compare(0, n, key) == 0) return std::stol(line.substr(n));
  return -1;
}

void reset_peak_rss() {
  std::ofstream out("/proc/self/clear_refs");
  out << "5";  // resets VmHWM to the current RSS (Linux >= 4.0, proc(5))
}

double cpu_seconds() {
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return double(t.tv_sec) + 1e-9 * double(t.tv_nsec);
}

double load_average() {
  double l = -1;
  if (std::FILE* f = std::fopen("/proc/loadavg", "r")) {
    if (std::fscanf(f, "%lf", &l) != 1) l = -1;
    std::fclose(f);
  }
  return l;
}

// --- Images --------------------------------------------------------------------------------

// Photo-like RGB scene in [0, 1]: a few smooth gradients and blobs (sky, shading), a texture whose
// amplitude varies over the image (foliage, fabric), value noise at two scales, then sensor noise
// added by the caller at the target depth.
std::vector<float> scene(int w, int h, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<float> u(0.f, 1.f);
  // Value-noise lattices (bilinear) at cell sizes 64 and 9 pixels.
  auto lattice = [&](int cell) {
    const int lw = w / cell + 2, lh = h / cell + 2;
    std::vector<float> v(std::size_t(lw) * lh);
    for (auto& x : v) x = u(rng);
    return std::make_tuple(v, lw, cell);
  };
  auto [coarse, cw, cc] = lattice(64);
  auto [fine, fw, fc] = lattice(9);
  auto sample = [](const std::vector<float>& v, int lw, int cell, int x, int y) {
    const float fx = float(x) / cell, fy = float(y) / cell;
    const int ix = int(fx), iy = int(fy);
    const float tx = fx - ix, ty = fy - iy;
    const float a = v[std::size_t(iy) * lw + ix], b = v[std::size_t(iy) * lw + ix + 1];
    const float c = v[std::size_t(iy + 1) * lw + ix], d = v[std::size_t(iy + 1) * lw + ix + 1];
    return (a * (1 - tx) + b * tx) * (1 - ty) + (c * (1 - tx) + d * tx) * ty;
  };
  std::vector<float> out(std::size_t(w) * h * 3);
  const float base[3] = {0.55f, 0.5f, 0.45f}, tilt[3] = {0.25f, 0.15f, -0.2f};
#pragma omp parallel for schedule(static)
  for (int y = 0; y < h; ++y) {
    for (int x = 0; x < w; ++x) {
      const float X = float(x) / w, Y = float(y) / h;
      const float shade = 0.25f * std::sin(3.1f * X + 1.3f) * std::cos(2.3f * Y) + 0.15f * (Y - 0.5f);
      const float blob = 0.2f * std::exp(-((X - 0.3f) * (X - 0.3f) + (Y - 0.6f) * (Y - 0.6f)) * 18.f);
      const float texture_amp = 0.12f * sample(coarse, cw, cc, x, y);
      const float texture = texture_amp * (std::sin(0.41f * x + 2.f * std::sin(0.05f * y)) *
                                               std::sin(0.37f * y + 1.5f * std::sin(0.04f * x)) +
                                           (sample(fine, fw, fc, x, y) - 0.5f));
      const float detail = 0.15f * (sample(coarse, cw, cc, x, y) - 0.5f);
      for (int c = 0; c < 3; ++c) {
        const float v = base[c] + tilt[c] * (X - Y) + shade + blob * (c == 0 ? 1.f : 0.6f) + texture * (1 - 0.2f * c) +
                        detail;
        out[(std::size_t(y) * w + x) * 3 + c] = std::clamp(v, 0.f, 1.f);
      }
    }
  }
  return out;
}

Image quantise(const std::vector<float>& s, int w, int h, int depth, float noise_levels, std::uint64_t seed) {
  Image im = make_image(w, h, 3, depth);
  const float top = depth == 16 ? 65535.f : 255.f;
#pragma omp parallel for schedule(static)
  for (int y = 0; y < h; ++y) {
    std::mt19937 rng(std::uint32_t(seed * 1000003u + std::uint64_t(y)));
    std::normal_distribution<float> n(0.f, noise_levels);
    for (std::size_t i = std::size_t(y) * w * 3; i < std::size_t(y + 1) * w * 3; ++i)
      im.samples[i] = std::uint16_t(std::clamp(std::lround(s[i] * top + n(rng)), 0L, long(top)));
  }
  return im;
}

// Two passes of a 3×3 box blur clamped to each 8×8 block (neighbours outside the block are not used).
Image block_blur(const Image& in) {
  Image cur = in, next = in;
  const int w = in.width, h = in.height, C = in.channels;
  for (int pass = 0; pass < 2; ++pass) {
#pragma omp parallel for schedule(static)
    for (int y = 0; y < h; ++y) {
      const int y0 = y / 8 * 8, y1 = std::min(h, y0 + 8);
      for (int x = 0; x < w; ++x) {
        const int x0 = x / 8 * 8, x1 = std::min(w, x0 + 8);
        for (int c = 0; c < C; ++c) {
          int sum = 0, count = 0;
          for (int yy = std::max(y0, y - 1); yy < std::min(y1, y + 2); ++yy)
            for (int xx = std::max(x0, x - 1); xx < std::min(x1, x + 2); ++xx) {
              sum += cur.at(xx, yy, c);
              ++count;
            }
          next.at(x, y, c) = std::uint16_t((sum + count / 2) / count);
        }
      }
    }
    std::swap(cur, next);
  }
  return cur;
}

// --- Candidates ----------------------------------------------------------------------------

struct Candidate {
  std::string encoder, filter;
  int level = 1, threads = 1;
  nlohmann::json extra = nlohmann::json::object();
  std::function<void(const Image&, const std::string& path)> write;
  bool eight_bit_only = false;
  int writers = 1;  // images written at once (one per thread)
};

void to_bytes_row(const Image& im, int y, std::vector<std::uint8_t>& row, bool big_endian) {
  const std::size_t n = std::size_t(im.width) * im.channels;
  const std::uint16_t* s = im.samples.data() + std::size_t(y) * n;
  if (im.bit_depth == 8) {
    row.resize(n);
    for (std::size_t i = 0; i < n; ++i) row[i] = std::uint8_t(s[i]);
  } else {
    row.resize(2 * n);
    if (big_endian) {
      for (std::size_t i = 0; i < n; ++i) {
        row[2 * i] = std::uint8_t(s[i] >> 8);
        row[2 * i + 1] = std::uint8_t(s[i]);
      }
    } else {
      std::memcpy(row.data(), s, 2 * n);
    }
  }
}

int libpng_filter_flags(const std::string& f) {
  if (f == "none") return PNG_FILTER_NONE;
  if (f == "sub") return PNG_FILTER_SUB;
  if (f == "up") return PNG_FILTER_UP;
  if (f == "paeth") return PNG_FILTER_PAETH;
  return PNG_ALL_FILTERS;  // adaptive
}

void write_libpng(const Image& im, const std::string& path, int level, const std::string& filter) {
  std::FILE* f = std::fopen(path.c_str(), "wb");
  if (!f) throw data_error(path + ": cannot open");
  png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, nullptr, nullptr, nullptr);
  png_infop info = png_create_info_struct(png);
  std::vector<std::uint8_t> row;
  if (setjmp(png_jmpbuf(png))) {
    png_destroy_write_struct(&png, &info);
    std::fclose(f);
    throw data_error(path + ": libpng failed");
  }
  png_init_io(png, f);
  static const int types[] = {0, PNG_COLOR_TYPE_GRAY, PNG_COLOR_TYPE_GRAY_ALPHA, PNG_COLOR_TYPE_RGB,
                              PNG_COLOR_TYPE_RGB_ALPHA};
  png_set_IHDR(png, info, im.width, im.height, im.bit_depth, types[im.channels], PNG_INTERLACE_NONE,
               PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
  png_set_compression_level(png, level);
  png_set_filter(png, PNG_FILTER_TYPE_BASE, libpng_filter_flags(filter));
  png_write_info(png, info);
  for (int y = 0; y < im.height; ++y) {
    to_bytes_row(im, y, row, true);
    png_write_row(png, row.data());
  }
  png_write_end(png, nullptr);
  png_destroy_write_struct(&png, &info);
  std::fclose(f);
}

void write_stb(const Image& im, const std::string& path) {
  std::vector<std::uint8_t> bytes(im.samples.begin(), im.samples.end());
  if (!stbi_write_png(path.c_str(), im.width, im.height, im.channels, bytes.data(), im.width * im.channels))
    throw data_error(path + ": stb_image_write failed");
}

#ifdef PCASWEEP_BENCH_HAVE_SPNG
int spng_filter_flags(const std::string& f) {
  if (f == "none") return SPNG_FILTER_CHOICE_NONE;
  if (f == "sub") return SPNG_FILTER_CHOICE_SUB;
  if (f == "up") return SPNG_FILTER_CHOICE_UP;
  if (f == "paeth") return SPNG_FILTER_CHOICE_PAETH;
  return SPNG_FILTER_CHOICE_ALL;
}

void write_spng(const Image& im, const std::string& path, int level, const std::string& filter) {
  std::FILE* f = std::fopen(path.c_str(), "wb");
  if (!f) throw data_error(path + ": cannot open");
  spng_ctx* ctx = spng_ctx_new(SPNG_CTX_ENCODER);
  spng_set_png_file(ctx, f);
  spng_ihdr ihdr{};
  ihdr.width = std::uint32_t(im.width);
  ihdr.height = std::uint32_t(im.height);
  ihdr.bit_depth = std::uint8_t(im.bit_depth);
  static const std::uint8_t types[] = {0, SPNG_COLOR_TYPE_GRAYSCALE, SPNG_COLOR_TYPE_GRAYSCALE_ALPHA,
                                       SPNG_COLOR_TYPE_TRUECOLOR, SPNG_COLOR_TYPE_TRUECOLOR_ALPHA};
  ihdr.color_type = types[im.channels];
  spng_set_ihdr(ctx, &ihdr);
  spng_set_option(ctx, SPNG_IMG_COMPRESSION_LEVEL, level);
  spng_set_option(ctx, SPNG_FILTER_CHOICE, spng_filter_flags(filter));
  int rc = spng_encode_image(ctx, nullptr, 0, SPNG_FMT_PNG, SPNG_ENCODE_PROGRESSIVE | SPNG_ENCODE_FINALIZE);
  std::vector<std::uint8_t> row;
  for (int y = 0; rc == 0 && y < im.height; ++y) {
    to_bytes_row(im, y, row, false);  // SPNG_FMT_PNG: 16-bit samples in host order
    rc = spng_encode_row(ctx, row.data(), row.size());
    if (rc == SPNG_EOI) rc = 0;
  }
  spng_ctx_free(ctx);
  std::fclose(f);
  if (rc) throw data_error(path + ": libspng failed: " + spng_strerror(rc));
}
#endif

#ifdef PCASWEEP_BENCH_HAVE_LIBDEFLATE
// Whole image filtered (paeth or none) into one buffer, one libdeflate zlib stream, framed by hand.
void write_libdeflate(const Image& im, const std::string& path, int level, const std::string& filter) {
  const std::size_t bps = im.bit_depth / 8, bpp = bps * im.channels, rb = std::size_t(im.width) * bpp;
  std::vector<std::uint8_t> filtered(std::size_t(im.height) * (rb + 1)), row, prior(rb, 0);
  for (int y = 0; y < im.height; ++y) {
    to_bytes_row(im, y, row, true);
    std::uint8_t* out = filtered.data() + std::size_t(y) * (rb + 1);
    if (filter == "paeth") {
      out[0] = 4;
      for (std::size_t i = 0; i < rb; ++i) {
        const int a = i >= bpp ? row[i - bpp] : 0, b = prior[i], c = i >= bpp ? prior[i - bpp] : 0;
        const int pa = std::abs(b - c), pb = std::abs(a - c), pc = std::abs(a + b - 2 * c);
        out[1 + i] = std::uint8_t(row[i] - ((pa <= pb && pa <= pc) ? a : pb <= pc ? b : c));
      }
    } else {
      out[0] = 0;
      std::memcpy(out + 1, row.data(), rb);
    }
    prior = row;
  }
  libdeflate_compressor* c = libdeflate_alloc_compressor(level);
  std::vector<std::uint8_t> z(libdeflate_zlib_compress_bound(c, filtered.size()));
  const std::size_t zn = libdeflate_zlib_compress(c, filtered.data(), filtered.size(), z.data(), z.size());
  libdeflate_free_compressor(c);
  if (!zn) throw data_error(path + ": libdeflate failed");
  std::ofstream out(path, std::ios::binary);
  auto chunk = [&](const char* type, const std::uint8_t* data, std::size_t n) {
    unsigned char head[8] = {std::uint8_t(n >> 24), std::uint8_t(n >> 16), std::uint8_t(n >> 8), std::uint8_t(n)};
    std::memcpy(head + 4, type, 4);
    uLong crc = crc32(0, head + 4, 4);
    if (n) crc = crc32(crc, data, uInt(n));  // crc32(crc, NULL, 0) would return the initial value
    unsigned char tail[4] = {std::uint8_t(crc >> 24), std::uint8_t(crc >> 16), std::uint8_t(crc >> 8),
                             std::uint8_t(crc)};
    out.write(reinterpret_cast<char*>(head), 8);
    out.write(reinterpret_cast<const char*>(data), std::streamsize(n));
    out.write(reinterpret_cast<char*>(tail), 4);
  };
  out.write("\x89PNG\r\n\x1a\n", 8);
  std::uint8_t ihdr[13] = {};
  for (int i = 0; i < 4; ++i) {
    ihdr[i] = std::uint8_t(std::uint32_t(im.width) >> (24 - 8 * i));
    ihdr[4 + i] = std::uint8_t(std::uint32_t(im.height) >> (24 - 8 * i));
  }
  static const std::uint8_t types[] = {0, 0, 4, 2, 6};
  ihdr[8] = std::uint8_t(im.bit_depth);
  ihdr[9] = types[im.channels];
  chunk("IHDR", ihdr, 13);
  chunk("IDAT", z.data(), zn);
  chunk("IEND", nullptr, 0);
}
#endif

PngFilter our_filter(const std::string& f) {
  if (f == "none") return PngFilter::none;
  if (f == "sub") return PngFilter::sub;
  if (f == "up") return PngFilter::up;
  if (f == "average") return PngFilter::average;
  if (f == "paeth") return PngFilter::paeth;
  return PngFilter::adaptive;
}

void write_ours(const Image& im, const std::string& path, const PngWriteOptions& o, int band_rows) {
  PngRowWriter w(path, im.width, im.height, im.channels, im.bit_depth, o);
  for (int y = 0; y < im.height; y += band_rows) {
    const int n = std::min(band_rows, im.height - y);
    w.write_rows(im.samples.data() + std::size_t(y) * im.width * im.channels, n);
  }
  w.finish();
}

std::vector<Candidate> candidates() {
  std::vector<Candidate> list;
  const std::vector<std::string> filters = {"none", "sub", "up", "paeth", "adaptive"};
  list.push_back({"stb_image_write", "stb", 8, 1, {}, [](const Image& im, const std::string& p) { write_stb(im, p); },
                  true});
  for (int level : {1, 2, 3, 6})
    for (const auto& f : filters)
      list.push_back({"libpng", f, level, 1, {}, [level, f](const Image& im, const std::string& p) {
                        write_libpng(im, p, level, f);
                      }});
#ifdef PCASWEEP_BENCH_HAVE_SPNG
  for (int level : {1, 6})
    for (const std::string f : {"paeth", "adaptive"})
      list.push_back({"libspng", f, level, 1, {}, [level, f](const Image& im, const std::string& p) {
                        write_spng(im, p, level, f);
                      }});
#endif
#ifdef PCASWEEP_BENCH_HAVE_LIBDEFLATE
  for (int level : {1, 6})
    for (const std::string f : {"none", "paeth"})
      list.push_back({"libdeflate_whole", f, level, 1, {}, [level, f](const Image& im, const std::string& p) {
                        write_libdeflate(im, p, level, f);
                      }});
#endif
  auto ours = [&](int level, const std::string& f, int threads, PngStrategy strategy, std::size_t chunk,
                  int band_rows) {
    PngWriteOptions o;
    o.level = level;
    o.filter = our_filter(f);
    o.threads = threads;
    o.strategy = strategy;
    o.chunk_bytes = chunk;
    Candidate c{"ours", f, level, threads, {}, [o, band_rows](const Image& im, const std::string& p) {
                  write_ours(im, p, o, band_rows);
                }};
    c.extra = {{"strategy", strategy == PngStrategy::rle ? "rle" : strategy == PngStrategy::filtered ? "filtered" : "standard"},
               {"chunk_bytes", chunk},
               {"band_rows", band_rows}};
    list.push_back(c);
  };
  const std::size_t k256 = std::size_t(1) << 18;
  ours(0, "none", 1, PngStrategy::standard, k256, 64);
  for (int threads : {1, 2})
    for (int level : {1, 2, 3, 6})
      for (const auto& f : filters) ours(level, f, threads, PngStrategy::standard, k256, 64);
  // Z_FILTERED (what libpng uses for filtered rows) at the slower levels, where it matters
  // (zlib's deflate_slow, levels 4..9; levels 1..3 use deflate_fast, which ignores it).
  for (int level : {4, 6, 9})
    for (const std::string f : {"paeth", "adaptive"}) ours(level, f, 1, PngStrategy::filtered, k256, 64);
  // Z_RLE ignores the level (zlib's deflate_rle has no lazy-match parameters): level 1 stands for all.
  for (int threads : {1, 2})
    for (const std::string f : {"sub", "up", "paeth", "adaptive"}) ours(1, f, threads, PngStrategy::rle, k256, 64);
  for (std::size_t chunk : {std::size_t(1) << 16, std::size_t(1) << 19, std::size_t(1) << 20, std::size_t(1) << 22}) {
    ours(1, "paeth", 2, PngStrategy::standard, chunk, 64);
    ours(1, "paeth", 2, PngStrategy::rle, chunk, 64);
  }
  ours(1, "paeth", 2, PngStrategy::standard, k256, 1);  // one row per call
  ours(1, "paeth", 2, PngStrategy::rle, k256, 1);
  // Case (b): two images at once, one writer per thread inside a parallel region.
  for (int level : {1, 6}) {
    PngWriteOptions o;
    o.level = level;
    o.filter = PngFilter::paeth;
    Candidate c{"ours_one_writer_per_thread", "paeth", level, 2, {}, [o](const Image& im, const std::string& p) {
#pragma omp parallel for num_threads(2) schedule(static, 1)
                  for (int k = 0; k < 2; ++k) write_ours(im, p + (k ? ".b.png" : ""), o, 64);
                }};
    c.writers = 2;
    list.push_back(c);
  }
  return list;
}

// Reading: our libpng reader (streaming) against the previous path (whole file into a string,
// stb_image's own buffer, then the copy into the Image), peak RSS over the resident size before.
void measure_reads(const std::string& name, const Image& im, const fs::path& dir, int repeat) {
  const std::string path = (dir / (name + "-read.png")).string();
  write_png(path, im);
  const double image_mb = double(im.samples.size()) * sizeof(std::uint16_t) / 1e6;
  auto previous = [&] {
    const std::string bytes = read_file(path);  // what read_image did before
    const auto* data = reinterpret_cast<const stbi_uc*>(bytes.data());
    int w = 0, h = 0, c = 0;
    Image out;
    if (im.bit_depth == 16) {
      stbi_us* p = stbi_load_16_from_memory(data, int(bytes.size()), &w, &h, &c, 0);
      out = make_image(w, h, c, 16);
      std::copy(p, p + out.samples.size(), out.samples.begin());
      stbi_image_free(p);
    } else {
      stbi_uc* p = stbi_load_from_memory(data, int(bytes.size()), &w, &h, &c, 0);
      out = make_image(w, h, c, 8);
      std::copy(p, p + out.samples.size(), out.samples.begin());
      stbi_image_free(p);
    }
    return out;
  };
  for (const std::string reader : {"ours_libpng_rows", "previous_stb_whole_file"}) {
    std::vector<double> wall;
    long extra_kb = 0;
    bool same = false;
    for (int r = 0; r < repeat; ++r) {
      const long rss_before = status_kb("VmRSS:");
      reset_peak_rss();
      const auto t0 = Clock::now();
      const Image back = reader == "ours_libpng_rows" ? read_image(path) : previous();
      wall.push_back(std::chrono::duration<double>(Clock::now() - t0).count());
      extra_kb = std::max(extra_kb, status_kb("VmHWM:") - rss_before);
      same = back.samples == im.samples;
    }
    std::sort(wall.begin(), wall.end());
    std::cout << nlohmann::json({{"mode", "png_read"},
                                 {"image", name},
                                 {"reader", reader},
                                 {"file_bytes", fs::file_size(path)},
                                 {"seconds", wall[wall.size() / 2]},
                                 {"seconds_min", wall.front()},
                                 {"extra_peak_rss_kb", extra_kb},
                                 {"image_kb", long(image_mb * 1e3)},
                                 {"load_average", load_average()},
                                 {"same_samples", same}})
                     .dump()
              << std::endl;
  }
  fs::remove(path);
}

}  // namespace

int mode_png(const std::map<std::string, std::string>& named) {
  auto get = [&](const std::string& k, const std::string& d) {
    auto it = named.find(k);
    return it == named.end() ? d : it->second;
  };
  const int width = std::stoi(get("width", "6000")), height = std::stoi(get("height", "4000"));
  const int repeat = std::stoi(get("repeat", "1"));
  const std::string only = get("only", "");
  const std::string images_arg = get("images", "photo8,photo16,blocky8");
  const fs::path out_dir = get("out", (fs::temp_directory_path() / "pcasweep-png-bench").string());
  fs::create_directories(out_dir);

  const std::vector<float> s = scene(width, height, 20261202);
  std::map<std::string, Image> images;
  auto wants = [&](const std::string& name) { return ("," + images_arg + ",").find("," + name + ",") != std::string::npos; };
  if (wants("photo8") || wants("blocky8")) images["photo8"] = quantise(s, width, height, 8, 2.0f, 1);
  if (wants("photo16")) images["photo16"] = quantise(s, width, height, 16, 2.0f * 257.f, 2);
  if (wants("blocky8")) images["blocky8"] = block_blur(images["photo8"]);
  if (!wants("photo8")) images.erase("photo8");

  for (const auto& [name, im] : images) {
    const double raw_mb = double(im.samples.size()) * (im.bit_depth / 8) / 1e6;
    for (const Candidate& c : candidates()) {
      if (c.eight_bit_only && im.bit_depth != 8) continue;
      const std::string label = c.encoder + " " + c.filter + " L" + std::to_string(c.level) + " T" +
                                std::to_string(c.threads) + " " + c.extra.dump();
      if (!only.empty() && label.find(only) == std::string::npos) continue;
      const std::string path = (out_dir / (name + ".png")).string();
      const double load = load_average();
      std::vector<double> wall, cpu;
      long extra_kb = 0;
      for (int r = 0; r < repeat; ++r) {
        const ThreadGuard threads({.openmp = c.threads});
        const long rss_before = status_kb("VmRSS:");
        reset_peak_rss();
        const double c0 = cpu_seconds();
        const auto t0 = Clock::now();
        c.write(im, path);
        wall.push_back(std::chrono::duration<double>(Clock::now() - t0).count());
        cpu.push_back(cpu_seconds() - c0);
        extra_kb = std::max(extra_kb, status_kb("VmHWM:") - rss_before);
      }
      const std::uintmax_t bytes = fs::file_size(path);
      bool same = false;
      try {
        const Image back = read_image(path);
        same = back.width == im.width && back.height == im.height && back.channels == im.channels &&
               back.bit_depth == im.bit_depth && back.samples == im.samples;
      } catch (const Error& e) {
        std::cerr << label << ": " << e.what() << "\n";
      }
      std::sort(wall.begin(), wall.end());
      std::sort(cpu.begin(), cpu.end());
      const double seconds = wall[wall.size() / 2];
      nlohmann::json j = {{"mode", "png"},
                          {"image", name},
                          {"width", im.width},
                          {"height", im.height},
                          {"bit_depth", im.bit_depth},
                          {"encoder", c.encoder},
                          {"filter", c.filter},
                          {"level", c.level},
                          {"threads", c.threads},
                          {"writers", c.writers},
                          {"seconds", seconds},
                          {"seconds_min", wall.front()},
                          {"cpu_seconds", cpu[cpu.size() / 2]},
                          {"cpu_seconds_min", cpu.front()},
                          {"mb_per_s", c.writers * raw_mb / seconds},
                          {"bytes", bytes},
                          {"ratio", double(bytes) / (raw_mb * 1e6)},
                          {"extra_peak_rss_kb", extra_kb},
                          {"load_average", load},
                          {"roundtrip", same}};
      if (c.extra.is_object()) j.update(c.extra);
      std::cout << j.dump() << std::endl;
      fs::remove(path);
      fs::remove(path + ".b.png");
    }
    if (get("read", "1") == "1") measure_reads(name, im, out_dir, repeat);
  }
  return 0;
}

}  // namespace pcasweep::bench
