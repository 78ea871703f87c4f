#include "io/image.hpp"

#include <stb_image.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <string_view>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/jpeg.hpp"
#include "io/png.hpp"

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

std::string mpixel_text(double pixels) {
  char buffer[64];
  if (pixels >= 1e5) std::snprintf(buffer, sizeof buffer, "%.1f Mpixel", pixels / 1e6);
  else std::snprintf(buffer, sizeof buffer, "%.0f pixels", pixels);
  return buffer;
}

std::string bytes_text(double bytes) {
  char buffer[64];
  if (bytes >= 1e9) std::snprintf(buffer, sizeof buffer, "%.1f GB", bytes / 1e9);
  else if (bytes >= 1e6) std::snprintf(buffer, sizeof buffer, "%.1f MB", bytes / 1e6);
  else if (bytes >= 1e4) std::snprintf(buffer, sizeof buffer, "%.1f KB", bytes / 1e3);
  else std::snprintf(buffer, sizeof buffer, "%.0f bytes", bytes);
  return buffer;
}

}  // namespace

void guard_declared_size(const std::string& name, std::uint64_t width, std::uint64_t height,
                         std::uint64_t max_pixels, double min_file_bytes, std::uint64_t file_bytes,
                         const std::string& why) {
  const std::string size = std::to_string(width) + "x" + std::to_string(height);
  const double pixels = double(width) * double(height);
  if (pixels > double(max_pixels)) {
    throw data_error(name + ": declares " + size + " = " + mpixel_text(pixels) + ", above --max-pixels (" +
                     std::to_string(max_pixels) + "); raise --max-pixels to read it");
  }
  if (double(file_bytes) < min_file_bytes) {
    throw data_error(name + ": declares " + size + " pixels, which needs at least " + bytes_text(min_file_bytes) +
                     " even at " + why + ", but the file holds " + std::to_string(file_bytes) +
                     " bytes: it is truncated or its header is corrupt");
  }
}

namespace {

// Binary PNM (P5 gray, P6 RGB) is read here rather than through stb_image:
// the stb version Debian ships neither checks that the raster is complete
// (a truncated file decodes from uninitialised memory) nor swaps 16-bit
// samples, which the Netpbm format stores most significant byte first.
// Returns false if `bytes` is not binary PNM; throws Error(data) if it is but is bad.
bool decode_binary_pnm(const std::string& bytes, const std::string& name, std::uint64_t max_pixels, Image& image) {
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
  // Binary PNM is an uncompressed raster (pgm(5), ppm(5)): the file holds at least
  // width·height·channels·bytes_per_sample bytes.
  guard_declared_size(name, std::uint64_t(width), std::uint64_t(height), max_pixels,
                      double(width) * double(height) * channels * bytes_per_sample, bytes.size(),
                      "the raster size of binary PNM (uncompressed)");
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


// The least number of bytes a file of one of the formats read by stb_image (BMP, TGA, and the
// unadvertised GIF, PSD, HDR, PIC) can take for a
// declared w×h, from the format's maximum compression, with the bound's name for the message.
// `bytes` is the whole file (stbi_info has already accepted it).
struct MinimumSize {
  double bytes;
  const char* why;
};

MinimumSize stb_minimum_size(const std::string& file, std::uint64_t w, std::uint64_t h) {
  const auto* b = reinterpret_cast<const unsigned char*>(file.data());
  const std::size_t n = file.size();
  const double pixels = double(w) * double(h);
  auto le16 = [&](std::size_t at) { return at + 2 <= n ? unsigned(b[at]) | (unsigned(b[at + 1]) << 8) : 0u; };
  auto le32 = [&](std::size_t at) { return at + 4 <= n ? le16(at) | (std::uint32_t(le16(at + 2)) << 16) : 0u; };
  if (n >= 2 && b[0] == 'B' && b[1] == 'M') {
    // BMP: stb_image reads only uncompressed rasters (BI_RGB, BI_BITFIELDS) and refuses RLE
    // (which has no bound anyway: its end-of-line and end-of-bitmap escapes skip any number of
    // pixels in 2 bytes). Uncompressed rows are padded to 4 bytes: ceil(w·bpp/32)·4 bytes per row
    // (Microsoft BITMAPINFOHEADER documentation). bpp sits at byte 24 after a 12-byte OS/2
    // header, at byte 28 after the larger Windows headers.
    const std::uint32_t header = le32(14);
    std::uint64_t bpp = header == 12 ? le16(24) : le16(28);
    if (bpp < 1) bpp = 1;
    return {double(h) * double((w * bpp + 31) / 32 * 4), "the raster size of uncompressed BMP"};
  }
  const bool gif = n >= 4 && std::memcmp(b, "GIF8", 4) == 0;
  const bool psd = n >= 4 && std::memcmp(b, "8BPS", 4) == 0;
  const bool hdr = n >= 2 && b[0] == '#' && b[1] == '?';
  const bool pic = n >= 4 && b[0] == 0x53 && b[1] == 0x80 && b[2] == 0xF6 && b[3] == 0x34;
  if (gif || psd || hdr || pic) {
    // Formats stb_image reads that pcasweep does not advertise. One generous bound for all,
    // 16384 pixels per byte, above each format's densest coding as derived here from their
    // descriptions (from memory, not re-checked against the documents): Softimage PIC mixed
    // runs, 65535 pixels in a 4-byte packet; GIF LZW, at most 4096 pixels per code of at least
    // 3 bits; PSD PackBits, 128 bytes per 2; Radiance HDR runs, 127 bytes per 2.
    return {pixels / 16384.0, "16384 pixels per byte (the densest of GIF, PSD, HDR, PIC)"};
  }
  // TGA, which stb_image identifies last, by elimination (it has no signature). Header
  // (Truevision TGA 2.0): image type at byte 2, bits per pixel (or per colour-map index) at 16.
  const unsigned type = n > 2 ? b[2] : 0, bits = n > 16 ? b[16] : 8;
  const double pixel_bytes = std::max(1u, (bits + 7) / 8);
  if (type == 9 || type == 10 || type == 11) {
    // RLE: a packet is a header byte whose 7 low bits + 1 count its pixels (at most 128), then
    // one pixel value (run) or that many values (raw): at most 128 pixels per 1 + pixel_bytes bytes.
    return {std::ceil(pixels / 128.0) * (1 + pixel_bytes), "128 pixels per RLE packet (TGA)"};
  }
  return {pixels * pixel_bytes, "the raster size of uncompressed TGA"};
}

// BMP and TGA carry no checksum, and stb_image fills the rows a short file
// lacks. These two checks make sure the file holds every byte its header
// promises before it is decoded; a short file is an error naming the file.

// Uncompressed BMP (the only kind stb_image reads): the raster starts at
// bfOffBits (byte 10) and holds |height| rows of ceil(width·bpp/32)·4 bytes
// (Microsoft BITMAPFILEHEADER / BITMAPINFOHEADER documentation).
void check_complete_bmp(const std::string& file, const std::string& name, std::uint64_t w, std::uint64_t h) {
  const auto* b = reinterpret_cast<const unsigned char*>(file.data());
  const std::size_t n = file.size();
  if (n < 30) throw data_error(name + ": truncated BMP: the file ends inside its header");
  auto le16 = [&](std::size_t at) { return unsigned(b[at]) | (unsigned(b[at + 1]) << 8); };
  auto le32 = [&](std::size_t at) { return std::uint32_t(le16(at)) | (std::uint32_t(le16(at + 2)) << 16); };
  const std::uint64_t offset = le32(10), header = le32(14);
  const std::uint64_t bpp = header == 12 ? le16(24) : le16(28);
  const std::uint64_t row_bytes = (w * std::max<std::uint64_t>(bpp, 1) + 31) / 32 * 4;
  const std::uint64_t needed = offset + h * row_bytes;
  if (needed > n)
    throw data_error(name + ": truncated BMP: the header promises " + std::to_string(h * row_bytes) +
                     " bytes of raster from byte " + std::to_string(offset) + ", the file holds " + std::to_string(n) +
                     " bytes in all");
}

// What follows a TGA's pixel data (from byte `end`): nothing (TGA 1.0), or the TGA 2.0 areas
// ending with the 26-byte footer whose last 18 bytes are "TRUEVISION-XFILE" '.' NUL; an extension
// area starts with its own size, 495, as a 16-bit little-endian field (Truevision TGA 2.0). A tail
// shorter than a footer, one that names the signature without ending with it, or an extension area
// longer than the tail is a file cut after its pixels. A longer tail with no sign of TGA 2.0 is
// taken as trailing data of a TGA 1.0 file and ignored.
void check_tga_tail(const std::string& file, const std::string& name, std::uint64_t end) {
  static const std::string_view signature("TRUEVISION-XFILE.\0", 18);
  if (end >= file.size()) return;
  const std::string_view tail(file.data() + end, file.size() - end);
  if (tail.size() >= 26 && tail.substr(tail.size() - 18) == signature) return;
  const bool extension = tail.size() >= 2 && static_cast<unsigned char>(tail[0]) == 0xEF && tail[1] == 0x01;
  if (tail.size() < 26 || tail.find("TRUEVISION") != std::string_view::npos || (extension && tail.size() < 495 + 26))
    throw data_error(name + ": truncated TGA: the " + std::to_string(tail.size()) +
                     " bytes after the pixel data are not a whole TGA 2.0 footer (26 bytes ending in "
                     "TRUEVISION-XFILE)");
}

// TGA (Truevision TGA 2.0): the pixel data follow the 18-byte header, the
// image ID (byte 0 holds its length) and the colour map (present when byte 1
// is 1: byte 5 holds its entries, byte 7 their bits). Uncompressed types
// (1, 2, 3) hold width·height pixels of ceil(bits/8) bytes; the RLE types (9,
// 10, 11) are walked packet by packet until every pixel is covered.
void check_complete_tga(const std::string& file, const std::string& name, std::uint64_t w, std::uint64_t h) {
  const auto* b = reinterpret_cast<const unsigned char*>(file.data());
  const std::size_t n = file.size();
  if (n < 18) throw data_error(name + ": truncated TGA: the file ends inside its header");
  const unsigned type = b[2], bits = b[16];
  const std::uint64_t map_entries = b[1] == 1 ? (unsigned(b[5]) | (unsigned(b[6]) << 8)) : 0;
  const std::uint64_t map_bytes = map_entries * ((unsigned(b[7]) + 7) / 8);
  const std::uint64_t start = 18 + std::uint64_t(b[0]) + map_bytes;
  const std::uint64_t pixel_bytes = std::max(1u, (bits + 7) / 8), pixels = w * h;
  const std::string truncated = name + ": truncated TGA: ";
  if (type == 9 || type == 10 || type == 11) {
    std::uint64_t pos = start, covered = 0;
    while (covered < pixels) {
      if (pos >= n)
        throw data_error(truncated + "its run-length packets end after " + std::to_string(covered) + " of " +
                         std::to_string(pixels) + " pixels");
      const unsigned packet = b[pos++];
      const std::uint64_t count = (packet & 0x7F) + 1;
      pos += packet & 0x80 ? pixel_bytes : count * pixel_bytes;
      if (pos > n)
        throw data_error(truncated + "a run-length packet runs past the end of the file after " +
                         std::to_string(covered) + " of " + std::to_string(pixels) + " pixels");
      covered += count;
    }
    check_tga_tail(file, name, pos);
    return;
  }
  if (start + pixels * pixel_bytes > n)
    throw data_error(truncated + "the header promises " + std::to_string(pixels * pixel_bytes) +
                     " bytes of pixels from byte " + std::to_string(start) + ", the file holds " + std::to_string(n) +
                     " bytes in all");
  check_tga_tail(file, name, start + pixels * pixel_bytes);
}

// True for bytes that stb_image would try as a JPEG: 0xFF, any further 0xFF fill bytes, then
// 0xD8 (stb_image 2.27's marker reader skips fill bytes before SOI; libjpeg accepts only FF D8
// and refuses the rest with a message).
bool starts_like_jpeg(const std::string& file) {
  const auto* b = reinterpret_cast<const unsigned char*>(file.data());
  const std::size_t n = file.size();
  if (n < 2 || b[0] != 0xFF) return false;
  std::size_t i = 1;
  while (i < n && b[i] == 0xFF) ++i;
  return i < n && b[i] == 0xD8;
}

// The name of the format stb_image will decode `file` as, for messages: "BMP", "TGA" or "image".
std::string stb_format_name(const std::string& file) {
  const auto* b = reinterpret_cast<const unsigned char*>(file.data());
  const std::size_t n = file.size();
  if (n >= 2 && b[0] == 'B' && b[1] == 'M') return "BMP";
  const bool other = (n >= 4 && (std::memcmp(b, "GIF8", 4) == 0 || std::memcmp(b, "8BPS", 4) == 0)) ||
                     (n >= 2 && b[0] == '#' && b[1] == '?') ||
                     (n >= 4 && b[0] == 0x53 && b[1] == 0x80 && b[2] == 0xF6 && b[3] == 0x34);
  return other ? "image" : "TGA";  // TGA: what stb_image identifies by elimination
}

}  // namespace

Image decode_image(const std::string& bytes, const std::string& name, const ImageReadOptions& options) {
  if (bytes.empty()) throw data_error(name + ": empty file");
  if (has_png_signature(bytes.data(), bytes.size())) return decode_png(bytes, name, options);
  // JPEG (SOI marker, ITU-T T.81 B.1.1.3) through libjpeg-turbo, strict: stb_image decodes damaged
  // entropy-coded data without a word, and its Huffman table builder reads past its arrays on a
  // hostile DHT segment (found by fuzz/image_fuzz.cpp). Everything stb_image would take for a JPEG
  // goes to libjpeg, which refuses what it does not read.
  if (starts_like_jpeg(bytes)) return decode_jpeg(bytes, name, options);
  {
    Image pnm;
    if (decode_binary_pnm(bytes, name, options.max_pixels, pnm)) return pnm;  // no alpha in P5/P6
  }
  // stb_image also decodes GIF, PSD, HDR and PIC, which we do not claim to read: its PSD reader
  // converts out-of-range floats to bytes (UBSan, found by fuzz/image_fuzz.cpp). Only BMP and TGA
  // go on to stb_image.
  const std::string kind = stb_format_name(bytes);
  if (kind == "image")
    throw data_error(name + ": not a readable PNG, JPEG, BMP, TGA or PNM image (GIF, PSD, HDR and PIC are not read)");
  const auto* data = reinterpret_cast<const stbi_uc*>(bytes.data());
  if (bytes.size() > std::size_t(INT32_MAX)) throw data_error(name + ": file too large");
  const int len = static_cast<int>(bytes.size());
  int w = 0, h = 0, c = 0;
  if (!stbi_info_from_memory(data, len, &w, &h, &c)) {
    throw data_error(name + ": not a readable PNG, JPEG, BMP, TGA or PNM image (" +
                     std::string(stbi_failure_reason() ? stbi_failure_reason() : "unknown format") + ")");
  }
  if (w <= 0 || h <= 0 || c <= 0 || c > 4) throw data_error(name + ": image header declares an impossible size");
  const MinimumSize minimum = stb_minimum_size(bytes, std::uint64_t(w), std::uint64_t(h));
  guard_declared_size(name, std::uint64_t(w), std::uint64_t(h), options.max_pixels, minimum.bytes, bytes.size(),
                      minimum.why);
  if (std::size_t(w) * std::size_t(h) * std::size_t(c) > kMaxImageSamples) {
    throw data_error(name + ": image too large (" + std::to_string(w) + "x" + std::to_string(h) + ")");
  }
  // BMP and TGA carry no checksum: the file must hold every row its header declares.
  if (kind == "BMP") check_complete_bmp(bytes, name, std::uint64_t(w), std::uint64_t(h));
  else check_complete_tga(bytes, name, std::uint64_t(w), std::uint64_t(h));
  const bool sixteen = stbi_is_16_bit_from_memory(data, len) != 0;
  Image image;
  void* pixels = sixteen ? static_cast<void*>(stbi_load_16_from_memory(data, len, &w, &h, &c, 0))
                         : static_cast<void*>(stbi_load_from_memory(data, len, &w, &h, &c, 0));
  if (!pixels) {
    // stb_image's reason is the last one any of its format tests set: after a
    // damaged JPEG it can be the PNG test's "bad png sig". Only a reason that
    // does not name another format is passed on.
    std::string reason = stbi_failure_reason() ? stbi_failure_reason() : "";
    if (reason.find("png") != std::string::npos || reason.empty()) reason = "decoding stopped";
    throw data_error(name + ": corrupt or truncated " + kind + " (" + reason + ")");
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
  {
    // PNG is read straight from the file; anything else (or a file that cannot be opened, so that
    // read_file reports why) goes through memory.
    std::ifstream in(path, std::ios::binary);
    char signature[8];
    if (in && in.read(signature, 8) && has_png_signature(signature, 8)) {
      in.close();
      return read_png_file(path, options);
    }
  }
  return decode_image(read_file(path), path, options);
}

std::string encode_png(const Image& image) {
  PngWriteOptions options;
  options.level = 6;
  options.filter = PngFilter::adaptive;
  return encode_png(image, options);
}

void write_png(const std::string& path, const Image& image) { write_png(path, image, PngWriteOptions{}); }

}  // namespace pcasweep
