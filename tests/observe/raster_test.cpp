// round_half_away (observe/raster.hpp) against std::round, whose result the C
// standard defines (C11 7.12.9.6: round half away from zero, whatever the
// current rounding mode): the written samples and the coded coefficients
// depend on the two being the same value for every double.
#include <doctest/doctest.h>

#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <random>
#include <vector>

#include "observe/raster.hpp"

using namespace pcasweep;

namespace {
bool same_bits(double a, double b) {
  if (std::isnan(a) || std::isnan(b)) return std::isnan(a) && std::isnan(b);
  std::uint64_t x, y;
  std::memcpy(&x, &a, 8);
  std::memcpy(&y, &b, 8);
  return x == y;  // also tells −0 from +0
}
}  // namespace

TEST_CASE("round_half_away equals std::round: ties, their neighbours, huge values, specials") {
  std::vector<double> xs = {0.0, -0.0, 0.5, -0.5, 1.5, -1.5, 2.5, -2.5, 254.5, 255.5, 65534.5, 0.49999999999999994,
                            -0.49999999999999994, 4503599627370495.5, 4503599627370496.0, 9007199254740993.0,
                            std::numeric_limits<double>::denorm_min(), std::numeric_limits<double>::max(),
                            std::numeric_limits<double>::infinity(), -std::numeric_limits<double>::infinity(),
                            std::numeric_limits<double>::quiet_NaN()};
  for (double t = -300.5; t <= 300.5; t += 1.0) {
    xs.push_back(t);
    xs.push_back(std::nextafter(t, -1e9));
    xs.push_back(std::nextafter(t, 1e9));
  }
  std::mt19937_64 g(7);
  std::uniform_real_distribution<double> u(-70000.0, 70000.0);
  for (int i = 0; i < 200000; ++i) xs.push_back(u(g));
  for (int e = -60; e <= 60; ++e) xs.push_back(std::ldexp(1.0, e) * 1.5);
  for (double x : xs) {
    CAPTURE(x);
    CHECK(same_bits(round_half_away(x), std::round(x)));
  }
}
