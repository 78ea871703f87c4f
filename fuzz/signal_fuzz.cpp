// Harness: read_signal over a file libsndfile reads (WAV, AIFF, FLAC, AU, W64,
// CAF, Ogg, …: libsndfile chooses by content; the reader first checks that the
// container holds the sample bytes its header declares). The bytes go through
// a scratch file because read_signal takes a path.
#include "fuzz/fuzz_support.hpp"
#include "io/signal.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static pcasweep::fuzz::ScratchFile file(".wav");
  const std::string& path = file.write({reinterpret_cast<const char*>(data), size});
  pcasweep::fuzz::refused_or_read([&] {
    const pcasweep::Signal s = pcasweep::read_signal(path);
    // io/signal.hpp: at least one frame, one name per channel.
    if (s.frames() < 1 || s.channel_names.size() != std::size_t(s.channels())) std::abort();
  });
  return 0;
}
