// pcasweep/io/png.hpp — PNG written row by row (bounded memory, parallel deflate) and read row by row.
//
// Contract (writing): PngRowWriter and encode_png(image, options) share one encoder. Rows are
// filtered (ISO/IEC 15948 §9) and cut into groups of whole rows of about `chunk_bytes` filtered
// bytes; each group is compressed as its own raw deflate stream (zlib, RFC 1951) ended by
// Z_SYNC_FLUSH (the last by Z_FINISH), so the groups of one batch compress in parallel and their
// concatenation is one valid deflate stream; the zlib wrapper (RFC 1950) gets the Adler-32 of the
// whole filtered data through adler32_combine. Group boundaries depend only on the geometry and
// `chunk_bytes`, never on the thread count or on how the rows are handed over: the bytes written
// are the same for 1 or n threads and for any split into bands. The chunk framing (IHDR, IDAT,
// IEND, CRC-32) is written here. Memory held: about 3·chunk_bytes per thread plus one deflate state
// per thread (~270 KB at the default memory level), never the image.
// Threads: outside an OpenMP parallel region the groups of a batch are compressed by up to
// omp_get_max_threads() threads; inside one (one writer per thread) everything runs in the calling
// thread. Choice of the defaults: docs/performance.md, "PNG writing".
//
// Contract (reading): read_png_file / decode_png go through libpng straight from the file (or
// the bytes), row by row into the Image's uint16 samples: peak memory is the Image plus libpng's
// row buffers. Channels and depths as stb_image gave them: palette → RGB (RGBA with tRNS), gray
// or RGB with tRNS → alpha added, 1/2/4-bit gray → 8-bit scaled to 0..255, 16-bit stays 16-bit;
// interlaced (Adam7) files are read whole into the Image's own memory. Before anything is
// allocated the IHDR is checked against options.max_pixels and against the file's size
// (guard_declared_size in io/image.hpp). CRCs, stream ends and truncation are checked by libpng:
// every failure is Error(data) "NAME: ..." and no half-filled image is ever returned.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <exception>
#include <memory>
#include <string>

#include "io/atomic_file.hpp"
#include "io/image.hpp"

namespace pcasweep {

// Per-row filter (ISO/IEC 15948 §9.2). adaptive chooses per row the filter whose output has the
// smallest sum of absolute values taken as signed bytes (the heuristic of the specification's
// §12.8 and of libpng), at about five times the filtering cost.
enum class PngFilter { none, sub, up, average, paeth, adaptive };

// zlib's deflate strategy for the IDAT data. rle (Z_RLE) looks only for runs (distance 1), and
// zlib then ignores the level; filtered: zlib's Z_FILTERED; standard: Z_DEFAULT_STRATEGY.
// automatic: rle at level 1, standard at every other level: on photo-like 8-bit, 16-bit and
// blocky (patch-PCA-like) images rle was both faster and smaller than level 1's default
// strategy (the figures: docs/performance.md, "PNG writing"), so level 1 means rle.
enum class PngStrategy { automatic, standard, rle, filtered };

struct PngWriteOptions {
  // zlib compression level 0..9 (the CLI's --png-level N maps to it one to one): 0 stores the
  // rows uncompressed (deflate stored blocks, fastest, file ≈ raw size), 1 is the fastest
  // compressing level (the default: with the automatic strategy, zlib's run-length search), 6
  // zlib's default, 9 its smallest and slowest. Outside 0..9: Error(usage).
  int level = 1;
  // Filter applied to every row. Default paeth: at level 1 it gave the smallest files of the
  // fixed filters at nearly the speed of none (measurements in docs/performance.md).
  PngFilter filter = PngFilter::paeth;
  PngStrategy strategy = PngStrategy::automatic;
  // Threads compressing one writer's groups: 0 = omp_get_max_threads() when called outside a
  // parallel region; n >= 1 = at most n. Inside a parallel region always 1 (no nested teams).
  int threads = 0;
  // Filtered bytes per independently compressed group (rounded to whole rows, at least one row).
  // Larger groups compress slightly better and hold more memory. Must be >= 1 (Error(usage)).
  std::size_t chunk_bytes = std::size_t(1) << 18;
};

// Writes a PNG row by row; the file appears at `path` only when finish() succeeds (temporary in
// the same folder, then rename, like io/atomic_file.hpp). Holds a bounded buffer (see above),
// never the whole image. Not copyable; one writer is used by one thread at a time.
class PngRowWriter {
 public:
  // width×height pixels (each >= 1, at most 2^31 − 1), channels 1..4 (gray, gray+alpha, RGB,
  // RGBA), bit_depth 8 or 16. Throws Error(usage) for options out of range, Error(data) naming
  // `path` for an impossible geometry or when the temporary cannot be created.
  PngRowWriter(const std::string& path, int width, int height, int channels, int bit_depth,
               const PngWriteOptions& options = {});
  // Removes the temporary if finish() was not called or failed (no partial file ever).
  ~PngRowWriter();
  PngRowWriter(const PngRowWriter&) = delete;
  PngRowWriter& operator=(const PngRowWriter&) = delete;

  // samples: `rows` rows of width·channels samples each, interleaved, native scale (0..255 or
  // 0..65535). Any rows >= 0 at a time. Throws Error(data) naming `path` when the rows would pass
  // the declared height, when an 8-bit sample is above 255, or on a write failure.
  void write_rows(const std::uint16_t* samples, int rows);

  // After exactly `height` rows: completes the file and renames it onto `path`. Throws
  // Error(data) naming `path` on failure (too few rows, write error); the temporary is removed.
  void finish();

  // Rows written so far (0..height).
  int rows_written() const;

  class Encoder;  // the shared encoder (png.cpp)

 private:
  std::string path_;
  std::unique_ptr<AtomicFile> file_;  // the temporary, open until finish()
  std::exception_ptr write_error_;     // the first failed write (the encoder's sink must not throw)
  bool finished_ = false;
  std::unique_ptr<Encoder> encoder_;
};

// In memory, same encoder: returns the PNG bytes of `image` (channels 1..4, bit depth 8 or 16).
// Throws Error(usage) for options out of range, Error(data) "png: ..." for an image it cannot store.
std::string encode_png(const Image& image, const PngWriteOptions& options);

// Writes `image` to `path` through PngRowWriter (no in-memory copy of the file).
// Throws what PngRowWriter throws.
void write_png(const std::string& path, const Image& image, const PngWriteOptions& options);

// True if the bytes start with the 8-byte PNG signature (ISO/IEC 15948 §5.2).
bool has_png_signature(const void* data, std::size_t size);

// Reads the PNG file at `path` through libpng, streaming (see the contract above).
// Returns the image with default channel names (alpha removed if options.drop_alpha).
// Throws Error(data) "PATH: ..." when the file is missing, not a PNG, too large for
// options.max_pixels, implausibly large for its size, truncated or corrupt.
Image read_png_file(const std::string& path, const ImageReadOptions& options = {});

// The same reader over PNG bytes held in memory; `name` is used in error messages.
Image decode_png(const std::string& bytes, const std::string& name, const ImageReadOptions& options = {});

}  // namespace pcasweep
