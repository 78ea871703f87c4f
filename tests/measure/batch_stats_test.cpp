// Tests for measure/batch_stats.hpp. Percentile values: numpy.percentile's default
// ("linear", Hyndman & Fan type 7) worked by hand from its definition
// h = (n-1)p/100 — e.g. [1,2,3,4] at p = 5: h = 0.15, 1 + 0.15·1 = 1.15.
// The recommendation is compared with an exhaustive loop written here.
#include <doctest/doctest.h>

#include <cmath>
#include <random>

#include "measure/batch_stats.hpp"

using namespace pcasweep;

TEST_CASE("percentile_linear follows numpy's linear rule") {
  CHECK(percentile_linear({4, 1, 3, 2}, 5) == doctest::Approx(1.15));
  CHECK(percentile_linear({4, 1, 3, 2}, 50) == doctest::Approx(2.5));
  CHECK(percentile_linear({7}, 5) == 7);
  CHECK(std::isnan(percentile_linear({}, 50)));
  const double inf = INFINITY;
  CHECK(percentile_linear({1, 2, inf}, 50) == 2);   // lands exactly on an entry
  CHECK(std::isinf(percentile_linear({1, 2, inf}, 75)));  // interpolates towards +inf
  const Spread s = spread_of({1, 2, 3, 4, NAN});
  CHECK(s.count == 4);
  CHECK(s.min == 1);
  CHECK(s.median == doctest::Approx(2.5));
  CHECK(s.mean == doctest::Approx(2.5));
}

TEST_CASE("recommend_k equals an exhaustive search on random data") {
  std::mt19937 rng(3);
  std::uniform_real_distribution<double> u(20, 50);
  for (int trial = 0; trial < 50; ++trial) {
    const std::vector<int> ks = {1, 2, 4, 8, 16};
    std::vector<std::vector<FileQuality>> q(ks.size(), std::vector<FileQuality>(20));
    for (int f = 0; f < 20; ++f) {
      double p = u(rng) - 20;  // quality rises with k
      for (std::size_t i = 0; i < ks.size(); ++i) {
        p += u(rng) / 5;
        q[i][f].psnr_db = p;
      }
    }
    CoverageTarget t;
    t.psnr_db = 35;
    t.coverage = 0.8;
    const Recommendation r = recommend_k(ks, q, t);
    int want = 0;
    for (std::size_t i = 0; i < ks.size() && !want; ++i) {
      int meeting = 0;
      for (const auto& fq : q[i]) meeting += fq.psnr_db >= 35;
      if (meeting >= 16) want = ks[i];
    }
    CHECK(r.found == (want != 0));
    if (want) {
      CHECK(r.k == want);
      // failing files worst first
      for (std::size_t j = 1; j < r.failing.size(); ++j)
        CHECK(q[r.k_index][r.failing[j - 1]].psnr_db <= q[r.k_index][r.failing[j]].psnr_db);
    }
  }
}

TEST_CASE("an SSIM target is applied with the PSNR target; NaN never meets") {
  CoverageTarget t;
  t.psnr_db = 30;
  t.ssim = 0.9;
  CHECK(meets_target({31, 0.95}, t));
  CHECK_FALSE(meets_target({31, 0.85}, t));
  CHECK_FALSE(meets_target({29, 0.95}, t));
  CHECK_FALSE(meets_target({31, NAN}, t));
}
