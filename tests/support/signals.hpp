// tests/support/signals.hpp — deterministic test recordings and a scratch folder.
//
// Contract: pure functions of their arguments (own 64-bit generator and own
// Box–Muller, no std::*_distribution), so every machine sees the same samples.
#pragma once

#include <sndfile.h>

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <numbers>
#include <string>
#include <unistd.h>

#include "core/random.hpp"
#include "io/signal.hpp"

namespace pcasweep::testing {

// SplitMix64 (Steele, Lea & Flood 2014) with a Box–Muller normal.
class SignalRng {
 public:
  explicit SignalRng(std::uint64_t seed) : stream_(seed) {}
  std::uint64_t next() { return stream_.next(); }
  double uniform() { return (double(next() >> 11) + 0.5) * 0x1.0p-53; }  // (0, 1)
  double normal() {
    return std::sqrt(-2.0 * std::log(uniform())) * std::cos(2.0 * std::numbers::pi * uniform());
  }

 private:
  SplitMix64Stream stream_;
};

// frames×channels of sinusoids, a drift and noise with standard deviation
// `scale`·0.1, peak about `scale`; channels differ in phase and weights.
inline Eigen::MatrixXd busy_samples(Eigen::Index frames, int channels, double scale, std::uint64_t seed = 11) {
  SignalRng rng(seed);
  Eigen::MatrixXd x(frames, channels);
  for (int c = 0; c < channels; ++c)
    for (Eigen::Index t = 0; t < frames; ++t) {
      const double u = double(t);
      x(t, c) = scale * (0.45 * std::sin(0.071 * u + c) + 0.25 * std::sin(0.31 * u + 2.0 * c) +
                         0.1 * std::sin(0.002 * u) + 0.1 * rng.normal());
    }
  return x;
}

// A Signal of the given sample type holding `x` as that type stores it.
inline Signal make_signal(const Eigen::MatrixXd& x, SampleType type, double rate = 8000.0) {
  Signal s;
  s.sample_rate = rate;
  s.sample_type = type;
  s.format = SignalFormat::sndfile;
  int sub = SF_FORMAT_PCM_16;
  switch (type) {
    case SampleType::pcm8: sub = SF_FORMAT_PCM_U8; break;
    case SampleType::pcm16: sub = SF_FORMAT_PCM_16; break;
    case SampleType::pcm24: sub = SF_FORMAT_PCM_24; break;
    case SampleType::pcm32: sub = SF_FORMAT_PCM_32; break;
    case SampleType::float32: sub = SF_FORMAT_FLOAT; break;
    case SampleType::float64: sub = SF_FORMAT_DOUBLE; break;
    default: s.format = SignalFormat::csv;
  }
  s.sndfile_format = SF_FORMAT_WAV | sub;
  s.channel_names = default_signal_channel_names(int(x.cols()));
  s.samples = x;
  s.samples = conform_to_sample_type(x, s);
  return s;
}

// A fresh folder under the system temporary folder, removed on destruction.
struct ScratchDir {
  std::filesystem::path path;
  explicit ScratchDir(const std::string& tag) {
    static int counter = 0;
    path = std::filesystem::temp_directory_path() /
           ("pcasweep-" + tag + "-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    std::filesystem::remove_all(path);
    std::filesystem::create_directories(path);
  }
  ~ScratchDir() {
    std::error_code ec;
    std::filesystem::remove_all(path, ec);
  }
  std::string file(const std::string& name) const { return (path / name).string(); }
};

}  // namespace pcasweep::testing
