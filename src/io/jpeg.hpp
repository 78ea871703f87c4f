// pcasweep/io/jpeg.hpp — baseline JPEG (ITU-T T.81) through stb_image_write, for comparison only.
//
// Contract: encode_jpeg() returns the bytes stbi_write_jpg_to_func produces for
// an 8-bit gray or RGB image at `quality` (1..100, stb's scale: IJG-style
// scaling of the Annex K tables). A 16-bit image is first reduced to 8 bits
// (v8 = (v + 128) / 257, integer division); images with alpha are refused (JPEG has no alpha).
// Throws Error(usage) for an unsupported image, Error(data) if stb fails.
#pragma once

#include <string>

#include "io/image.hpp"

namespace pcasweep {

// image: W×H, 1 or 3 channels, 8 or 16 bit; quality 1..100. Returns the JPEG file bytes.
std::string encode_jpeg(const Image& image, int quality);

// True if encode_jpeg() accepts images with this many channels (1 or 3).
inline bool jpeg_supports_channels(int channels) { return channels == 1 || channels == 3; }

}  // namespace pcasweep
