// report/table: CSV follows RFC 4180 quoting (the published CSV format); the
// console rendering leaves out columns with no value in any row.
#include <doctest/doctest.h>

#include <limits>

#include "report/table.hpp"

using pcasweep::Table;

TEST_CASE("table: CSV quotes text with commas and quotes, writes inf, keeps empty columns") {
  Table t;
  t.columns = {"k", "name", "psnr_db", "bytes"};
  t.add_row({std::int64_t(1), std::string("a,\"b\""), std::numeric_limits<double>::infinity(), std::monostate{}});
  // RFC 4180 section 2: a field holding commas or quotes is quoted, inner quotes doubled.
  CHECK(pcasweep::render_csv(t) == "k,name,psnr_db,bytes\n1,\"a,\"\"b\"\"\",inf,\n");
}

TEST_CASE("table: the console leaves out a column that is empty in every row") {
  Table t;
  t.columns = {"k", "bytes", "mse"};
  t.add_row({std::int64_t(1), std::monostate{}, 2.5});
  t.add_row({std::int64_t(2), std::monostate{}, 1.25});
  const std::string text = pcasweep::render_console(t, 2);
  CHECK(text.find("bytes") == std::string::npos);
  CHECK(text.find("mse") != std::string::npos);
  CHECK(text.find("1.25") != std::string::npos);
  t.rows[0][1] = std::int64_t(100);  // one value is enough to show the column
  CHECK(pcasweep::render_console(t, 2).find("bytes") != std::string::npos);
}
