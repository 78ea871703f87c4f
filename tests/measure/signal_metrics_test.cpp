// SNR, PRD (plain and mean-removed), RMSE and max error on a hand-worked example.
// Source of the formulas: SNR = 10·log10(Σx²/Σ(x−x̂)²); PRD = 100·√(Σ(x−x̂)²/Σx²);
// mean-removed PRD = 100·√(Σ(x−x̂)²/Σ(x−x̄)²), the two PRD variants compared in
// Blanco-Velasco et al., "On the use of PRD and CR parameters for ECG
// compression", Medical Engineering & Physics 27 (2005) (citation from memory).
#include <doctest/doctest.h>

#include <cmath>

#include "core/error.hpp"
#include "measure/signal_metrics.hpp"

using namespace pcasweep;

TEST_CASE("signal metrics: hand-worked SNR, PRD, mean-removed PRD, RMSE, max error") {
  // Channel 0: x = (2, 4, 6, 8), x̂ = (3, 4, 5, 8)
  //   errors (−1, 0, 1, 0): Σe² = 1 + 0 + 1 + 0 = 2, max |e| = 1
  //   Σx² = 4 + 16 + 36 + 64 = 120
  //   x̄ = 20/4 = 5: Σ(x − x̄)² = 9 + 1 + 1 + 9 = 20
  //   RMSE = √(2/4) = √0.5 = 0.70710678…
  //   SNR  = 10·log10(120/2) = 10·log10(60) = 17.78151250… dB
  //   PRD  = 100·√(2/120) = 100·√(1/60) = 12.90994449… %
  //   PRD mean-removed = 100·√(2/20) = 100·√0.1 = 31.62277660… %
  // Channel 1: y = ŷ = (1, 1, 1, 1): no error: SNR = +∞, both PRDs 0 (0/0 taken as 0).
  // Pooled over both channels (8 samples): Σe² = 2, Σx² = 120 + 4 = 124, Σ(x − x̄)² = 20 + 0 = 20
  //   RMSE = √(2/8) = 0.5; SNR = 10·log10(62) = 17.92391689… dB;
  //   PRD = 100·√(2/124) = 12.70001270… %; PRD mean-removed = 31.62277660… %.
  Eigen::MatrixXd x(4, 2), y(4, 2);
  x << 2, 1, 4, 1, 6, 1, 8, 1;
  y << 3, 1, 4, 1, 5, 1, 8, 1;
  const SignalQuality q = compare_signals(x, y);
  REQUIRE(q.channel.size() == 2);
  const auto& c0 = q.channel[0];
  CHECK(c0.rmse == doctest::Approx(0.7071067811865476).epsilon(1e-14));
  CHECK(c0.snr_db == doctest::Approx(17.781512503836436).epsilon(1e-14));
  CHECK(c0.prd_percent == doctest::Approx(12.909944487358056).epsilon(1e-14));
  CHECK(c0.prd_mean_removed_percent == doctest::Approx(31.622776601683793).epsilon(1e-14));
  CHECK(c0.max_abs_error == 1.0);
  const auto& c1 = q.channel[1];
  CHECK(std::isinf(c1.snr_db));
  CHECK(c1.snr_db > 0);
  CHECK(c1.prd_percent == 0.0);
  CHECK(c1.prd_mean_removed_percent == 0.0);
  CHECK(c1.rmse == 0.0);
  CHECK(q.overall.rmse == doctest::Approx(0.5).epsilon(1e-15));
  CHECK(q.overall.snr_db == doctest::Approx(10.0 * std::log10(62.0)).epsilon(1e-14));
  CHECK(q.overall.snr_db == doctest::Approx(17.923916894982537).epsilon(1e-14));
  CHECK(q.overall.prd_percent == doctest::Approx(12.700012700019050).epsilon(1e-13));
  CHECK(q.overall.prd_mean_removed_percent == doctest::Approx(31.622776601683793).epsilon(1e-14));
  CHECK(q.overall.max_abs_error == 1.0);
  // SNR and plain PRD carry the same information: SNR = −20·log10(PRD/100).
  CHECK(c0.snr_db == doctest::Approx(-20.0 * std::log10(c0.prd_percent / 100.0)).epsilon(1e-13));
}

TEST_CASE("signal metrics: a zero original with an error has SNR −∞ and infinite PRD; shapes must match") {
  Eigen::MatrixXd x = Eigen::MatrixXd::Zero(3, 1), y = Eigen::MatrixXd::Ones(3, 1);
  const SignalQuality q = compare_signals(x, y);
  CHECK(std::isinf(q.overall.snr_db));
  CHECK(q.overall.snr_db < 0);
  CHECK(std::isinf(q.overall.prd_percent));
  CHECK_THROWS_AS(compare_signals(x, Eigen::MatrixXd::Zero(4, 1)), Error);
}
