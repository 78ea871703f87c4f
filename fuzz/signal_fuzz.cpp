// Harness: read_signal over a file libsndfile reads (WAV, AIFF, FLAC, AU, W64,
// CAF, Ogg, …: libsndfile chooses by content; the reader first checks that the
// container holds the sample bytes its header declares). The bytes go through
// a scratch file because read_signal takes a path. --max-frames is 2^20 here,
// not the default 2^28: a 16 KB FLAC or Vorbis stream of constant blocks
// honestly holds millions of frames, and decoding them held the harness to
// about 75 executions a second; the limit is checked before allocation in
// every path (tests/io/damaged_signal_test.cpp checks it at its edge).
#include "fuzz/fuzz_support.hpp"
#include "io/signal.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static pcasweep::fuzz::ScratchFile file(".wav");
  const std::string& path = file.write({reinterpret_cast<const char*>(data), size});
  pcasweep::fuzz::refused_or_read([&] {
    pcasweep::SignalReadOptions options;
    options.max_frames = std::uint64_t(1) << 20;
    const pcasweep::Signal s = pcasweep::read_signal(path, options);
    // io/signal.hpp: at least one frame, one name per channel.
    if (s.frames() < 1 || s.channel_names.size() != std::size_t(s.channels())) std::abort();
  });
  return 0;
}
