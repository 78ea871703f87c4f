// Tests for present/batch_tables.hpp: batch.csv's columns are the union of
// the files' sweep tables, aggregate.csv's follow the figures at hand.
#include <doctest/doctest.h>

#include "present/batch_tables.hpp"

using namespace pcasweep;

namespace {

FileResult swept(const std::string& path, std::vector<std::string> channels, double psnr, std::int64_t bytes) {
  FileResult f;
  f.path = path;
  f.ok = true;
  f.width = 8, f.height = 8, f.channels = int(channels.size());
  f.channel_names = std::move(channels);
  SweepRow r;
  r.k = 1;
  r.quality.psnr_db = psnr;
  r.quality.channel_psnr_db.assign(f.channel_names.size(), psnr);
  r.ssim = NAN;
  r.stored_values = 70;
  r.bytes = bytes;
  f.rows = {r};
  return f;
}

}  // namespace

TEST_CASE("batch_table: the union of the files' columns, empty where a file has none") {
  BatchResult r;
  r.files = {swept("gray.png", {"gray"}, 30, -1), swept("rgb.png", {"red", "green", "blue"}, 32, -1)};
  const Table t = batch_table(r);
  REQUIRE(t.columns.size() >= 4);
  CHECK(t.columns.front() == "file");
  CHECK(t.columns[1] == "k");
  CHECK(t.columns.back() == "psnr_db_blue");
  REQUIRE(t.rows.size() == 2);
  CHECK(std::holds_alternative<std::monostate>(t.rows[0].back()));  // gray has no per-channel column
  CHECK(std::get<double>(t.rows[1].back()) == 32);
  CHECK(std::get<std::string>(t.rows[0][0]) == "gray.png");
}

TEST_CASE("aggregate_table: ssim columns only where measured, codec columns only where coded") {
  BatchResult r;
  r.files = {swept("a.png", {"gray"}, 30, -1)};
  CoverageTarget target;
  target.psnr_db = 40;  // batch's --target-psnr default (a CLI default, not the type's)
  Table t = aggregate_table(batch_figures(r, target));
  CHECK(t.columns == std::vector<std::string>{"subset", "k", "files", "psnr_db_min", "psnr_db_p5", "psnr_db_median",
                                              "psnr_db_mean", "stored_values_total", "raw_samples_total",
                                              "stored_ratio", "files_meeting_target", "share_meeting_target"});
  r.files = {swept("a.png", {"gray"}, 30, 40)};
  r.files[0].rows[0].ssim = 0.5;
  t = aggregate_table(batch_figures(r, target));
  CHECK(t.columns.size() == 18);
  CHECK(t.columns[7] == "ssim_min");
  CHECK(t.columns[14] == "bytes_total");
  REQUIRE(t.rows.size() == 1);
  CHECK(std::get<std::int64_t>(t.rows[0][14]) == 40);
  CHECK(std::get<double>(t.rows[0][15]) == doctest::Approx(8.0 * 40 / 64));
  CHECK(std::get<std::int64_t>(t.rows[0][16]) == 0);  // 30 dB is below 40 dB
}
