// The signal path end to end: window -> solve -> reconstruct -> fold -> requantise.
// Sources: a full-rank PCA reconstruction is the identity (the components form
// an orthonormal basis of R^d: X̂ = (X − 1μᵀ)VVᵀ + 1μᵀ = X), so the round trip
// at k = d must return the recording; a sampled sinusoid's windows all lie in
// the span of one sine and one cosine of that frequency (sin(ωn + φ) =
// sin φ·cos ωn + cos φ·sin ωn: common practice), so two components carry all
// the variance.
#include <doctest/doctest.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "pipeline/signal_study.hpp"
#include "present/signal_outputs.hpp"
#include "reconstruct/reconstruct.hpp"
#include "../support/signals.hpp"

using namespace pcasweep;
using pcasweep::testing::ScratchDir;

namespace {

WindowOptions windows(int n, int h, Taper taper, ChannelMode mode) {
  WindowOptions o;
  o.window = n;
  o.hop = h;
  o.taper = taper;
  o.channels = mode;
  return o;
}

SolverSettings exact_solver() {
  SolverSettings s;
  s.choice = SolverChoice::exact;
  return s;
}

}  // namespace

TEST_CASE("signal study: round trip at k = window x channels is exact (float) and bit-exact (integers)") {
  struct Geometry {
    int window, hop;
    Taper taper;
  };
  // 24 + a tail: 1001 frames is not a multiple of 24, 16 or 9.
  const Geometry geometries[] = {{24, 24, Taper::automatic},  // rectangular, non-overlapping
                                 {16, 8, Taper::automatic},   // sqrt-Hann, 50 %
                                 {24, 9, Taper::sqrt_hann},   // general WOLA, hop does not divide the window
                                 {16, 5, Taper::rectangular}};  // overlapping, averaged
  const SampleType types[] = {SampleType::pcm8,    SampleType::pcm16,   SampleType::pcm24, SampleType::pcm32,
                              SampleType::float32, SampleType::float64, SampleType::real_text};
  for (const auto& g : geometries)
    for (ChannelMode mode : {ChannelMode::joint, ChannelMode::separate})
      for (SampleType type : types) {
        CAPTURE(g.window);
        CAPTURE(g.hop);
        CAPTURE(int(mode));
        CAPTURE(describe_sample_type(type));
        const double scale = type == SampleType::pcm8 ? 100.0 : type == SampleType::pcm16 ? 20000.0
                             : type == SampleType::pcm24                                  ? 5.0e6
                             : type == SampleType::pcm32                                  ? 1.0e9
                                                                                          : 0.8;
        Signal s = testing::make_signal(testing::busy_samples(1001, 2, scale), type);
        const Eigen::MatrixXd original = s.samples;
        const SignalAnalysis a =
            analyze_recording("rt", std::move(s), windows(g.window, g.hop, g.taper, mode), exact_solver());
        const int d = int(a.X.cols());
        CHECK(d == (mode == ChannelMode::joint ? 2 * g.window : g.window));
        int seen = 0;
        sweep_signal_ks(a, {d}, [&](const SignalSweepRow& row, const Eigen::MatrixXd& stored) {
          ++seen;
          CHECK(row.clipped_samples == 0);
          // Requantised to the original type, every sample is identical (integers: bit-exact;
          // float32: the same float; float64/text: within 1e-9 of the original).
          if (type == SampleType::float64 || type == SampleType::real_text) {
            CHECK((stored - original).cwiseAbs().maxCoeff() <= 1e-9);
          } else {
            CHECK((stored.array() == original.array()).all());
          }
          CHECK(row.energy_retained == doctest::Approx(1.0).epsilon(1e-12));
        });
        CHECK(seen == 1);
        // The unrounded fold is within 1e-9 relative to the sample scale for every type.
        ReconstructionSweep sweep(a.basis, a.X);
        const Eigen::MatrixXd folded = a.layout->fold(sweep.advance_to(d));
        CHECK((folded - original).cwiseAbs().maxCoeff() <= 1e-9 * std::max(1.0, scale));
      }
}

TEST_CASE("signal study: a pure sinusoid needs two components (all but 1e-10 of the variance)") {
  // x[t] = cos(2π·5t/64): 5 whole periods in a 64-frame window. The phase is
  // chosen so the mirror extension used at both ends continues the same
  // cosine (cos is even about t = 0, and about t = T−1 = 4096 because
  // 5·4096/64 = 320 whole periods), so padded windows are pure sinusoids too.
  const Eigen::Index frames = 4097;
  Eigen::MatrixXd x(frames, 1);
  for (Eigen::Index t = 0; t < frames; ++t) x(t, 0) = 1000.0 * std::cos(2.0 * M_PI * 5.0 * double(t) / 64.0);
  // Hops chosen so successive windows start at different phases (with hop 64
  // every window would be the same and there would be no variance at all).
  const WindowOptions cases[] = {windows(64, 16, Taper::sqrt_hann, ChannelMode::joint),
                                 windows(64, 13, Taper::rectangular, ChannelMode::joint),
                                 windows(64, 24, Taper::sqrt_hann, ChannelMode::joint)};
  for (const auto& o : cases) {
    CAPTURE(o.hop);
    Signal s = testing::make_signal(x, SampleType::float64);
    const SignalAnalysis a = analyze_recording("sine", std::move(s), o, exact_solver());
    const double total = a.basis.total_variance;
    REQUIRE(total > 1.0);
    const double two = a.basis.eigenvalues(0) + a.basis.eigenvalues(1);
    CHECK(1.0 - two / total <= 1e-10);
    CHECK(a.basis.eigenvalues(1) / total > 0.01);  // both components are needed, not one
  }
}

TEST_CASE("signal study: sweep writes reconstructions, plots and tables; metrics match the written file") {
  ScratchDir dir("sigstudy");
  Signal s = testing::make_signal(testing::busy_samples(2000, 2, 20000.0), SampleType::pcm16);
  write_signal(dir.file("rec.wav"), s.samples, s);
  SignalStudySettings settings;
  settings.windows = windows(32, 0, Taper::automatic, ChannelMode::joint);
  const SignalAnalysis a = analyze_signal(dir.file("rec.wav"), settings);
  const std::string out = dir.file("out");
  const auto rows = write_signal_sweep(a, {1, 4, 64}, out, nlohmann::json::object());
  REQUIRE(rows.size() == 3);
  for (const char* name : {"rec.k1.wav", "rec.k4.wav", "rec.k64.wav", "rec.k1.excerpt.svg", "rec.k64.excerpt.svg",
                           "spectrum.csv", "sweep.csv", "summary.json"})
    CHECK(std::filesystem::exists(std::filesystem::path(out) / name));
  // The figures are those of the file on disk.
  const Signal k4 = read_signal(out + "/rec.k4.wav");
  const SignalQuality q = compare_signals(s.samples, k4.samples);
  CHECK(q.overall.snr_db == doctest::Approx(rows[1].quality.overall.snr_db).epsilon(1e-12));
  CHECK((k4.samples - s.samples).cwiseAbs().maxCoeff() == rows[1].quality.overall.max_abs_error);
  // More components never lose energy; k = d is exact.
  CHECK(rows[0].energy_retained <= rows[1].energy_retained);
  CHECK(std::isinf(rows[2].quality.overall.snr_db));
  const std::string svg = read_file(out + "/rec.k4.excerpt.svg");
  CHECK(svg.find("<svg") != std::string::npos);
  CHECK(svg.find("<path") != std::string::npos);
  CHECK(svg.find("reconstruction") != std::string::npos);
  CHECK(svg.find("residual") != std::string::npos);
  const std::string csv = read_file(out + "/sweep.csv");
  CHECK(csv.rfind("k,rmse,snr_db,prd_percent,prd_mean_removed_percent,max_abs_error,energy_retained", 0) == 0);
  CHECK(csv.find("snr_db_left") != std::string::npos);
}

TEST_CASE("signal study: the CLI refuses bad recordings and bad windows, and leaves no output") {
  ScratchDir dir("sigcli");
  Signal s = testing::make_signal(testing::busy_samples(100, 1, 1000.0), SampleType::pcm16);
  write_signal(dir.file("short.wav"), s.samples, s);
  { std::ofstream(dir.file("empty.wav")); }
  {
    std::ofstream f(dir.file("text.csv"));
    f << "a\n1\n2\nthree\n";
  }
  const std::string bin = PCASWEEP_BINARY;
  struct Case {
    std::string args;
    int code;
    std::string message;
  };
  const Case cases[] = {
      {dir.file("empty.wav"), 1, "empty.wav: empty file"},
      {dir.file("text.csv"), 1, "text.csv: line 4, column 1 (a): 'three' is not a number"},
      {dir.file("short.wav") + " --window 101", 2, "short.wav: --window 101 is longer than the recording (100 frames)"},
      {dir.file("short.wav") + " --window 10 --hop 0", 2, "--hop must be at least 1 frame"},
  };
  for (const auto& c : cases) {
    CAPTURE(c.args);
    const std::string out = dir.file("out");
    const std::string err = dir.file("err.txt");
    const int status = std::system((bin + " sweep " + c.args + " --out " + out + " 2> " + err).c_str());
    REQUIRE(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == c.code);
    CHECK(read_file(err).find(c.message) != std::string::npos);
    CHECK_FALSE(std::filesystem::exists(out));
  }
}
