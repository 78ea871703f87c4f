// The window layout: cutting a recording into windows and folding it back.
// Sources: weighted overlap-add with synthesis normalised by the summed
// window power, and the sqrt-periodic-Hann pair whose squares sum to 1 at
// 50 % overlap (sin² + cos² = 1): common practice in short-time Fourier
// analysis/synthesis, e.g. Griffin & Lim, IEEE Trans. ASSP 32(2), 1984 (from memory).
#include <doctest/doctest.h>

#include <cmath>

#include "core/error.hpp"
#include "observe/windows.hpp"
#include "../support/signals.hpp"
#include "../support/errors.hpp"

using namespace pcasweep;


TEST_CASE("windows: fold(observe(x)) == x for rectangular and overlapping windows, joint and separate") {
  // 1003 frames: not a multiple of any window below, so every case has a tail shorter than a window.
  const Eigen::MatrixXd x = testing::busy_samples(1003, 3, 1000.0);
  struct Case {
    int window, hop;
    Taper taper;
  };
  const Case cases[] = {{64, 64, Taper::automatic},  {64, 32, Taper::automatic},   {64, 21, Taper::sqrt_hann},
                        {50, 7, Taper::rectangular}, {64, 1, Taper::sqrt_hann},    {1, 1, Taper::automatic},
                        {1003, 1003, Taper::automatic}, {17, 16, Taper::sqrt_hann}};
  for (const auto& c : cases)
    for (ChannelMode mode : {ChannelMode::joint, ChannelMode::separate}) {
      CAPTURE(c.window);
      CAPTURE(c.hop);
      CAPTURE(int(c.taper));
      CAPTURE(int(mode));
      WindowOptions o;
      o.window = c.window;
      o.hop = c.hop;
      o.taper = c.taper;
      o.channels = mode;
      const WindowLayout layout(x.rows(), 3, o, "x");
      const Eigen::MatrixXd X = layout.observe(x);
      CHECK(X.rows() == layout.observation_count());
      CHECK(X.cols() == layout.dimension());
      CHECK(layout.dimension() == (mode == ChannelMode::joint ? c.window * 3 : c.window));
      const Eigen::MatrixXd back = layout.fold(X);
      CHECK((back - x).cwiseAbs().maxCoeff() <= 1e-9);
      // The padding covers whole windows and is cropped again.
      CHECK((layout.windows() - 1) * layout.options().hop + c.window ==
            layout.front_padding() + x.rows() + layout.back_padding());
    }
}

TEST_CASE("windows: sqrt-periodic-Hann at 50 % overlap has unit summed power, and the taper values are sin(pi n/N)") {
  WindowOptions o;
  o.window = 16;
  o.hop = 8;
  const WindowLayout layout(200, 1, o, "x");
  CHECK(layout.options().taper == Taper::sqrt_hann);  // auto picks sqrt-Hann when windows overlap
  for (int n = 0; n < 16; ++n) CHECK(layout.taper_values()(n) == doctest::Approx(std::sin(M_PI * n / 16.0)));
  // Σ w² at every interior frame: sin²(πn/N) + sin²(π(n+N/2)/N) = sin² + cos² = 1.
  for (int n = 0; n < 8; ++n) {
    const double a = layout.taper_values()(n), b = layout.taper_values()(n + 8);
    CHECK(a * a + b * b == doctest::Approx(1.0).epsilon(1e-15));
  }
  CHECK(layout.front_padding() == 8);
  // Non-overlapping defaults to rectangular with no front padding.
  WindowOptions r;
  r.window = 16;
  const WindowLayout rect(200, 2, r, "x");
  CHECK(rect.options().taper == Taper::rectangular);
  CHECK(rect.options().hop == 16);
  CHECK(rect.front_padding() == 0);
  CHECK(rect.windows() == 13);  // ceil(200 / 16)
  CHECK(rect.back_padding() == 8);
}

TEST_CASE("windows: observations are the windowed frames in (frame, channel) order; separate is channel-major") {
  Eigen::MatrixXd x(8, 2);
  for (int t = 0; t < 8; ++t) {
    x(t, 0) = t;
    x(t, 1) = 100 + t;
  }
  WindowOptions o;
  o.window = 4;
  const Eigen::MatrixXd joint = WindowLayout(8, 2, o, "x").observe(x);
  REQUIRE(joint.rows() == 2);
  CHECK(joint(1, 0) == 4.0);    // window 1, frame 0, channel 0
  CHECK(joint(1, 1) == 104.0);  // window 1, frame 0, channel 1
  CHECK(joint(0, 7) == 103.0);  // window 0, frame 3, channel 1
  o.channels = ChannelMode::separate;
  const Eigen::MatrixXd sep = WindowLayout(8, 2, o, "x").observe(x);
  REQUIRE(sep.rows() == 4);
  CHECK(sep(1, 2) == 6.0);    // channel 0, window 1, frame 2
  CHECK(sep(2, 0) == 100.0);  // channel 1, window 0
  // Mirror padding at the tail: 10 frames in windows of 4 -> frames 8, 9, then 8, 7 (edge not repeated).
  Eigen::MatrixXd y(10, 1);
  for (int t = 0; t < 10; ++t) y(t, 0) = t;
  WindowOptions p;
  p.window = 4;
  const Eigen::MatrixXd tail = WindowLayout(10, 1, p, "y").observe(y);
  REQUIRE(tail.rows() == 3);
  CHECK(tail.row(2).transpose() == Eigen::Vector4d(8, 9, 8, 7));
}

TEST_CASE("windows: a window longer than the recording, hop 0 or a hop longer than the window are refused") {
  WindowOptions o;
  o.window = 101;
  const std::string longer = testing::error_message_of([&] { WindowLayout(100, 1, o, "rec.wav"); });
  CHECK(longer.find("rec.wav: --window 101 is longer than the recording (100 frames)") == 0);
  o.window = 10;
  o.hop = -3;
  CHECK(testing::error_message_of([&] { WindowLayout(100, 1, o, "rec.wav"); }).find("--hop must be at least 1") == 0);
  o.hop = 11;
  CHECK(testing::error_message_of([&] { WindowLayout(100, 1, o, "rec.wav"); }).find("--hop 11 is longer than --window 10") == 0);
  o.window = 0;
  o.hop = 0;
  CHECK(testing::error_message_of([&] { WindowLayout(100, 1, o, "rec.wav"); }).find("--window must be at least 1") == 0);
}
