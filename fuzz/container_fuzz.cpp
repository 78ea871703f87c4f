// Harness: a coded image (.pcsc) decoded to pixels the one way `decode` does
// it (decode_coded_image: open_container's checks, then PatchDecoder band by
// band), and parsed whole by read_container (the zstd coders' path and the
// coefficients decoded at once). External-basis files stop at "needs --basis".
// Each input runs as given (the CRC-32 check) and with its CRC trailer repaired
// (with_crc_trailer), so mutations reach the header and stream checks behind it.
#include "codec/container.hpp"
#include "codec/image_codec.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string given(reinterpret_cast<const char*>(data), size);
  for (const std::string& bytes : {given, pcasweep::fuzz::with_crc_trailer(given)}) {
    pcasweep::fuzz::refused_or_read([&] {
      const pcasweep::Image image = pcasweep::decode_coded_image(bytes, "fuzz.pcsc");
      if (image.samples.size() != std::size_t(image.width) * image.height * image.channels) std::abort();
    });
    pcasweep::fuzz::refused_or_read([&] { (void)pcasweep::read_container(bytes, "fuzz.pcsc"); });
  }
  return 0;
}
