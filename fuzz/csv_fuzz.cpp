// Harness: read_signal over a CSV file. The first byte picks the options a
// user could give: no --columns, one column by index, two by index, or one by
// a header name ("b"), and whether --rate is given.
#include "fuzz/fuzz_support.hpp"
#include "io/signal.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 1) return 0;
  static pcasweep::fuzz::ScratchFile file(".csv");
  pcasweep::SignalReadOptions options;
  switch (data[0] & 3) {
    case 0: break;
    case 1: options.columns = {"2"}; break;
    case 2: options.columns = {"3", "1"}; break;
    default: options.columns = {"b"}; break;
  }
  if (data[0] & 4) options.rate = 8000.0;
  const std::string& path = file.write({reinterpret_cast<const char*>(data) + 1, size - 1});
  pcasweep::fuzz::refused_or_read([&] {
    const pcasweep::Signal s = pcasweep::read_signal(path, options);
    if (s.frames() < 1 || s.channel_names.size() != std::size_t(s.channels())) std::abort();
  });
  return 0;
}
