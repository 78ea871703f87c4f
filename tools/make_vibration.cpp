// make_vibration — the seeded generator of the Tern Point pump vibration log.
//
// The Tern Point field station is invented. Its cooling-water pump carries
// an axial and a radial accelerometer and a once-per-revolution tachometer;
// this program synthesises 4 s of that log at 4 kHz, 3 channels, 16-bit:
//   shaft harmonics   1x, 2x, 3x of a ~29.6 Hz shaft whose speed wanders by ±0.4 %
//   bearing tone      an outer-race defect: a 1150 Hz structural resonance
//                     amplitude-modulated at BPFO = 3.57 x shaft, plus a weak BPFO line
//   sparse impacts    Poisson arrivals (2.5 per second), each a 780 Hz ring decaying in ~6 ms
//   slow drift        a 0.21 Hz sway on axial, a thermal ramp on radial
//   sensor noise      Gaussian, own Box–Muller on std::mt19937_64 (bit-for-bit
//                     the same on every platform: no std::*_distribution)
// Usage: make_vibration OUT_DIR [--seed N]   (default seed 20260; writes
//        OUT_DIR/ternpoint_pump_vibration.wav and .csv)
#include <sndfile.h>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <numbers>
#include <random>
#include <string>

#include "core/error.hpp"
#include "io/signal.hpp"

namespace {

constexpr double kPi = std::numbers::pi;

class Noise {
 public:
  explicit Noise(std::uint64_t seed) : engine_(seed) {}
  // Uniform in (0, 1): the top 53 bits of one draw, offset by half a step so 0 never occurs.
  double uniform() { return (double(engine_() >> 11) + 0.5) * 0x1.0p-53; }
  // Standard normal by Box–Muller (the cosine branch; the sine branch is kept for the next call).
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double r = std::sqrt(-2.0 * std::log(uniform())), theta = 2.0 * kPi * uniform();
    spare_ = r * std::sin(theta);
    has_spare_ = true;
    return r * std::cos(theta);
  }
  // Exponential with the given rate.
  double exponential(double rate) { return -std::log(uniform()) / rate; }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace

int main(int argc, char** argv) {
  using namespace pcasweep;
  if (argc != 2 && !(argc == 4 && std::string(argv[2]) == "--seed")) {
    std::cerr << "usage: make_vibration OUT_DIR [--seed N]\n";
    return 2;
  }
  const std::string out_dir = argv[1];
  std::uint64_t seed = 20260;
  try {
    if (argc == 4) seed = std::stoull(argv[3]);
  } catch (const std::exception&) {
    std::cerr << "make_vibration: --seed takes a whole number\n";
    return 2;
  }
  constexpr double rate = 4000.0, seconds = 4.0;
  constexpr Eigen::Index frames = Eigen::Index(rate * seconds);
  Noise noise(seed);

  // Shaft phase (in revolutions), integrated from the wandering speed.
  Eigen::VectorXd revolutions(frames);
  double phase = 0.0;
  for (Eigen::Index t = 0; t < frames; ++t) {
    const double time = double(t) / rate;
    const double shaft_hz = 29.6 * (1.0 + 0.004 * std::sin(2 * kPi * 0.15 * time));
    revolutions(t) = phase;
    phase += shaft_hz / rate;
  }
  // Impact arrival times and sizes.
  std::vector<std::pair<double, double>> impacts;
  for (double time = noise.exponential(2.5); time < seconds; time += noise.exponential(2.5))
    impacts.push_back({time, 4000.0 + 5000.0 * noise.uniform()});

  Eigen::MatrixXd x(frames, 3);  // axial, radial, tacho
  double wander = 0.0;           // a slow random walk on the axial baseline
  for (Eigen::Index t = 0; t < frames; ++t) {
    const double time = double(t) / rate;
    const double shaft = 2 * kPi * revolutions(t);
    const double bpfo = 3.57 * shaft;
    const double bearing = (1.0 + 0.8 * std::cos(bpfo)) * std::sin(2 * kPi * 1150.0 * time);
    double ring = 0.0;
    for (const auto& [at, size] : impacts) {
      const double dt = time - at;
      if (dt >= 0.0 && dt < 0.05) ring += size * std::exp(-dt / 0.006) * std::sin(2 * kPi * 780.0 * dt);
    }
    wander = 0.9995 * wander + 4.0 * noise.normal();
    x(t, 0) = 2200 * std::sin(shaft + 0.3) + 1400 * std::sin(2 * shaft + 1.1) + 500 * std::sin(3 * shaft + 2.0) +
              150 * bearing + 60 * std::sin(bpfo) + 0.6 * ring + 300 * std::sin(2 * kPi * 0.21 * time + 0.4) +
              wander + 90 * noise.normal();
    x(t, 1) = 3000 * std::sin(shaft + 1.7) + 800 * std::sin(2 * shaft + 0.2) + 300 * std::sin(3 * shaft + 2.6) +
              400 * bearing + 120 * std::sin(bpfo + 0.5) + ring + 120 + 250 * time / seconds +
              110 * noise.normal();
    // Tachometer: a once-per-revolution pulse, 6 % of a turn wide, on a small offset.
    const double turn = revolutions(t) - std::floor(revolutions(t));
    x(t, 2) = (turn < 0.06 ? 14000.0 : -2000.0) + 40 * noise.normal();
  }

  std::error_code ec;
  std::filesystem::create_directories(out_dir, ec);
  Signal like;
  like.samples = x;
  like.sample_rate = rate;
  like.channel_names = {"axial", "radial", "tacho"};
  like.format = SignalFormat::sndfile;
  like.sndfile_format = SF_FORMAT_WAV | SF_FORMAT_PCM_16;
  like.sample_type = SampleType::pcm16;
  try {
    const std::string stem = (std::filesystem::path(out_dir) / "ternpoint_pump_vibration").string();
    std::size_t clipped = 0;
    write_signal(stem + ".wav", x, like, &clipped);
    Signal csv = like;
    csv.format = SignalFormat::csv;
    csv.sample_type = SampleType::integer_text;
    csv.csv_header = true;
    // The CSV holds exactly the WAV's 16-bit integers.
    write_signal(stem + ".csv", conform_to_sample_type(x, like), csv);
    std::cout << "wrote " << stem << ".wav and .csv: " << frames << " frames x 3 channels (axial, radial, tacho) at "
              << rate << " Hz, 16-bit, seed " << seed << ", " << impacts.size() << " impacts, " << clipped
              << " samples clipped\n";
    return clipped == 0 ? 0 : 1;
  } catch (const Error& e) {
    std::cerr << "make_vibration: " << e.what() << "\n";
    return 1;
  }
}
