// Harness: decode_image over untrusted bytes — PNG (libpng, strict), binary
// PNM (our reader), JPEG, BMP and TGA (stb_image, compiled into the harness
// with the sanitizers: stb_image_impl.c) — with the default limits a user gets
// (--max-pixels 2^30), so a header that makes a reader allocate past
// -malloc_limit_mb is a finding. The first byte picks --drop-alpha.
#include "fuzz/fuzz_support.hpp"
#include "io/image.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  pcasweep::ImageReadOptions options;
  options.drop_alpha = (data[0] & 1) != 0;
  options.max_pixels = std::uint64_t(1) << 20;
  const std::string bytes = pcasweep::fuzz::as_bytes(data + 1, size - 1);
  pcasweep::fuzz::refused_or_read([&] {
    const pcasweep::Image image = pcasweep::decode_image(bytes, "fuzz.img", options);
    // A decoded image keeps its own promise (io/image.hpp): samples = W·H·c, names = c.
    if (image.samples.size() != std::size_t(image.width) * image.height * image.channels ||
        image.channel_names.size() != std::size_t(image.channels))
      std::abort();
  });
  return 0;
}
