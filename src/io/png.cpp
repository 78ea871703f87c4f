#include "io/png.hpp"

#include <png.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zlib.h>

#include <algorithm>
#include <bit>
#include <cerrno>
#include <csetjmp>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <functional>
#include <limits>
#include <vector>

#include <omp.h>

#include "core/error.hpp"

namespace pcasweep {

namespace {

constexpr unsigned char kSignature[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};

void put_be32(unsigned char* p, std::uint32_t v) {
  p[0] = static_cast<unsigned char>(v >> 24);
  p[1] = static_cast<unsigned char>(v >> 16);
  p[2] = static_cast<unsigned char>(v >> 8);
  p[3] = static_cast<unsigned char>(v);
}

// --- Filters (ISO/IEC 15948 §9.2). Encoding reads only unfiltered bytes, so every byte of a row
// is independent of the others and the loops vectorise. `raw` and `prior` are row_bytes long
// (prior is all zeros for the first row), `bpp` the bytes per complete pixel (at least 1).

void filter_sub(const std::uint8_t* raw, std::size_t n, std::size_t bpp, std::uint8_t* out) {
  for (std::size_t i = 0; i < bpp && i < n; ++i) out[i] = raw[i];
  for (std::size_t i = bpp; i < n; ++i) out[i] = std::uint8_t(raw[i] - raw[i - bpp]);
}

void filter_up(const std::uint8_t* raw, const std::uint8_t* prior, std::size_t n, std::uint8_t* out) {
  for (std::size_t i = 0; i < n; ++i) out[i] = std::uint8_t(raw[i] - prior[i]);
}

void filter_average(const std::uint8_t* raw, const std::uint8_t* prior, std::size_t n, std::size_t bpp,
                    std::uint8_t* out) {
  for (std::size_t i = 0; i < bpp && i < n; ++i) out[i] = std::uint8_t(raw[i] - (prior[i] >> 1));
  for (std::size_t i = bpp; i < n; ++i) out[i] = std::uint8_t(raw[i] - ((unsigned(raw[i - bpp]) + prior[i]) >> 1));
}

inline int paeth_predictor(int a, int b, int c) {
  // §9.4: p = a + b − c; the nearest of a, b, c to p, ties in the order a, b, c.
  const int pa = std::abs(b - c), pb = std::abs(a - c), pc = std::abs(a + b - 2 * c);
  return (pa <= pb && pa <= pc) ? a : (pb <= pc ? b : c);
}

void filter_paeth(const std::uint8_t* raw, const std::uint8_t* prior, std::size_t n, std::size_t bpp,
                  std::uint8_t* out) {
  for (std::size_t i = 0; i < bpp && i < n; ++i) out[i] = std::uint8_t(raw[i] - prior[i]);  // a = c = 0
  for (std::size_t i = bpp; i < n; ++i)
    out[i] = std::uint8_t(raw[i] - paeth_predictor(raw[i - bpp], prior[i], prior[i - bpp]));
}

// Sum of the filtered bytes taken as signed magnitudes (§12.8 heuristic).
std::uint64_t signed_magnitude_sum(const std::uint8_t* v, std::size_t n) {
  std::uint64_t s = 0;
  for (std::size_t i = 0; i < n; ++i) s += v[i] < 128 ? v[i] : 256 - v[i];
  return s;
}

// Filters one row into out[0] (the filter type byte) and out[1..n]. `scratch` holds n bytes
// (used by the adaptive choice only).
void filter_row(PngFilter filter, const std::uint8_t* raw, const std::uint8_t* prior, std::size_t n,
                std::size_t bpp, std::uint8_t* out, std::uint8_t* scratch) {
  switch (filter) {
    case PngFilter::none: out[0] = 0; std::memcpy(out + 1, raw, n); return;
    case PngFilter::sub: out[0] = 1; filter_sub(raw, n, bpp, out + 1); return;
    case PngFilter::up: out[0] = 2; filter_up(raw, prior, n, out + 1); return;
    case PngFilter::average: out[0] = 3; filter_average(raw, prior, n, bpp, out + 1); return;
    case PngFilter::paeth: out[0] = 4; filter_paeth(raw, prior, n, bpp, out + 1); return;
    case PngFilter::adaptive: break;
  }
  // Try each filter into scratch, keep the smallest sum in out.
  std::uint64_t best = signed_magnitude_sum(raw, n);
  out[0] = 0;
  std::memcpy(out + 1, raw, n);
  for (int type = 1; type <= 4; ++type) {
    switch (type) {
      case 1: filter_sub(raw, n, bpp, scratch); break;
      case 2: filter_up(raw, prior, n, scratch); break;
      case 3: filter_average(raw, prior, n, bpp, scratch); break;
      default: filter_paeth(raw, prior, n, bpp, scratch); break;
    }
    const std::uint64_t s = signed_magnitude_sum(scratch, n);
    if (s < best) {
      best = s;
      out[0] = std::uint8_t(type);
      std::memcpy(out + 1, scratch, n);
    }
  }
}

int zlib_strategy(PngStrategy s, int level) {
  switch (s) {
    case PngStrategy::automatic: return level == 1 ? Z_RLE : Z_DEFAULT_STRATEGY;
    case PngStrategy::rle: return Z_RLE;
    case PngStrategy::filtered: return Z_FILTERED;
    case PngStrategy::standard: break;
  }
  return Z_DEFAULT_STRATEGY;
}

void check_options(const PngWriteOptions& o) {
  if (o.level < 0 || o.level > 9) {
    throw usage_error("PNG compression level must be 0..9 (0 stores, 1 fastest, 9 smallest), not " +
                      std::to_string(o.level));
  }
  if (o.threads < 0) throw usage_error("PNG writer threads must be >= 0, not " + std::to_string(o.threads));
  if (o.chunk_bytes < 1) throw usage_error("PNG writer chunk size must be at least 1 byte");
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// The encoder: stages converted rows, compresses full batches of groups in parallel, hands the
// framed bytes to `sink` in order.
class PngRowWriter::Encoder {
 public:
  using Sink = std::function<void(const unsigned char*, std::size_t)>;

  Encoder(const std::string& name, int width, int height, int channels, int bit_depth,
          const PngWriteOptions& options, Sink sink)
      : name_(name), width_(width), height_(height), channels_(channels), bit_depth_(bit_depth),
        options_(options), sink_(std::move(sink)) {
    check_options(options);
    if (width < 1 || height < 1) {
      throw data_error(name + ": cannot write a PNG of " + std::to_string(width) + "x" + std::to_string(height) +
                       " pixels");
    }
    if (channels < 1 || channels > 4) {
      throw data_error(name + ": PNG stores 1 to 4 channels, not " + std::to_string(channels));
    }
    if (bit_depth != 8 && bit_depth != 16) {
      throw data_error(name + ": PNG is written at 8 or 16 bits per sample, not " + std::to_string(bit_depth));
    }
    bytes_per_sample_ = bit_depth / 8;
    bpp_ = std::size_t(channels) * bytes_per_sample_;
    row_samples_ = std::size_t(width) * channels;
    row_bytes_ = row_samples_ * bytes_per_sample_;
    group_rows_ = std::max<std::size_t>(1, options.chunk_bytes / (row_bytes_ + 1));
    group_rows_ = std::min<std::size_t>(group_rows_, std::size_t(height));
    const int available = omp_in_parallel() ? 1 : omp_get_max_threads();
    int threads = options.threads > 0 ? std::min(options.threads, available) : available;
    // No more groups per batch than the image has.
    const std::size_t groups_in_image = (std::size_t(height) + group_rows_ - 1) / group_rows_;
    groups_ = std::max<std::size_t>(1, std::min<std::size_t>(std::size_t(threads), groups_in_image));
    batch_rows_ = groups_ * group_rows_;
    staging_.assign((batch_rows_ + 1) * row_bytes_, 0);  // slot 0: the previous row (zeros at the top)
    group_ = std::make_unique<Group[]>(groups_);
    const std::size_t group_in = group_rows_ * (row_bytes_ + 1);
    for (std::size_t k = 0; k < groups_; ++k) {
      Group& g = group_[k];
      std::memset(&g.z, 0, sizeof g.z);
      if (deflateInit2(&g.z, options.level, Z_DEFLATED, -15, 8, zlib_strategy(options.strategy, options.level)) != Z_OK) {
        throw data_error(name + ": cannot start the deflate compressor");
      }
      g.initialised = true;
      g.filtered.resize(group_in);
      g.scratch.resize(options.filter == PngFilter::adaptive ? row_bytes_ : 0);
      // deflateBound covers a complete stream; a sync flush adds an empty stored block (5 bytes)
      // and at most a byte of padding.
      g.out.resize(deflateBound(&g.z, uLong(std::min<std::size_t>(group_in, std::numeric_limits<uLong>::max()))) +
                   64);
    }
    write_header();
  }


  int rows_written() const { return rows_in_; }

  void write_rows(const std::uint16_t* samples, int rows) {
    if (rows < 0) throw data_error(name_ + ": cannot write a negative number of rows");
    if (rows > height_ - rows_in_) {
      throw data_error(name_ + ": " + std::to_string(rows_in_ + std::int64_t(rows)) +
                       " rows handed to a PNG of height " + std::to_string(height_));
    }
    for (int r = 0; r < rows; ++r) {
      stage_row(samples + std::size_t(r) * row_samples_);
      ++rows_in_;
      // A full batch is compressed now unless it holds the last row: the last batch is
      // compressed by finish(), which ends the stream.
      if (staged_ == batch_rows_ && rows_in_ < height_) flush(false);
    }
  }

  void finish() {
    if (rows_in_ != height_) {
      throw data_error(name_ + ": PNG finished after " + std::to_string(rows_in_) + " of " +
                       std::to_string(height_) + " rows");
    }
    flush(true);
    unsigned char iend[12];
    put_be32(iend, 0);
    std::memcpy(iend + 4, "IEND", 4);
    put_be32(iend + 8, std::uint32_t(crc32(0, iend + 4, 4)));
    sink_(iend, 12);
  }

 private:
  // One group's state. Never moved: zlib's state points back at its z_stream.
  struct Group {
    Group() = default;
    Group(const Group&) = delete;
    Group& operator=(const Group&) = delete;
    ~Group() {
      if (initialised) deflateEnd(&z);
    }
    z_stream z{};
    bool initialised = false;
    std::vector<std::uint8_t> filtered, scratch, out;
    std::size_t filtered_size = 0, out_size = 0;
    uLong adler = 1;
    int status = Z_OK;
  };

  void write_header() {
    unsigned char head[8 + 25];
    std::memcpy(head, kSignature, 8);
    unsigned char* ihdr = head + 8;
    put_be32(ihdr, 13);
    std::memcpy(ihdr + 4, "IHDR", 4);
    put_be32(ihdr + 8, std::uint32_t(width_));
    put_be32(ihdr + 12, std::uint32_t(height_));
    static const unsigned char colour_types[] = {0, 0, 4, 2, 6};  // gray, gray+alpha, RGB, RGBA
    ihdr[16] = std::uint8_t(bit_depth_);
    ihdr[17] = colour_types[channels_];
    ihdr[18] = 0;  // deflate
    ihdr[19] = 0;  // adaptive filtering (per-row filter types)
    ihdr[20] = 0;  // not interlaced
    put_be32(ihdr + 21, std::uint32_t(crc32(0, ihdr + 4, 17)));
    sink_(head, sizeof head);
  }

  // Converts one row of samples into staging slot staged_+1 (PNG byte order: 16-bit big-endian).
  void stage_row(const std::uint16_t* s) {
    std::uint8_t* dst = staging_.data() + (staged_ + 1) * row_bytes_;
    if (bit_depth_ == 8) {
      unsigned high = 0;
      for (std::size_t i = 0; i < row_samples_; ++i) {
        high |= s[i];
        dst[i] = std::uint8_t(s[i]);
      }
      if (high > 255) {
        throw data_error(name_ + ": sample value above 255 in row " + std::to_string(rows_in_) +
                         " of an 8-bit PNG");
      }
    } else {
      for (std::size_t i = 0; i < row_samples_; ++i) {
        dst[2 * i] = std::uint8_t(s[i] >> 8);
        dst[2 * i + 1] = std::uint8_t(s[i]);
      }
    }
    ++staged_;
  }

  // Filters and compresses the staged rows, one group of group_rows_ rows per task, then writes
  // them in order as IDAT chunks. `final`: this batch ends the image (the last group is
  // finished with Z_FINISH and the Adler-32 follows it).
  void flush(bool final) {
    const std::size_t ngroups = (staged_ + group_rows_ - 1) / group_rows_;
    const bool parallel = ngroups > 1 && !omp_in_parallel();
#pragma omp parallel for schedule(static, 1) num_threads(int(ngroups)) if (parallel)
    for (std::size_t k = 0; k < ngroups; ++k) compress_group(k, std::min(group_rows_, staged_ - k * group_rows_),
                                                             final && k + 1 == ngroups);
    for (std::size_t k = 0; k < ngroups; ++k) {
      if (group_[k].status != Z_OK) {
        throw data_error(name_ + ": deflate failed (zlib status " + std::to_string(group_[k].status) + ")");
      }
    }
    for (std::size_t k = 0; k < ngroups; ++k) {
      Group& g = group_[k];
      adler_ = adler32_combine(adler_, g.adler, z_off_t(g.filtered_size));
      unsigned char zlib_header[2];
      std::size_t header_size = 0;
      if (!header_written_) {
        // RFC 1950 §2.2: CMF 0x78 (deflate, 32 KiB window); FLEVEL as zlib sets it; FCHECK makes
        // CMF·256 + FLG a multiple of 31.
        const unsigned flevel = options_.level < 2 ? 0 : options_.level < 6 ? 1 : options_.level == 6 ? 2 : 3;
        unsigned header = (0x78u << 8) | (flevel << 6);
        header += 31 - header % 31;
        zlib_header[0] = std::uint8_t(header >> 8);
        zlib_header[1] = std::uint8_t(header);
        header_size = 2;
        header_written_ = true;
      }
      unsigned char trailer[4];
      const bool last = final && k + 1 == ngroups;
      if (last) put_be32(trailer, std::uint32_t(adler_));
      write_idat(zlib_header, header_size, g.out.data(), g.out_size, trailer, last ? 4 : 0);
    }
    // Keep the last staged row as the previous row of the next batch.
    if (staged_ > 0 && !final) {
      std::memcpy(staging_.data(), staging_.data() + staged_ * row_bytes_, row_bytes_);
    }
    staged_ = 0;
  }

  // Runs inside the parallel loop: no exceptions, no allocation; the result is in group_[k].
  void compress_group(std::size_t k, std::size_t rows, bool last) {
    Group& g = group_[k];
    const std::uint8_t* first = staging_.data() + (k * group_rows_ + 1) * row_bytes_;
    std::uint8_t* out = g.filtered.data();
    for (std::size_t r = 0; r < rows; ++r) {
      const std::uint8_t* raw = first + r * row_bytes_;
      filter_row(options_.filter, raw, raw - row_bytes_, row_bytes_, bpp_, out + r * (row_bytes_ + 1),
                 g.scratch.data());
    }
    g.filtered_size = rows * (row_bytes_ + 1);
    g.adler = adler32_z(1, g.filtered.data(), g.filtered_size);
    g.status = deflateReset(&g.z);
    if (g.status != Z_OK) return;
    g.z.next_out = g.out.data();
    g.z.avail_out = uInt(g.out.size());
    const std::uint8_t* in = g.filtered.data();
    std::size_t left = g.filtered_size;
    const std::size_t piece = std::size_t(1) << 30;  // avail_in is 32-bit
    for (;;) {
      const std::size_t now = std::min(left, piece);
      g.z.next_in = const_cast<Bytef*>(in);
      g.z.avail_in = uInt(now);
      in += now;
      left -= now;
      const int flush = left > 0 ? Z_NO_FLUSH : last ? Z_FINISH : Z_SYNC_FLUSH;
      const int rc = deflate(&g.z, flush);
      if (flush == Z_FINISH ? rc != Z_STREAM_END : (rc != Z_OK || g.z.avail_in != 0 || g.z.avail_out == 0)) {
        g.status = rc == Z_OK ? Z_BUF_ERROR : rc;  // out of room cannot happen: the buffer exceeds deflateBound
        return;
      }
      if (left == 0) break;
    }
    g.out_size = g.out.size() - g.z.avail_out;
    g.status = Z_OK;
  }

  // One IDAT chunk (several if the data passes 1 GiB) of prefix + data + suffix.
  void write_idat(const unsigned char* prefix, std::size_t prefix_size, const unsigned char* data,
                  std::size_t size, const unsigned char* suffix, std::size_t suffix_size) {
    const std::size_t max_chunk = std::size_t(1) << 30;  // the format allows 2^31 − 1
    bool first = true;
    while (first || size > 0) {
      const std::size_t body = std::min(size, max_chunk);
      const std::size_t pre = first ? prefix_size : 0;
      const std::size_t post = body == size ? suffix_size : 0;
      unsigned char head[8];
      put_be32(head, std::uint32_t(pre + body + post));
      std::memcpy(head + 4, "IDAT", 4);
      uLong crc = crc32(0, head + 4, 4);
      if (pre) crc = crc32(crc, prefix, uInt(pre));
      crc = crc32_z(crc, data, body);
      if (post) crc = crc32(crc, suffix, uInt(post));
      unsigned char tail[4];
      put_be32(tail, std::uint32_t(crc));
      sink_(head, 8);
      if (pre) sink_(prefix, pre);
      if (body) sink_(data, body);
      if (post) sink_(suffix, post);
      sink_(tail, 4);
      data += body;
      size -= body;
      first = false;
    }
  }

  std::string name_;
  int width_, height_, channels_, bit_depth_;
  PngWriteOptions options_;
  Sink sink_;
  std::size_t bytes_per_sample_ = 1, bpp_ = 1, row_samples_ = 0, row_bytes_ = 0;
  std::size_t group_rows_ = 1, groups_ = 1, batch_rows_ = 1, staged_ = 0;
  int rows_in_ = 0;
  std::vector<std::uint8_t> staging_;
  std::unique_ptr<Group[]> group_;
  uLong adler_ = 1;
  bool header_written_ = false;
};

// ---------------------------------------------------------------------------------------------
// PngRowWriter: the encoder over a temporary file.

PngRowWriter::PngRowWriter(const std::string& path, int width, int height, int channels, int bit_depth,
                           const PngWriteOptions& options)
    : path_(path) {
  check_options(options);
  file_ = std::make_unique<AtomicFile>(path);  // throws "<path>: cannot create a temporary file beside it"
  encoder_ = std::make_unique<Encoder>(path, width, height, channels, bit_depth, options,
                                       [this](const unsigned char* p, std::size_t n) {
                                         if (write_error_) return;
                                         try {
                                           file_->write(p, n);
                                         } catch (...) {
                                           write_error_ = std::current_exception();
                                         }
                                       });
}

// The AtomicFile removes the temporary unless finish() committed it.
PngRowWriter::~PngRowWriter() = default;

int PngRowWriter::rows_written() const { return encoder_->rows_written(); }

void PngRowWriter::write_rows(const std::uint16_t* samples, int rows) {
  if (finished_) throw data_error(path_ + ": rows written to a PNG writer after finish()");
  encoder_->write_rows(samples, rows);
  if (write_error_) std::rethrow_exception(write_error_);
}

void PngRowWriter::finish() {
  if (finished_) throw data_error(path_ + ": PNG writer finished twice");
  if (!file_) throw data_error(path_ + ": PNG writer failed earlier; nothing was written");
  encoder_->finish();
  std::unique_ptr<AtomicFile> file = std::move(file_);  // removed on any failure below
  if (write_error_) std::rethrow_exception(write_error_);
  file->commit();
  finished_ = true;
}

std::string encode_png(const Image& image, const PngWriteOptions& options) {
  std::string out;
  const std::size_t expected = std::size_t(std::max(image.width, 0)) * std::max(image.height, 0) *
                               std::max(image.channels, 0);
  if (image.samples.size() != expected) {
    throw data_error("png: the image holds " + std::to_string(image.samples.size()) + " samples, not " +
                     std::to_string(image.width) + "x" + std::to_string(image.height) + "x" +
                     std::to_string(image.channels));
  }
  PngRowWriter::Encoder encoder("png", image.width, image.height, image.channels, image.bit_depth, options,
                                [&out](const unsigned char* p, std::size_t n) {
                                  out.append(reinterpret_cast<const char*>(p), n);
                                });
  encoder.write_rows(image.samples.data(), image.height);
  encoder.finish();
  return out;
}

void write_png(const std::string& path, const Image& image, const PngWriteOptions& options) {
  const std::size_t expected = std::size_t(std::max(image.width, 0)) * std::max(image.height, 0) *
                               std::max(image.channels, 0);
  if (image.samples.size() != expected) throw data_error(path + ": the image's samples do not match its size");
  PngRowWriter writer(path, image.width, image.height, image.channels, image.bit_depth, options);
  writer.write_rows(image.samples.data(), image.height);
  writer.finish();
}

bool has_png_signature(const void* data, std::size_t size) {
  return size >= 8 && std::memcmp(data, kSignature, 8) == 0;
}

// ---------------------------------------------------------------------------------------------
// Reading through libpng.

namespace {

struct ReadSource {
  std::FILE* file = nullptr;                 // either a file ...
  const unsigned char* data = nullptr;       // ... or bytes in memory
  std::size_t size = 0, pos = 0;
  bool truncated = false, read_failed = false;
};

struct ReadJob {
  ReadSource source;
  std::uint64_t file_bytes = 0;
  std::string name;
  ImageReadOptions options;
  png_structp png = nullptr;
  png_infop info = nullptr;
  char message[256] = {0};
  char stream_warning[256] = {0};      // the first warning about the image data stream, if any
  Image image;
  std::vector<std::uint8_t> row;       // one decoded row, when alpha is dropped while reading
  std::vector<png_bytep> row_pointers; // interlaced files only
  ~ReadJob() {
    if (png) png_destroy_read_struct(&png, info ? &info : nullptr, nullptr);
  }
};

void png_read_callback(png_structp png, png_bytep out, png_size_t length) {
  auto* src = static_cast<ReadSource*>(png_get_io_ptr(png));
  if (src->file) {
    const std::size_t got = std::fread(out, 1, length, src->file);
    if (got != length) {
      if (std::ferror(src->file)) {
        src->read_failed = true;
        png_error(png, "read error");
      }
      src->truncated = true;
      png_error(png, "the file ends early");
    }
    return;
  }
  if (src->size - src->pos < length) {
    src->truncated = true;
    png_error(png, "the file ends early");
  }
  std::memcpy(out, src->data + src->pos, length);
  src->pos += length;
}

void png_error_callback(png_structp png, png_const_charp message) {
  auto* job = static_cast<ReadJob*>(png_get_error_ptr(png));
  std::snprintf(job->message, sizeof job->message, "%s", message ? message : "libpng error");
  png_longjmp(png, 1);
}

// libpng reports some damage to the image data only as a "benign error", which a read struct
// turns into a warning by default: an Adler-32 that does not match the inflated data, compressed
// data after the end of the zlib stream, more IDAT data than the rows need (libpng 1.6,
// png_read_IDAT_data and png_read_finish_IDAT). Those warnings name the IDAT chunk; they are
// kept and make the read fail once libpng is done. Other warnings (ancillary chunks such as an
// odd iCCP profile) are ignored, as stb_image did.
void png_warning_callback(png_structp png, png_const_charp message) {
  auto* job = static_cast<ReadJob*>(png_get_error_ptr(png));
  const char* text = message ? message : "";
  const bool stream = std::strstr(text, "IDAT") != nullptr || std::strstr(text, "compressed data") != nullptr ||
                      std::strstr(text, "image data") != nullptr || std::strstr(text, "CRC") != nullptr;
  if (stream && job->stream_warning[0] == 0) std::snprintf(job->stream_warning, sizeof job->stream_warning, "%s", text);
}

// Widens n 8-bit samples stored at the start of `row` to uint16 in place (from the end, so no
// byte is overwritten before it is read).
void widen_in_place(std::uint16_t* row, std::size_t n) {
  const auto* bytes = reinterpret_cast<const std::uint8_t*>(row);
  std::uint8_t block[4096];
  std::size_t end = n;
  while (end > 0) {
    const std::size_t start = end > sizeof block ? end - sizeof block : 0;
    std::memcpy(block, bytes + start, end - start);
    for (std::size_t i = start; i < end; ++i) row[i] = block[i - start];
    end = start;
  }
}

// Removes the last channel of each pixel: `from` channels → from − 1, in place, `pixels` pixels.
void drop_last_channel(std::uint16_t* samples, std::size_t pixels, int from) {
  for (std::size_t p = 0, q = 0; p < pixels; ++p)
    for (int c = 0; c + 1 < from; ++c) samples[q++] = samples[p * from + c];
}

// Bytes the IDAT stream inflates to: one filter byte per row of each pass
// (PNG §7.2, §8.2), Adam7's seven passes when interlaced. Pure arithmetic.
std::uint64_t filtered_size(std::uint64_t width, std::uint64_t height, std::uint64_t bits_per_pixel, int interlace) {
  if (interlace != PNG_INTERLACE_ADAM7) return height * (1 + (width * bits_per_pixel + 7) / 8);
  std::uint64_t filtered = 0;
  for (int pass = 0; pass < 7; ++pass) {
    const std::uint64_t cols = PNG_PASS_COLS(width, pass);
    const std::uint64_t rows = PNG_PASS_ROWS(height, pass);
    if (cols && rows) filtered += rows * (1 + (cols * bits_per_pixel + 7) / 8);
  }
  return filtered;
}

// The row readers below run inside run_libpng's setjmp frame and libpng may
// longjmp out of them: like it, they hold no object with a destructor.

// Adam7: libpng needs the whole image at once. Reads all `channels` into
// image.samples (sized for them), widens 8-bit samples, then drops the last
// channel when `drop`.
void read_interlaced(ReadJob* job, png_structp png, png_uint_32 width, png_uint_32 height, int channels,
                     int out_depth, bool drop) {
  Image& image = job->image;
  const std::size_t dst_row = std::size_t(width) * image.channels;
  job->row_pointers.resize(height);
  for (png_uint_32 y = 0; y < height; ++y)
    job->row_pointers[y] = reinterpret_cast<png_bytep>(image.samples.data() + std::size_t(y) * dst_row);
  png_read_image(png, job->row_pointers.data());
  if (out_depth == 8)
    for (png_uint_32 y = 0; y < height; ++y) widen_in_place(image.samples.data() + std::size_t(y) * dst_row, dst_row);
  if (drop) {
    const int kept = channels - 1;
    drop_last_channel(image.samples.data(), std::size_t(width) * height, channels);
    image.samples.resize(std::size_t(width) * height * kept);
    image.samples.shrink_to_fit();
    image.channels = kept;
  }
}

// Row by row straight into image.samples, widening 8-bit samples in place.
void read_rows(ReadJob* job, png_structp png, png_uint_32 width, png_uint_32 height, int out_depth) {
  Image& image = job->image;
  const std::size_t dst_row = std::size_t(width) * image.channels;
  for (png_uint_32 y = 0; y < height; ++y) {
    std::uint16_t* dst = image.samples.data() + std::size_t(y) * dst_row;
    png_read_row(png, reinterpret_cast<png_bytep>(dst), nullptr);
    if (out_depth == 8) widen_in_place(dst, dst_row);
  }
}

// Row by row through job->row (`row_bytes`), keeping all channels but the last (alpha).
void read_rows_dropping_alpha(ReadJob* job, png_structp png, png_uint_32 width, png_uint_32 height, int channels,
                              int out_depth, std::size_t row_bytes) {
  Image& image = job->image;
  const int kept = channels - 1;
  const std::size_t dst_row = std::size_t(width) * kept;
  job->row.resize(row_bytes);
  for (png_uint_32 y = 0; y < height; ++y) {
    png_read_row(png, job->row.data(), nullptr);
    std::uint16_t* dst = image.samples.data() + std::size_t(y) * dst_row;
    const std::uint8_t* src = job->row.data();
    for (std::size_t x = 0; x < width; ++x) {
      for (int c = 0; c < kept; ++c) {
        const std::size_t i = x * channels + c;
        if (out_depth == 8) {
          dst[x * kept + c] = src[i];
        } else {
          std::uint16_t v;
          std::memcpy(&v, src + 2 * i, 2);
          dst[x * kept + c] = v;
        }
      }
    }
  }
}

// All libpng work. No object with a destructor lives in this frame, and nothing read after a
// longjmp was changed after setjmp except through `job` (a pointer set before): setjmp/longjmp
// rules of C and [csetjmp.syn]. Returns false on a libpng error (message in job->message);
// throws Error for our own checks.
bool run_libpng(ReadJob* job) {
  if (setjmp(png_jmpbuf(job->png))) return false;
  png_structp png = job->png;
  png_infop info = job->info;
  png_set_read_fn(png, &job->source, png_read_callback);
  // A CRC error is an error in every chunk, ancillary ones included (libpng's default only warns
  // and skips an ancillary chunk whose CRC is wrong): a file damaged anywhere is refused.
  png_set_crc_action(png, PNG_CRC_ERROR_QUIT, PNG_CRC_ERROR_QUIT);
  // Our own guard decides about size (max_pixels); libpng's default limits (1e6 per side) would
  // refuse some legitimate panoramas. The format's maximum is 2^31 − 1 per side.
  png_set_user_limits(png, 0x7fffffff, 0x7fffffff);
  png_read_info(png, info);

  const png_uint_32 width = png_get_image_width(png, info), height = png_get_image_height(png, info);
  const int depth = png_get_bit_depth(png, info), colour = png_get_color_type(png, info);
  const int interlace = png_get_interlace_type(png, info);
  const int file_channels = png_get_channels(png, info);  // palette: 1 (the index)

  // Size guard from IHDR, before any allocation. Plausibility: the zlib stream of the IDAT
  // chunks inflates to exactly filtered_size() bytes. Deflate (RFC 1951) expands at most
  // 1032:1: its densest code is a 258-byte match (length code 285) with a one-bit literal/length
  // code and a one-bit distance code in a dynamic block, 258 bytes per 2 bits; block headers only
  // add bits. So the file needs at least filtered/1032 bytes (the whole file is counted, generously).
  const std::uint64_t filtered =
      filtered_size(width, height, std::uint64_t(file_channels) * std::uint64_t(depth), interlace);
  guard_declared_size(job->name, width, height, job->options.max_pixels, double(filtered) / 1032.0,
                      job->file_bytes, "deflate's largest expansion, 1032:1 (RFC 1951)");

  // stb_image's channel behaviour.
  if (colour == PNG_COLOR_TYPE_PALETTE) png_set_palette_to_rgb(png);
  if (colour == PNG_COLOR_TYPE_GRAY && depth < 8) png_set_expand_gray_1_2_4_to_8(png);
  if (png_get_valid(png, info, PNG_INFO_tRNS)) png_set_tRNS_to_alpha(png);
  if (depth == 16 && std::endian::native == std::endian::little) png_set_swap(png);
  const int passes = png_set_interlace_handling(png);
  png_read_update_info(png, info);

  const int channels = png_get_channels(png, info), out_depth = png_get_bit_depth(png, info);
  const std::size_t row_samples = std::size_t(width) * channels;
  if (channels < 1 || channels > 4 || (out_depth != 8 && out_depth != 16) ||
      png_get_rowbytes(png, info) != row_samples * (out_depth / 8)) {
    std::snprintf(job->message, sizeof job->message, "unexpected layout after libpng's transformations");
    return false;
  }
  if (std::size_t(height) * row_samples > kMaxImageSamples) {
    throw data_error(job->name + ": image too large (" + std::to_string(width) + "x" + std::to_string(height) +
                     ")");
  }
  const bool drop = job->options.drop_alpha && (channels == 2 || channels == 4);
  Image& image = job->image;
  image.width = int(width);
  image.height = int(height);
  image.bit_depth = out_depth;
  const bool whole = passes > 1;  // Adam7: libpng needs the whole image
  image.channels = whole || !drop ? channels : channels - 1;
  image.samples.resize(std::size_t(height) * width * image.channels);
  if (whole) read_interlaced(job, png, width, height, channels, out_depth, drop);
  else if (!drop) read_rows(job, png, width, height, out_depth);
  else read_rows_dropping_alpha(job, png, width, height, channels, out_depth, png_get_rowbytes(png, info));
  // The rest of the stream: the end of the zlib data (Adler-32), the remaining chunks with their
  // CRCs, IEND.
  png_read_end(png, nullptr);
  image.alpha_dropped = drop;
  if (job->stream_warning[0] != 0) {
    std::snprintf(job->message, sizeof job->message, "%s", job->stream_warning);
    return false;
  }
  return true;
}

Image read_png_job(ReadJob& job) {
  job.png = png_create_read_struct(PNG_LIBPNG_VER_STRING, &job, png_error_callback, png_warning_callback);
  if (!job.png) throw data_error(job.name + ": cannot start the PNG reader");
  job.info = png_create_info_struct(job.png);
  if (!job.info) throw data_error(job.name + ": cannot start the PNG reader");
  if (!run_libpng(&job)) {
    if (job.source.truncated) throw data_error(job.name + ": truncated PNG: the file ends early");
    if (job.source.read_failed) throw data_error(job.name + ": cannot read: " + std::strerror(EIO));
    throw data_error(job.name + ": corrupt PNG: " + job.message);
  }
  Image image = std::move(job.image);
  image.channel_names = default_channel_names(image.channels);
  return image;
}

}  // namespace

Image read_png_file(const std::string& path, const ImageReadOptions& options) {
  std::error_code ec;
  if (!std::filesystem::exists(path, ec)) throw data_error(path + ": no such file");
  if (std::filesystem::is_directory(path, ec)) throw data_error(path + ": is a folder, not a file");
  std::FILE* file = std::fopen(path.c_str(), "rb");
  if (!file) throw data_error(path + ": cannot read: " + std::strerror(errno));
  struct Closer {
    std::FILE* f;
    ~Closer() { std::fclose(f); }
  } closer{file};
  struct stat st {};
  if (::fstat(::fileno(file), &st) != 0) throw data_error(path + ": cannot read: " + std::strerror(errno));
  ReadJob job;
  job.source.file = file;
  job.file_bytes = std::uint64_t(st.st_size);
  job.name = path;
  job.options = options;
  return read_png_job(job);
}

Image decode_png(const std::string& bytes, const std::string& name, const ImageReadOptions& options) {
  ReadJob job;
  job.source.data = reinterpret_cast<const unsigned char*>(bytes.data());
  job.source.size = bytes.size();
  job.file_bytes = bytes.size();
  job.name = name;
  job.options = options;
  return read_png_job(job);
}

}  // namespace pcasweep
