// Tests for pipeline/batch_figures.hpp: the figures across files come from
// the typed rows. Expected values are worked by hand from the rows below
// (numpy's linear percentile for p5 of two values: a + 0.05·(b − a)).
#include <doctest/doctest.h>

#include <cmath>

#include "pipeline/batch_figures.hpp"

using namespace pcasweep;

namespace {

SweepRow row(int k, double psnr, double ssim, std::int64_t stored) {
  SweepRow r;
  r.k = k;
  r.quality.psnr_db = psnr;
  r.ssim = ssim;
  r.stored_values = stored;
  return r;
}

// Two swept files and one that failed: a (16×8 gray, ks 1, 2, 4) and
// b (8×8 gray, rank 2: ks 1, 2).
BatchResult two_files() {
  BatchResult r;
  FileResult a;
  a.path = "a.png";
  a.ok = true;
  a.width = 16, a.height = 8, a.channels = 1;
  a.rows = {row(1, 30, 0.80, 100), row(2, 35, 0.90, 200), row(4, 45, 0.99, 400)};
  FileResult b;
  b.path = "b.png";
  b.ok = true;
  b.width = 8, b.height = 8, b.channels = 1;
  b.rows = {row(1, 20, 0.70, 10), row(2, 42, 0.95, 20)};
  FileResult bad;
  bad.path = "bad.png";
  bad.error = "not an image";
  r.files = {a, bad, b};
  return r;
}

}  // namespace

TEST_CASE("batch figures: a file past its rank counts with its last row; the failing at the recommended k") {
  const BatchResult r = two_files();
  CHECK(row_at(r.files[2], 4) == &r.files[2].rows[1]);
  CHECK(row_at(r.files[2], 3) == &r.files[2].rows[1]);
  CHECK(row_at(r.files[0], 3) == nullptr);  // between two of its ks: no row
  CoverageTarget target;
  target.psnr_db = 40;
  target.coverage = 1.0;
  const BatchFigures f = batch_figures(r, target);
  CHECK(f.ks == std::vector<int>{1, 2, 4});
  CHECK(f.has_ssim);
  CHECK_FALSE(f.has_bytes);
  REQUIRE(f.aggregates.size() == 3);
  const KAggregate& k4 = f.aggregates[2];
  CHECK(k4.subset == "all");
  CHECK(k4.k == 4);
  CHECK(k4.files == 2);
  CHECK(k4.psnr_db.min == 42);
  CHECK(k4.psnr_db.p5 == doctest::Approx(42.15));
  CHECK(k4.psnr_db.median == doctest::Approx(43.5));
  CHECK(k4.stored_values == 420);
  CHECK(k4.raw_samples == 192);
  CHECK(k4.meeting == 2);
  CHECK(f.aggregates[1].meeting == 1);  // k = 2: only b reaches 40 dB
  CHECK(f.recommendation.found);
  CHECK(f.recommendation.k == 4);
  CHECK(f.failing.empty());
  CHECK(f.recommended_stored_values == 420);
  CHECK(f.raw_samples == 192);

  target.coverage = 0.5;
  const BatchFigures half = batch_figures(r, target);
  CHECK(half.recommendation.k == 2);
  REQUIRE(half.failing.size() == 1);
  CHECK(half.failing[0].path == "a.png");
  CHECK(half.failing[0].quality.psnr_db == 35);
  CHECK(half.failing[0].quality.ssim == doctest::Approx(0.90));
}

TEST_CASE("batch figures: a shared basis is counted once, and training and held-out files apart") {
  BatchResult r = two_files();
  r.files[0].training = true;
  r.shared = SharedBasisInfo{};
  r.shared->dimension = 4;
  CoverageTarget target;
  const BatchFigures f = batch_figures(r, target);
  std::vector<std::string> subsets;
  for (const auto& a : f.aggregates) subsets.push_back(a.subset + std::to_string(a.k));
  CHECK(subsets == std::vector<std::string>{"all1", "all2", "all4", "training1", "training2", "training4",
                                            "held_out1", "held_out2", "held_out4"});
  CHECK(f.aggregates[0].stored_values == 110 + 1 * 4 + 4);  // the basis's k·d + d once
  CHECK(f.aggregates[3].files == 1);
  CHECK(f.aggregates[3].psnr_db.mean == 30);
  CHECK(f.aggregates[6].psnr_db.mean == 20);
  CHECK(stored_total(r, 2) == 220 + 2 * 4 + 4);
  CHECK(std::isnan(stored_total(r, 3)));  // a has no row at 3
}
