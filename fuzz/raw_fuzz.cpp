// Harness: read_signal over a raw file. The first byte picks the sample type
// (int16 or float32) and the interleaved channel count (1..4; 0 too, which
// the reader must refuse).
#include "fuzz/fuzz_support.hpp"
#include "io/signal.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  static pcasweep::fuzz::ScratchFile file(".raw");
  pcasweep::SignalReadOptions options;
  options.raw_type = (data[0] & 1) ? "float32" : "int16";
  options.raw_channels = (data[0] >> 1) % 5;
  const std::string& path = file.write({reinterpret_cast<const char*>(data) + 1, size - 1});
  pcasweep::fuzz::refused_or_read([&] {
    const pcasweep::Signal s = pcasweep::read_signal(path, options);
    if (s.frames() < 1 || s.channels() != options.raw_channels) std::abort();
  });
  return 0;
}
