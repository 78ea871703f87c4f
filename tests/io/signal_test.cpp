// Readers and writers of recordings: WAV through libsndfile, CSV, raw.
// Outside references: libsndfile itself reads our files back (it is the
// reference decoder here; tests/reference/signal_wav_check.py adds scipy's
// independent WAV reader); the WAV byte layout used to forge bad headers is
// the RIFF/WAVE layout of the Microsoft/IBM Multimedia Programming Interface
// spec (1991): "RIFF" size "WAVE", then chunks "fmt " (16 bytes for PCM) and
// "data" (size in bytes), little-endian (from memory).
#include <doctest/doctest.h>
#include <sndfile.h>

#include <fstream>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/signal.hpp"
#include "../support/signals.hpp"
#include "../support/errors.hpp"

using namespace pcasweep;
using pcasweep::testing::ScratchDir;

namespace {

void write_bytes(const std::string& path, const std::string& bytes) {
  std::ofstream out(path, std::ios::binary);
  out.write(bytes.data(), std::streamsize(bytes.size()));
}

std::string le32(std::uint32_t v) {
  std::string s(4, '\0');
  for (int i = 0; i < 4; ++i) s[i] = char((v >> (8 * i)) & 0xff);
  return s;
}
std::string le16(std::uint16_t v) { return std::string{char(v & 0xff), char(v >> 8)}; }

// A 16-bit mono PCM WAV whose data chunk declares `declared` bytes and holds `held` bytes.
std::string forged_wav(std::uint32_t declared, std::uint32_t held) {
  std::string fmt = le16(1) + le16(1) + le32(8000) + le32(16000) + le16(2) + le16(16);
  std::string data(held, '\0');
  for (std::uint32_t i = 0; i < held; ++i) data[i] = char(i * 7);
  std::string body = "WAVE" + std::string("fmt ") + le32(16) + fmt + "data" + le32(declared) + data;
  return "RIFF" + le32(std::uint32_t(body.size())) + body;
}


}  // namespace

TEST_CASE("signal io: WAV written by us reads back sample-identical through libsndfile, every PCM and float type") {
  ScratchDir dir("sigio");
  struct Case {
    SampleType type;
    double scale;
  };
  // Peaks chosen to use most of each integer range (and to clip a little for 8-bit).
  const Case cases[] = {{SampleType::pcm8, 150.0},         {SampleType::pcm16, 30000.0},
                        {SampleType::pcm24, 8.0e6},        {SampleType::pcm32, 2.0e9},
                        {SampleType::float32, 0.9},        {SampleType::float64, 0.9}};
  for (const auto& c : cases) {
    CAPTURE(describe_sample_type(c.type));
    const Eigen::MatrixXd raw = testing::busy_samples(1001, 3, c.scale);
    Signal like = testing::make_signal(raw, c.type);
    const std::string path = dir.file("x.wav");
    std::size_t clipped = 0;
    write_signal(path, raw, like, &clipped);
    // Clipping is counted exactly: the samples outside the integer range.
    const auto [low, high] = sample_range(c.type);
    std::size_t expected_clips = 0;
    for (Eigen::Index i = 0; i < raw.size(); ++i) {
      const double r = std::round(raw.data()[i]);
      expected_clips += (r < low || r > high) ? 1 : 0;
    }
    CHECK(clipped == expected_clips);
    const Signal back = read_signal(path);
    CHECK(back.sample_type == c.type);
    CHECK(back.channels() == 3);
    CHECK(back.frames() == 1001);
    CHECK(back.sample_rate == doctest::Approx(8000.0));
    CHECK(back.sndfile_format == like.sndfile_format);
    CHECK((back.samples.array() == like.samples.array()).all());
  }
}

TEST_CASE("signal io: integers come back in their native scale, not normalised") {
  ScratchDir dir("sigio");
  Eigen::MatrixXd x(4, 1);
  x << -32768, -1, 1, 32767;
  Signal like = testing::make_signal(x, SampleType::pcm16);
  write_signal(dir.file("n.wav"), x, like);
  const Signal back = read_signal(dir.file("n.wav"));
  CHECK(back.samples(0, 0) == -32768.0);
  CHECK(back.samples(3, 0) == 32767.0);
  // The same file through libsndfile's own short reader: the reference.
  SF_INFO info{};
  SNDFILE* f = sf_open(dir.file("n.wav").c_str(), SFM_READ, &info);
  REQUIRE(f);
  short shorts[4];
  CHECK(sf_readf_short(f, shorts, 4) == 4);
  sf_close(f);
  for (int i = 0; i < 4; ++i) CHECK(double(shorts[i]) == back.samples(i, 0));
}

TEST_CASE("signal io: CSV header detection, column choice, sample type and write-back") {
  ScratchDir dir("sigio");
  write_bytes(dir.file("h.csv"), "time,axial,radial\r\n0,1,-2\r\n1,3,4\r\n2,5,-6\r\n\r\n");
  SignalReadOptions o;
  o.columns = {"radial", "2"};
  o.rate = 100;
  const Signal s = read_signal(dir.file("h.csv"), o);
  CHECK(s.csv_header);
  CHECK(s.channel_names == std::vector<std::string>{"radial", "axial"});
  CHECK(s.frames() == 3);
  CHECK(s.samples(2, 0) == -6.0);
  CHECK(s.samples(1, 1) == 3.0);
  CHECK(s.sample_type == SampleType::integer_text);
  CHECK(s.sample_rate == 100.0);
  CHECK(s.sample_rate_given);

  write_bytes(dir.file("n.csv"), "0.5;1e-3\n-2.25;7\n");
  const Signal t = read_signal(dir.file("n.csv"));
  CHECK_FALSE(t.csv_header);
  CHECK(t.channels() == 2);
  CHECK(t.samples(0, 1) == 1e-3);
  CHECK(t.sample_type == SampleType::real_text);
  CHECK_FALSE(t.sample_rate_given);
  // Written back: same delimiter, no header, shortest round-trip reals.
  write_signal(dir.file("n2.csv"), t.samples, t);
  CHECK(read_file(dir.file("n2.csv")) == "0.5;0.001\n-2.25;7\n");
  const Signal u = read_signal(dir.file("n2.csv"));
  CHECK((u.samples.array() == t.samples.array()).all());
  // Integer CSV written back rounds (and keeps its header).
  write_signal(dir.file("h2.csv"), s.samples.array() + 0.4, s);
  CHECK(read_file(dir.file("h2.csv")) == "radial,axial\n-2,1\n4,3\n-6,5\n");
}

TEST_CASE("signal io: raw int16 and float32 little-endian round trip") {
  ScratchDir dir("sigio");
  for (const char* type : {"int16", "float32"}) {
    CAPTURE(type);
    const bool i16 = std::string(type) == "int16";
    const Eigen::MatrixXd raw = testing::busy_samples(300, 2, i16 ? 20000.0 : 0.7);
    Signal like = testing::make_signal(raw, i16 ? SampleType::pcm16 : SampleType::float32);
    like.format = SignalFormat::raw;
    write_signal(dir.file("r.raw"), raw, like);
    CHECK(read_file(dir.file("r.raw")).size() == 300u * 2u * (i16 ? 2u : 4u));
    SignalReadOptions o;
    o.raw_type = type;
    o.raw_channels = 2;
    o.rate = 1000;
    const Signal back = read_signal(dir.file("r.raw"), o);
    CHECK(back.frames() == 300);
    CHECK((back.samples.array() == like.samples.array()).all());
  }
  // Known bytes: 0x0102 = 258 and 0xfffe = -2 as little-endian int16.
  write_bytes(dir.file("k.raw"), std::string("\x02\x01\xfe\xff", 4));
  SignalReadOptions o;
  o.raw_type = "int16";
  const Signal k = read_signal(dir.file("k.raw"), o);
  CHECK(k.samples(0, 0) == 258.0);
  CHECK(k.samples(1, 0) == -2.0);
}

TEST_CASE("signal io: bad inputs are refused with the file named") {
  ScratchDir dir("sigio");
  // Empty file.
  write_bytes(dir.file("empty.wav"), "");
  CHECK(testing::error_message_of([&] { read_signal(dir.file("empty.wav")); }).find("empty.wav: empty file") != std::string::npos);
  write_bytes(dir.file("empty.csv"), "");
  CHECK(testing::error_message_of([&] { read_signal(dir.file("empty.csv")); }).find("empty file") != std::string::npos);
  // CSV with a text cell: row (line) and column named.
  write_bytes(dir.file("text.csv"), "a,b\n1,2\n3,oops\n5,6\n");
  const std::string text = testing::error_message_of([&] { read_signal(dir.file("text.csv")); });
  CHECK(text.find("text.csv: line 3, column 2 (b): 'oops' is not a number") != std::string::npos);
  // CSV with a missing cell.
  write_bytes(dir.file("gap.csv"), "a,b\n1,2\n3,\n");
  CHECK(testing::error_message_of([&] { read_signal(dir.file("gap.csv")); }).find("line 3, column 2 (b): missing value") !=
        std::string::npos);
  write_bytes(dir.file("short.csv"), "a,b\n1,2\n3\n");
  CHECK(testing::error_message_of([&] { read_signal(dir.file("short.csv")); }).find("line 3, column 2 (b): missing value") !=
        std::string::npos);
  // Unknown column.
  SignalReadOptions cols;
  cols.columns = {"c"};
  CHECK(testing::error_message_of([&] { read_signal(dir.file("gap.csv"), cols); }).find("no column 'c'") != std::string::npos);
  // WAV whose data chunk claims 2000 bytes but holds 200 (a lying header / truncated file).
  write_bytes(dir.file("lying.wav"), forged_wav(2000, 200));
  const std::string lying = testing::error_message_of([&] { read_signal(dir.file("lying.wav")); });
  CHECK(lying.find("lying.wav: header declares 2000 bytes of samples but only 200 follow") != std::string::npos);
  // The same bytes with an honest header read fine: the forgery is the only fault.
  write_bytes(dir.file("honest.wav"), forged_wav(200, 200));
  CHECK(read_signal(dir.file("honest.wav")).frames() == 100);
  // A WAV cut off inside its header.
  write_bytes(dir.file("cut.wav"), forged_wav(200, 200).substr(0, 30));
  CHECK(testing::error_message_of([&] { read_signal(dir.file("cut.wav")); }).find(dir.file("cut.wav") + ": ") == 0);
  // Not a recording at all.
  write_bytes(dir.file("junk.wav"), "this is not a sound file at all, just words");
  CHECK(testing::error_message_of([&] { read_signal(dir.file("junk.wav")); }).find(dir.file("junk.wav") + ": not a recording") == 0);
  // Raw size not a whole number of frames, and raw without a type.
  write_bytes(dir.file("odd.raw"), "abc");
  SignalReadOptions raw;
  raw.raw_type = "int16";
  CHECK(testing::error_message_of([&] { read_signal(dir.file("odd.raw"), raw); }).find("3 bytes is not a whole number of frames") !=
        std::string::npos);
  CHECK(testing::error_message_of([&] { read_signal(dir.file("odd.raw")); }).find("raw samples need --raw int16 or --raw float32") !=
        std::string::npos);
  // Missing file.
  CHECK(testing::error_message_of([&] { read_signal(dir.file("none.wav")); }).find("none.wav: no such file") != std::string::npos);
}
