// Sound files cut short are refused with one line naming the file, for every container
// libsndfile reads that we advertise (WAV, AIFF, FLAC, Ogg Vorbis), and --max-frames is applied
// from the header before the samples are allocated.
// Sources: the files are written by libsndfile (an encoder outside this project); where each
// container keeps its sizes: Microsoft RIFF/WAVE ('data' chunk size), Apple AIFF 1.3 ('SSND'
// chunk size), FLAC STREAMINFO total samples (xiph.org FLAC format), Ogg pages and their
// end-of-stream flag (RFC 3533).
#include <doctest/doctest.h>
#include <sndfile.h>

#include <fstream>
#include <string>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/signal.hpp"
#include "../support/errors.hpp"
#include "../support/signals.hpp"

using namespace pcasweep;
using testing::ScratchDir;

namespace {

void write_bytes(const std::string& path, const std::string& bytes) {
  std::ofstream out(path, std::ios::binary);
  out.write(bytes.data(), std::streamsize(bytes.size()));
}

// Writes `frames` frames of 2 channels in `format` (SF_FORMAT_* major|subtype) and returns the bytes.
std::string sound_file(const ScratchDir& dir, const std::string& name, int format, SampleType type, int frames) {
  Signal like = testing::make_signal(testing::busy_samples(frames, 2, type == SampleType::pcm16 ? 20000.0 : 0.5), type);
  like.format = SignalFormat::sndfile;  // make_signal makes lossy types CSV
  like.sndfile_format = format;
  write_signal(dir.file(name), like.samples, like);
  return read_file(dir.file(name));
}

// Offsets to cut at: about 100 spread over the file and each of the last 64 bytes.
std::vector<std::size_t> cut_points(std::size_t size) {
  std::vector<std::size_t> at;
  for (std::size_t i = 1; i < 100; ++i) at.push_back(size * i / 100);
  for (std::size_t back = 1; back <= 64 && back < size; ++back) at.push_back(size - back);
  return at;
}

}  // namespace

TEST_CASE("damaged signals: WAV, AIFF, FLAC and Ogg cut short are refused with one line naming the file") {
  ScratchDir dir("damaged-signal");
  struct Case {
    const char* name;
    int format;
    SampleType type;
  };
  const Case cases[] = {{"a.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, SampleType::pcm16},
                        {"a.aiff", SF_FORMAT_AIFF | SF_FORMAT_PCM_16, SampleType::pcm16},
                        {"a.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, SampleType::pcm16},
                        {"a.ogg", SF_FORMAT_OGG | SF_FORMAT_VORBIS, SampleType::lossy}};
  for (const Case& c : cases) {
    CAPTURE(c.name);
    const std::string whole = sound_file(dir, c.name, c.format, c.type, 6000);
    REQUIRE(read_signal(dir.file(c.name)).frames() == 6000);
    const std::string cut = dir.file(std::string("cut-") + c.name);
    int accepted = 0, unnamed = 0;
    for (std::size_t at : cut_points(whole.size())) {
      write_bytes(cut, whole.substr(0, at));
      const std::string message = testing::error_message_of([&] { read_signal(cut); });
      if (message.empty()) {
        ++accepted;
        MESSAGE(c.name << " cut to " << at << " of " << whole.size() << " bytes was accepted");
      } else if (message.rfind(cut + ": ", 0) != 0 || message.find('\n') != std::string::npos) {
        ++unnamed;
        MESSAGE(c.name << " cut to " << at << ": " << message);
      }
    }
    CHECK(accepted == 0);
    CHECK(unnamed == 0);
  }
}

TEST_CASE("damaged signals: --max-frames is checked from the header, before the samples") {
  ScratchDir dir("max-frames");
  sound_file(dir, "b.wav", SF_FORMAT_WAV | SF_FORMAT_PCM_16, SampleType::pcm16, 1001);
  sound_file(dir, "b.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, SampleType::pcm16, 1001);
  SignalReadOptions options;
  options.max_frames = 1000;
  for (const char* name : {"b.wav", "b.flac"}) {
    CAPTURE(name);
    const std::string message = testing::error_message_of([&] { read_signal(dir.file(name), options); });
    CHECK(message.rfind(dir.file(name) + ": ", 0) == 0);
    CHECK(message.find("1001 frames, above --max-frames (1000); raise --max-frames") != std::string::npos);
    options.max_frames = 1001;
    CHECK(read_signal(dir.file(name), options).frames() == 1001);
    options.max_frames = 1000;
  }
  // CSV and raw count their frames from the file itself and obey the same limit.
  write_bytes(dir.file("c.csv"), "1\n2\n3\n");
  options.max_frames = 2;
  CHECK(testing::error_message_of([&] { read_signal(dir.file("c.csv"), options); }).find("--max-frames (2)") !=
        std::string::npos);
}

TEST_CASE("damaged signals: a FLAC header declaring far more frames than the file holds is refused") {
  // FLAC format: "fLaC", a 4-byte metadata block header, then STREAMINFO from byte 8: block and
  // frame sizes (10 bytes), then 20 bits of sample rate, 3 of channels, 5 of bits per sample and
  // 36 of total samples, which so sit in the low nibble of byte 21 and bytes 22..25. Setting them
  // to 2^27 claims a recording over 40000 times longer than the file holds.
  ScratchDir dir("flac-lie");
  std::string flac = sound_file(dir, "d.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_16, SampleType::pcm16, 3000);
  REQUIRE(flac.compare(0, 4, "fLaC") == 0);
  const std::uint64_t total = std::uint64_t(1) << 27;
  flac[21] = char((static_cast<unsigned char>(flac[21]) & 0xF0) | ((total >> 32) & 0x0F));
  for (int i = 0; i < 4; ++i) flac[22 + i] = char((total >> (24 - 8 * i)) & 0xFF);
  write_bytes(dir.file("lie.flac"), flac);
  const std::string message = testing::error_message_of([&] { read_signal(dir.file("lie.flac")); });
  CAPTURE(message);
  CHECK(message.rfind(dir.file("lie.flac") + ": ", 0) == 0);
  CHECK(message.find("frames") != std::string::npos);
}
