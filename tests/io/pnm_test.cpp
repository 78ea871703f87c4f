// Binary PNM reading. Source: the Netpbm format specification (pgm(5), ppm(5)):
// header "P5"/"P6", width, height, maxval separated by whitespace, '#' comments
// allowed, one whitespace byte, then the raster; samples take 2 bytes, most
// significant byte first, when maxval > 255.
#include <doctest/doctest.h>

#include <string>

#include "core/error.hpp"
#include "io/image.hpp"

using pcasweep::decode_image;

TEST_CASE("pnm: 16-bit PGM samples are read most significant byte first") {
  // 2x1 gray, maxval 65535, samples 3 and 0x1234.
  const std::string bytes = std::string("P5\n# comment\n2 1\n65535\n") + std::string("\x00\x03\x12\x34", 4);
  const pcasweep::Image image = decode_image(bytes, "t.pgm");
  CHECK(image.bit_depth == 16);
  CHECK(image.channels == 1);
  REQUIRE(image.samples.size() == 2);
  CHECK(image.samples[0] == 3);
  CHECK(image.samples[1] == 0x1234);
}

TEST_CASE("pnm: 8-bit PPM reads as RGB") {
  const std::string bytes = std::string("P6 1 2 255\n") + std::string("\x01\x02\x03\xfd\xfe\xff", 6);
  const pcasweep::Image image = decode_image(bytes, "t.ppm");
  CHECK(image.bit_depth == 8);
  CHECK(image.channels == 3);
  CHECK(image.height == 2);
  CHECK(image.samples[5] == 255);
}

TEST_CASE("pnm: a truncated raster and a sample above maxval are refused, naming the file") {
  const std::string truncated = std::string("P5\n4 4\n255\n") + std::string(15, '\x01');  // needs 16
  CHECK_THROWS_WITH_AS(decode_image(truncated, "cut.pgm"), doctest::Contains("cut.pgm: truncated PNM"),
                       pcasweep::Error);
  const std::string above = std::string("P5 1 1 100\n") + std::string("\x65", 1);  // 101 > 100
  CHECK_THROWS_AS(decode_image(above, "above.pgm"), pcasweep::Error);
}
