#include "io/jpeg.hpp"

#include <stb_image_write.h>

#include <cmath>

#include "core/error.hpp"

namespace pcasweep {

namespace {
void append_to_string(void* context, void* data, int size) {
  static_cast<std::string*>(context)->append(static_cast<const char*>(data), std::size_t(size));
}
}  // namespace

std::string encode_jpeg(const Image& image, int quality) {
  if (!jpeg_supports_channels(image.channels)) {
    throw usage_error("JPEG baseline: images with " + std::to_string(image.channels) +
                      " channels are not supported (gray or RGB only)");
  }
  if (quality < 1 || quality > 100) throw usage_error("JPEG quality must be 1..100");
  std::vector<unsigned char> bytes(image.samples.size());
  for (std::size_t i = 0; i < bytes.size(); ++i) {
    const unsigned v = image.samples[i];
    bytes[i] = image.bit_depth == 16 ? static_cast<unsigned char>((v + 128) / 257) : static_cast<unsigned char>(v);
  }
  std::string out;
  if (!stbi_write_jpg_to_func(append_to_string, &out, image.width, image.height, image.channels, bytes.data(),
                              quality)) {
    throw data_error("JPEG encoding failed in stb_image_write");
  }
  return out;
}

}  // namespace pcasweep
