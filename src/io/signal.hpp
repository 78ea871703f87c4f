// pcasweep/io/signal.hpp — sampled recordings in and out.
//
// Contract: a Signal holds frames×channels samples as doubles in their
// native units: integer PCM keeps its integer scale (16-bit: −32768..32767,
// 24-bit: −8388608..8388607, 32-bit: −2^31..2^31−1, 8-bit: −128..127, which
// is libsndfile's signed view of unsigned 8-bit WAV), float files keep their
// float values, CSV keeps the numbers as written. It remembers where it came
// from (format, sample type, rate, channel names) so a reconstruction is
// written back in the same format and sample type.
// Readers: anything libsndfile reads (WAV, FLAC, Ogg, AIFF, AU, CAF, W64, …;
// PCM 8/16/24/32 and float/double; any channel count), CSV (one column per
// channel, optional header row), raw little-endian int16 or float32.
// Every failure throws pcasweep::Error whose message starts with the file name
// (data: bad or unreadable file; usage: options that do not fit the file).
// Writers go through a temporary name and a rename: never a partial file.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <string>
#include <vector>

#include "io/sound_checks.hpp"

namespace pcasweep {

enum class SignalFormat { sndfile, csv, raw };

// How samples are stored on disk; decides rounding and clipping on write.
//   pcm8/16/24/32: integers, rounded half away from zero and clipped to range
//   float32: rounded to the nearest float (no clipping: float files may exceed ±1)
//   float64, real_text: kept as doubles
//   integer_text: a CSV whose cells are all whole numbers: rounded, not clipped
//   lossy: a compressed format libsndfile decodes to floats (Vorbis, Opus, MP3, …);
//          written back with the same codec, so not bit-exact on reading back
enum class SampleType { pcm8, pcm16, pcm24, pcm32, float32, float64, integer_text, real_text, lossy };

struct Signal {
  Eigen::MatrixXd samples;            // frames×channels, native units
  double sample_rate = 1.0;           // frames per second
  bool sample_rate_given = true;      // false: CSV/raw without --rate (1 Hz assumed)
  SignalFormat format = SignalFormat::sndfile;
  SampleType sample_type = SampleType::pcm16;
  int sndfile_format = 0;             // libsndfile SF_FORMAT_* (major|subtype|endian), sndfile only
  std::vector<std::string> channel_names;  // one per channel; sound files keep them in their
                                           // comment string "pcasweep channels: a, b, c" (ours)
  bool csv_header = false;            // the CSV had a header row (written back with one)
  char csv_delimiter = ',';

  Eigen::Index frames() const { return samples.rows(); }
  int channels() const { return int(samples.cols()); }
  double duration_seconds() const { return double(frames()) / sample_rate; }
};

struct SignalReadOptions {
  std::vector<std::string> columns;  // CSV: names or 1-based indices to keep (empty: all)
  double rate = 0.0;                 // CSV/raw: sample rate in Hz (0: not given, 1 Hz assumed)
  std::string raw_type;              // "int16" or "float32": read as raw (also implied by .raw/.pcm)
  int raw_channels = 1;              // raw: interleaved channel count
  std::uint64_t max_frames = kDefaultMaxFrames;  // refuse longer recordings before allocating (--max-frames)
};

// Largest recording accepted, in samples (frames·channels): 2^28, 2 GiB as doubles.
inline constexpr std::size_t kMaxSignalSamples = std::size_t(1) << 28;

// True if `path` ends in an extension read_signal understands
// (.wav .flac .ogg .oga .opus .aiff .aif .aifc .au .snd .caf .w64 .rf64 .csv .raw .pcm).
bool has_signal_extension(const std::string& path);

// Reads a recording. The format is chosen by `options.raw_type` (raw), then by
// the extension (.csv: CSV, .raw/.pcm: raw, otherwise libsndfile).
// Returns frames×channels samples with at least one frame.
// Throws Error(data) for a missing, empty, truncated or malformed file: a WAV or
// AIFF whose header promises more sample bytes than the file holds, an Ogg file
// whose pages stop short, any sound file from which fewer frames can be read
// than its header declares, more frames than options.max_frames (checked before
// the samples are allocated), a CSV row with a missing or non-numeric cell, raw
// bytes that are not whole frames; and Error(usage) for options that do not fit
// (unknown column, raw without type).
Signal read_signal(const std::string& path, const SignalReadOptions& options = {});

// Rounds and clips `samples` (frames×channels, any reals) to what `like`'s
// sample type can store. Returns the stored values (frames×channels); counts
// samples pushed back into the integer range (and NaNs) through `clipped`.
Eigen::MatrixXd conform_to_sample_type(const Eigen::MatrixXd& samples, const Signal& like,
                                       std::size_t* clipped = nullptr);

// Writes `samples` (frames×channels) to `path` in `like`'s format, sample
// type, rate and channel names, after conform_to_sample_type (clip count
// returned through `clipped`). Atomic. Throws Error(data).
void write_signal(const std::string& path, const Eigen::MatrixXd& samples, const Signal& like,
                  std::size_t* clipped = nullptr);

// The extension a reconstruction of `like` gets: ".wav", ".flac", ".csv", ".raw", …
std::string signal_extension(const Signal& like, const std::string& input_path);

// "PCM 16-bit", "float 32-bit", "CSV integers", … for messages and summary.json.
std::string describe_sample_type(SampleType type);

// "WAV", "FLAC", "CSV", "raw", … for messages and summary.json.
std::string describe_format(const Signal& signal);

// Smallest and largest storable integer for pcm types; (−inf, +inf) otherwise.
std::pair<double, double> sample_range(SampleType type);

// Default channel names: {"mono"}, {"left","right"}, else "ch1", "ch2", …
std::vector<std::string> default_signal_channel_names(int channels);

}  // namespace pcasweep
