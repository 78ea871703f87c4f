// pcasweep/io/image.hpp — raster images in and out.
//
// Contract: an Image holds integer samples in their native scale (0..255 for
// 8-bit, 0..65535 for 16-bit), interleaved, row-major: the sample of channel c
// at column x, row y is samples[(y * width + x) * channels + c]. Readers take
// PNG (libpng, streaming, strict: io/png.hpp), binary PNM (our own reader),
// JPEG (libjpeg-turbo, strict: io/jpeg.hpp), BMP and TGA (stb_image, after our
// completeness checks), 8- and 16-bit where the format has it; writers
// produce PNG through our encoder (io/png.hpp), 16-bit stays 16-bit. Every
// reader checks the declared size from the header alone before allocating
// (guard_declared_size). Every failure throws pcasweep::Error(data) whose
// message starts with the file name.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace pcasweep {

struct Image {
  int width = 0;
  int height = 0;
  int channels = 0;    // 1 gray, 2 gray+alpha, 3 RGB, 4 RGBA
  int bit_depth = 8;   // 8 or 16
  std::vector<std::uint16_t> samples;  // width*height*channels values
  std::vector<std::string> channel_names;  // "gray", "alpha", "red", ...
  bool alpha_dropped = false;  // the file had alpha and the reader removed it

  double max_value() const { return bit_depth == 16 ? 65535.0 : 255.0; }
  std::size_t sample_count() const { return samples.size(); }
  std::uint16_t& at(int x, int y, int c) { return samples[(std::size_t(y) * width + x) * channels + c]; }
  std::uint16_t at(int x, int y, int c) const { return samples[(std::size_t(y) * width + x) * channels + c]; }
};

// Largest image accepted by default, in pixels (width·height): one gigapixel.
inline constexpr std::uint64_t kDefaultMaxPixels = std::uint64_t(1) << 30;

struct ImageReadOptions {
  bool drop_alpha = false;  // remove an alpha channel (gray+alpha -> gray, RGBA -> RGB)
  std::uint64_t max_pixels = kDefaultMaxPixels;  // refuse larger declared sizes before allocating (--max-pixels)
};

// Largest image accepted, in samples (width*height*channels): 2^30, 8 GiB as doubles.
inline constexpr std::size_t kMaxImageSamples = std::size_t(1) << 30;

// Reads an image file. Returns the image with names for its channels. PNG files
// are read by libpng straight from the file, row by row; other formats are read
// whole into memory first.
// Throws Error(data): missing file, unreadable, not an image, corrupt or truncated,
// declared size above options.max_pixels or impossible for the file's size.
Image read_image(const std::string& path, const ImageReadOptions& options = {});

// Decodes an image held in memory (PNG through the same libpng reader as
// read_image); `name` is used in error messages. Throws as read_image.
Image decode_image(const std::string& bytes, const std::string& name,
                   const ImageReadOptions& options = {});

// The size guard every reader applies from the header alone, before allocating
// the image. `name` names the file, width×height is the declared size.
// Throws Error(data) "NAME: declares WxH = M Mpixel, above --max-pixels (N); ..."
// when width·height > max_pixels, and "NAME: declares WxH pixels, which needs at
// least B bytes even at WHY, but the file holds F bytes: ..." when file_bytes <
// min_file_bytes, the least any valid file of that format and size can take (the
// caller derives it from the format's maximum compression; `why` names that bound).
void guard_declared_size(const std::string& name, std::uint64_t width, std::uint64_t height,
                         std::uint64_t max_pixels, double min_file_bytes, std::uint64_t file_bytes,
                         const std::string& why);

// Returns the PNG encoding of `image` at zlib level 6 with adaptive filtering
// (smaller than the fast default: it is the lossless-size baseline of the codec
// study and the form embedded in report.html). Options: encode_png(image,
// PngWriteOptions) in io/png.hpp. Throws Error(data) "png: ..." for an image PNG
// cannot store (channels outside 1..4, bit depth not 8/16, 8-bit sample > 255).
std::string encode_png(const Image& image);

// Writes `image` as PNG to `path` atomically with the fast default options
// (PngWriteOptions{}: zlib level 1, io/png.hpp), streaming through PngRowWriter.
// Throws Error(data) naming `path`.
void write_png(const std::string& path, const Image& image);

// Names for the channels of an image with `channels` channels:
// {"gray"}, {"gray","alpha"}, {"red","green","blue"}, {"red","green","blue","alpha"}.
std::vector<std::string> default_channel_names(int channels);

// Returns a width×height image of `channels` channels at `bit_depth` (8 or 16),
// every sample `fill`, channels named by default_channel_names.
Image make_image(int width, int height, int channels, int bit_depth, std::uint16_t fill = 0);

// True if the file name ends in an extension read_image understands.
bool has_image_extension(const std::string& path);

}  // namespace pcasweep
