#include "io/image.hpp"

#include <png.h>
#include <stb_image.h>
#include <stb_image_write.h>

#include <algorithm>
#include <cctype>
#include <cstring>
#include <filesystem>

#include "core/error.hpp"
#include "io/atomic_file.hpp"

namespace pcasweep {

std::vector<std::string> default_channel_names(int channels) {
  switch (channels) {
    case 1: return {"gray"};
    case 2: return {"gray", "alpha"};
    case 3: return {"red", "green", "blue"};
    case 4: return {"red", "green", "blue", "alpha"};
    default: {
      std::vector<std::string> names;
      for (int c = 0; c < channels; ++c) names.push_back("c" + std::to_string(c));
      return names;
    }
  }
}

Image make_image(int width, int height, int channels, int bit_depth, std::uint16_t fill) {
  Image image;
  image.width = width;
  image.height = height;
  image.channels = channels;
  image.bit_depth = bit_depth;
  image.channel_names = default_channel_names(channels);
  image.samples.assign(std::size_t(width) * height * channels, fill);
  return image;
}

bool has_image_extension(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char ch) { return std::tolower(ch); });
  static const char* known[] = {".png", ".jpg", ".jpeg", ".bmp", ".tga", ".pgm", ".ppm", ".pnm"};
  return std::any_of(std::begin(known), std::end(known), [&](const char* k) { return ext == k; });
}

namespace {

// Binary PNM (P5 gray, P6 RGB) is read here rather than through stb_image:
// the stb version Debian ships neither checks that the raster is complete
// (a truncated file decodes from uninitialised memory) nor swaps 16-bit
// samples, which the Netpbm format stores most significant byte first.
// Returns false if `bytes` is not binary PNM; throws Error(data) if it is but is bad.
bool decode_binary_pnm(const std::string& bytes, const std::string& name, Image& image) {
  if (bytes.size() < 2 || bytes[0] != 'P' || (bytes[1] != '5' && bytes[1] != '6')) return false;
  std::size_t pos = 2;
  auto next_number = [&](const char* what) -> long {
    while (pos < bytes.size()) {
      const char ch = bytes[pos];
      if (ch == '#') {
        while (pos < bytes.size() && bytes[pos] != '\n') ++pos;
      } else if (std::isspace(static_cast<unsigned char>(ch))) {
        ++pos;
      } else {
        break;
      }
    }
    long value = 0;
    std::size_t digits = 0;
    while (pos < bytes.size() && std::isdigit(static_cast<unsigned char>(bytes[pos])) && digits < 9) {
      value = value * 10 + (bytes[pos++] - '0');
      ++digits;
    }
    if (digits == 0) throw data_error(name + ": PNM header has no valid " + std::string(what));
    return value;
  };
  const long width = next_number("width"), height = next_number("height"), maxval = next_number("maximum value");
  if (width < 1 || height < 1) throw data_error(name + ": PNM header declares an impossible size");
  if (maxval < 1 || maxval > 65535) throw data_error(name + ": PNM maximum value must be 1..65535");
  if (pos >= bytes.size() || !std::isspace(static_cast<unsigned char>(bytes[pos]))) {
    throw data_error(name + ": PNM header is not followed by the raster");
  }
  ++pos;  // the single whitespace byte before the raster
  const int channels = bytes[1] == '5' ? 1 : 3;
  const int bytes_per_sample = maxval < 256 ? 1 : 2;
  const std::size_t samples = std::size_t(width) * std::size_t(height) * channels;
  if (samples > kMaxImageSamples) {
    throw data_error(name + ": image too large (" + std::to_string(width) + "x" + std::to_string(height) + ")");
  }
  const std::size_t needed = samples * bytes_per_sample;
  if (bytes.size() - pos < needed) {
    throw data_error(name + ": truncated PNM: the header promises " + std::to_string(needed) +
                     " bytes of samples, the file holds " + std::to_string(bytes.size() - pos));
  }
  image.width = int(width);
  image.height = int(height);
  image.channels = channels;
  image.bit_depth = bytes_per_sample == 2 ? 16 : 8;
  image.samples.resize(samples);
  const auto* raster = reinterpret_cast<const unsigned char*>(bytes.data() + pos);
  for (std::size_t i = 0; i < samples; ++i) {
    const unsigned v = bytes_per_sample == 2 ? (unsigned(raster[2 * i]) << 8) | raster[2 * i + 1] : raster[i];
    if (long(v) > maxval) throw data_error(name + ": PNM sample above the declared maximum value");
    image.samples[i] = static_cast<std::uint16_t>(v);
  }
  image.channel_names = default_channel_names(channels);
  return true;
}

}  // namespace

Image decode_image(const std::string& bytes, const std::string& name, const ImageReadOptions& options) {
  if (bytes.empty()) throw data_error(name + ": empty file");
  {
    Image pnm;
    if (decode_binary_pnm(bytes, name, pnm)) return pnm;  // no alpha in P5/P6
  }
  const auto* data = reinterpret_cast<const stbi_uc*>(bytes.data());
  if (bytes.size() > std::size_t(INT32_MAX)) throw data_error(name + ": file too large");
  const int len = static_cast<int>(bytes.size());
  int w = 0, h = 0, c = 0;
  if (!stbi_info_from_memory(data, len, &w, &h, &c)) {
    throw data_error(name + ": not a readable PNG, JPEG, BMP, TGA or PNM image (" +
                     std::string(stbi_failure_reason() ? stbi_failure_reason() : "unknown format") + ")");
  }
  if (w <= 0 || h <= 0 || c <= 0 || c > 4) throw data_error(name + ": image header declares an impossible size");
  if (std::size_t(w) * std::size_t(h) * std::size_t(c) > kMaxImageSamples) {
    throw data_error(name + ": image too large (" + std::to_string(w) + "x" + std::to_string(h) + ")");
  }
  const bool sixteen = stbi_is_16_bit_from_memory(data, len) != 0;
  Image image;
  void* pixels = sixteen ? static_cast<void*>(stbi_load_16_from_memory(data, len, &w, &h, &c, 0))
                         : static_cast<void*>(stbi_load_from_memory(data, len, &w, &h, &c, 0));
  if (!pixels) {
    throw data_error(name + ": corrupt image (" +
                     std::string(stbi_failure_reason() ? stbi_failure_reason() : "decode failed") + ")");
  }
  image.width = w;
  image.height = h;
  image.channels = c;
  image.bit_depth = sixteen ? 16 : 8;
  const std::size_t n = std::size_t(w) * h * c;
  image.samples.resize(n);
  if (sixteen) {
    const auto* p = static_cast<const std::uint16_t*>(pixels);
    std::copy(p, p + n, image.samples.begin());
  } else {
    const auto* p = static_cast<const std::uint8_t*>(pixels);
    std::copy(p, p + n, image.samples.begin());
  }
  stbi_image_free(pixels);
  image.channel_names = default_channel_names(c);

  if (options.drop_alpha && (c == 2 || c == 4)) {
    const int kept = c - 1;
    std::vector<std::uint16_t> out(std::size_t(w) * h * kept);
    for (std::size_t p = 0, q = 0; p < n; p += c)
      for (int k = 0; k < kept; ++k) out[q++] = image.samples[p + k];
    image.samples = std::move(out);
    image.channels = kept;
    image.channel_names = default_channel_names(kept);
    image.alpha_dropped = true;
  }
  return image;
}

Image read_image(const std::string& path, const ImageReadOptions& options) {
  return decode_image(read_file(path), path, options);
}

namespace {

void append_to_string(void* context, void* data, int size) {
  static_cast<std::string*>(context)->append(static_cast<const char*>(data), std::size_t(size));
}

struct PngMemory {
  std::string bytes;
};

void png_write_to_string(png_structp png, png_bytep data, png_size_t length) {
  auto* out = static_cast<PngMemory*>(png_get_io_ptr(png));
  out->bytes.append(reinterpret_cast<const char*>(data), length);
}

std::string encode_png16(const Image& image) {
  png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, nullptr, nullptr, nullptr);
  if (!png) throw data_error("png: cannot create writer");
  png_infop info = png_create_info_struct(png);
  if (!info) {
    png_destroy_write_struct(&png, nullptr);
    throw data_error("png: cannot create writer");
  }
  PngMemory memory;
  // Rows in PNG byte order (big-endian samples).
  const std::size_t row_samples = std::size_t(image.width) * image.channels;
  std::vector<std::uint8_t> buffer(row_samples * 2 * image.height);
  for (std::size_t i = 0; i < image.samples.size(); ++i) {
    buffer[2 * i] = static_cast<std::uint8_t>(image.samples[i] >> 8);
    buffer[2 * i + 1] = static_cast<std::uint8_t>(image.samples[i] & 0xff);
  }
  std::vector<png_bytep> rows(image.height);
  for (int y = 0; y < image.height; ++y) rows[y] = buffer.data() + std::size_t(y) * row_samples * 2;
  static const int color_types[] = {0, PNG_COLOR_TYPE_GRAY, PNG_COLOR_TYPE_GRAY_ALPHA, PNG_COLOR_TYPE_RGB,
                                    PNG_COLOR_TYPE_RGB_ALPHA};
  if (setjmp(png_jmpbuf(png))) {
    png_destroy_write_struct(&png, &info);
    throw data_error("png: encoding failed");
  }
  png_set_write_fn(png, &memory, png_write_to_string, nullptr);
  png_set_IHDR(png, info, image.width, image.height, 16, color_types[image.channels], PNG_INTERLACE_NONE,
               PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
  png_write_info(png, info);
  png_write_image(png, rows.data());
  png_write_end(png, nullptr);
  png_destroy_write_struct(&png, &info);
  return std::move(memory.bytes);
}

}  // namespace

std::string encode_png(const Image& image) {
  if (image.channels < 1 || image.channels > 4) throw data_error("png: cannot store " +
                                                                 std::to_string(image.channels) + " channels");
  if (image.bit_depth == 16) return encode_png16(image);
  std::vector<std::uint8_t> bytes(image.samples.begin(), image.samples.end());
  std::string out;
  if (!stbi_write_png_to_func(append_to_string, &out, image.width, image.height, image.channels, bytes.data(),
                              image.width * image.channels)) {
    throw data_error("png: encoding failed");
  }
  return out;
}

void write_png(const std::string& path, const Image& image) {
  std::string bytes;
  try {
    bytes = encode_png(image);
  } catch (const Error& e) {
    throw data_error(path + ": " + e.what());
  }
  write_file_atomic(path, bytes);
}

}  // namespace pcasweep
