// Tests for present/component_images: one scaling for every picture of a component.
// Source: common practice for showing signed basis vectors (mid-gray = 0,
// symmetric scaling to the largest |entry|); the expected samples below are
// computed by hand from sample = round(127.5 + 127.5·v / max|v|).
#include <doctest/doctest.h>

#include <filesystem>

#include "../support/temp_dir.hpp"
#include "core/error.hpp"
#include "present/component_images.hpp"

using namespace pcasweep;
using pcasweep::testing::TempDir;

TEST_CASE("component_image maps -max, 0, +max to 0, mid-gray, 255 and drops alpha") {
  // A 2x1 gray+alpha observation: (gray, alpha) per pixel. Alpha is not shown,
  // and does not set the scale: its 9 must not shrink the gray values.
  Eigen::VectorXd v(4);
  v << -2.0, 9.0, 1.0, 9.0;
  const Image im = component_image(v, {2, 1, 2});
  REQUIRE(im.channels == 1);
  REQUIRE(im.bit_depth == 8);
  CHECK(im.at(0, 0, 0) == 0);    // -2 / 2 -> 127.5 - 127.5
  CHECK(im.at(1, 0, 0) == 191);  // 127.5 + 63.75 = 191.25
  Eigen::VectorXd zero = Eigen::VectorXd::Zero(3);
  CHECK(component_image(zero, {1, 1, 3}).at(0, 0, 2) == 128);  // round(127.5)
  CHECK_THROWS_AS(component_image(zero, {2, 2, 1}), Error);
}

TEST_CASE("component_image enlarges by nearest neighbour") {
  Eigen::VectorXd v(2);
  v << 1.0, -1.0;
  const Image im = component_image(v, {2, 1, 1}, 3);
  REQUIRE(im.width == 6);
  REQUIRE(im.height == 3);
  for (int y = 0; y < 3; ++y)
    for (int x = 0; x < 6; ++x) CHECK(im.at(x, y, 0) == (x < 3 ? 255 : 0));
}

TEST_CASE("component_images takes the leading columns, none when observations are not images") {
  const Eigen::MatrixXd components = Eigen::MatrixXd::Identity(4, 3);
  CHECK(component_images(components, {2, 2, 1}, 16, 1).size() == 3);
  CHECK(component_images(components, {2, 2, 1}, 2, 1).size() == 2);
  CHECK(component_images(components, {}, 16, 1).empty());
  CHECK(component_images(components, {3, 1, 1}, 16, 1).empty());
  CHECK(component_display_scale({8, 8, 3}) == 8);
  CHECK(component_display_scale({25, 25, 1}) == 3);
  CHECK(component_display_scale({640, 480, 3}) == 1);
}

TEST_CASE("write_component_images writes components/component_NN.png, nothing for bands") {
  TempDir dir;
  const OutputFolder folder(dir.path().string());
  const Eigen::MatrixXd components = Eigen::MatrixXd::Identity(4, 2);
  CHECK(write_component_images(folder, components, {}) == 0);
  CHECK_FALSE(std::filesystem::exists(dir.path() / "components"));
  CHECK(write_component_images(folder, components, {2, 2, 1}) == 2);
  const Image first = read_image((dir.path() / "components" / "component_01.png").string());
  CHECK(first.width == 16);  // 2 pixels enlarged 8x (the cap)
  CHECK(std::filesystem::exists(dir.path() / "components" / "component_02.png"));
}
