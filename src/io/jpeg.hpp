// pcasweep/io/jpeg.hpp — baseline JPEG (ITU-T T.81) through libjpeg-turbo, for comparison.
//
// Contract: encode_jpeg() compresses an 8-bit gray or RGB image (a 16-bit one is
// first reduced to 8 bits: v8 = (v + 128) / 257, integer division) with
// libjpeg's standard tables scaled by `quality` (1..100, the IJG scale),
// optimised Huffman tables, and for RGB either 4:2:0 or 4:4:4 chroma sampling
// (YCbCr); gray stays one component. It reads the image row by row and holds
// only the compressed bytes and libjpeg's own working rows. JpegRowReader
// decodes JPEG bytes row by row (any libjpeg warning, such as a premature end
// of data, is an error): the measurement of a JPEG point never holds a
// decoded image. Images with alpha are refused (JPEG has none). decode_jpeg()
// reads a whole JPEG file into an Image through the same reader: the declared
// size is checked from the header (SOF) before libjpeg allocates anything.
// Errors: Error(usage) for an unsupported image or quality, Error(data) naming
// the stream for a libjpeg failure; libjpeg's own exit() is never reached.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>

#include "io/image.hpp"

namespace pcasweep {

struct JpegOptions {
  int quality = 90;          // 1..100
  bool chroma_420 = true;    // RGB: chroma subsampled 2×2 (4:2:0); false: 4:4:4
  bool optimize = true;      // optimised Huffman tables (a second pass over the coefficients)
};

// image: W×H, 1 or 3 channels, 8 or 16 bit. Returns the JPEG file bytes.
std::string encode_jpeg(const Image& image, const JpegOptions& options);

// The same with `quality` and the other options at their defaults.
std::string encode_jpeg(const Image& image, int quality);

// True if encode_jpeg() accepts images with this many channels (1 or 3).
inline bool jpeg_supports_channels(int channels) { return channels == 1 || channels == 3; }

// What a JPEG header (SOF, ITU-T T.81 B.2.2) declares, for a check before decoding starts.
struct JpegHeader {
  int width = 0, height = 0;
  int components = 0;        // 1 gray, 3 YCbCr/RGB, 4 CMYK/YCCK
  bool arithmetic = false;   // arithmetic-coded (SOF9..SOF11) rather than Huffman
  bool progressive = false;  // progressive (the decoder then holds every coefficient)
};

// Called with the header after it is read and before libjpeg allocates the image's buffers;
// throws (any exception) to refuse the file.
using JpegHeaderCheck = std::function<void(const JpegHeader&)>;

// Decodes a JPEG held in memory row by row, as 8-bit samples in our uint16 layout.
class JpegRowReader {
 public:
  // bytes: must outlive the reader; name: used in errors. Reads the header, calls `check`
  // (if given) with it, then starts decompression. Throws Error(data) "NAME: corrupt or
  // truncated JPEG (...)" for a damaged header, "NAME: not a readable JPEG (...)" for a colour
  // space other than gray or YCbCr/RGB, and whatever `check` throws.
  JpegRowReader(std::string_view bytes, const std::string& name, const JpegHeaderCheck& check = {});
  ~JpegRowReader();
  JpegRowReader(const JpegRowReader&) = delete;
  JpegRowReader& operator=(const JpegRowReader&) = delete;
  int width() const;
  int height() const;
  int channels() const;  // 1 (gray) or 3 (RGB)
  // Decodes up to `rows` further rows into out (rows × width × channels samples, 0..255).
  // Returns the rows decoded (0 after the last). After the last row the end of the stream is
  // read too (EOI). Throws Error(data) on a damaged stream: any libjpeg warning, such as a
  // premature end of data or corrupt entropy-coded data, counts as damage.
  int read_rows(std::uint16_t* out, int rows);

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// Reads a whole JPEG file (`bytes`, `name` for messages) into an Image: W×H, 1 (gray) or 3
// (RGB) channels, 8-bit. Before decoding starts the declared W×H is checked against
// options.max_pixels and against the least bytes a Huffman-coded file of that size needs
// (guard_declared_size in io/image.hpp). Throws Error(data) "NAME: ..." for a damaged,
// truncated or oversized file; never returns a partly decoded image.
Image decode_jpeg(const std::string& bytes, const std::string& name, const ImageReadOptions& options);

}  // namespace pcasweep
