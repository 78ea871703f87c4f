// The whole-image and band-stack layouts: exact round trip, geometry, and
// the errors that name the odd file out.
#include <doctest/doctest.h>

#include <functional>

#include "core/error.hpp"
#include "observe/bands.hpp"
#include "observe/whole.hpp"
#include "../support/errors.hpp"

using namespace pcasweep;

namespace {
Image patterned_image(int w, int h, int c, int depth, int salt) {
  Image im = make_image(w, h, c, depth);
  for (std::size_t i = 0; i < im.samples.size(); ++i)
    im.samples[i] = std::uint16_t((i * 37 + std::size_t(salt) * 101) % (depth == 16 ? 65536 : 256));
  return im;
}

void check_round_trip(const Layout& layout, const std::vector<Image>& sources) {
  const Eigen::MatrixXd X = layout.observe(sources);
  REQUIRE(X.rows() == layout.observation_count());
  REQUIRE(X.cols() == layout.dimension());
  const auto folded = layout.fold(X);
  REQUIRE(folded.size() == sources.size());
  for (std::size_t i = 0; i < sources.size(); ++i) {
    const Image back = quantize(folded[i], sources[i]);
    CHECK(back.samples == sources[i].samples);
    CHECK(back.width == sources[i].width);
    CHECK(back.channels == sources[i].channels);
  }
}

}  // namespace

TEST_CASE("whole layout: one row per image, exact round trip") {
  const std::vector<Image> s = {patterned_image(5, 3, 3, 8, 1), patterned_image(5, 3, 3, 8, 2), patterned_image(5, 3, 3, 8, 3)};
  const WholeLayout layout(s, {"a.png", "b.png", "c.png"});
  CHECK(layout.observation_count() == 3);
  CHECK(layout.dimension() == 45);
  CHECK(layout.observation_shape().width == 5);
  CHECK(layout.observation_shape().height == 3);
  const Eigen::MatrixXd X = layout.observe(s);
  CHECK(X(1, (2 * 5 + 4) * 3 + 1) == s[1].at(4, 2, 1));
  check_round_trip(layout, s);
  CHECK(layout.variable_names().size() == 45);
}

TEST_CASE("whole layout: mismatched images and too few are refused, naming the file") {
  const Image a = patterned_image(5, 3, 1, 8, 1);
  std::string m = testing::error_message_of([&] { WholeLayout({a, patterned_image(5, 4, 1, 8, 2)}, {"a.png", "tall.png"}); });
  CHECK(m.find("tall.png") == 0);
  m = testing::error_message_of([&] { WholeLayout({a, a, patterned_image(5, 3, 3, 8, 2)}, {"a.png", "b.png", "rgb.png"}); });
  CHECK(m.find("rgb.png") == 0);
  m = testing::error_message_of([&] { WholeLayout({a, patterned_image(5, 3, 1, 16, 2)}, {"a.png", "deep.png"}); });
  CHECK(m.find("deep.png") == 0);
  m = testing::error_message_of([&] { WholeLayout({a}, {"a.png"}); });
  CHECK(m.find("at least 2 images") != std::string::npos);
}

TEST_CASE("bands layout: one row per pixel, one column per band, exact round trip") {
  const std::vector<Image> s = {patterned_image(4, 3, 1, 16, 1), patterned_image(4, 3, 1, 16, 2), patterned_image(4, 3, 1, 16, 3),
                                patterned_image(4, 3, 1, 16, 4)};
  const BandLayout layout(s, {"b1.png", "b2.png", "b3.png", "b4.png"});
  CHECK(layout.observation_count() == 12);
  CHECK(layout.dimension() == 4);
  CHECK(layout.observation_shape().width == 0);  // a pixel's bands are not a picture
  const Eigen::MatrixXd X = layout.observe(s);
  CHECK(X(2 * 4 + 3, 2) == s[2].at(3, 2, 0));
  check_round_trip(layout, s);
  CHECK(layout.variable_names()[1] == "b2");
}

TEST_CASE("bands layout: colour, size and depth mismatches and too few are refused") {
  const Image a = patterned_image(4, 3, 1, 8, 1);
  std::string m = testing::error_message_of([&] { BandLayout({a, patterned_image(4, 3, 3, 8, 2)}, {"a.png", "rgb.png"}); });
  CHECK(m.find("rgb.png") == 0);
  CHECK(m.find("single-channel") != std::string::npos);
  m = testing::error_message_of([&] { BandLayout({a, patterned_image(3, 3, 1, 8, 2)}, {"a.png", "narrow.png"}); });
  CHECK(m.find("narrow.png") == 0);
  m = testing::error_message_of([&] { BandLayout({a}, {"a.png"}); });
  CHECK(m.find("at least 2") != std::string::npos);
  const Image dot = patterned_image(1, 1, 1, 8, 1);
  m = testing::error_message_of([&] { BandLayout({dot, dot}, {"d1.png", "d2.png"}); });
  CHECK(m.find("at least 2 pixels") != std::string::npos);
}
