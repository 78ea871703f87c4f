// SVG charts (report/svg): layout helpers and document structure.
#include <doctest/doctest.h>

#include "report/svg.hpp"

using namespace pcasweep;

TEST_CASE("nice ticks step by 1, 2 or 5 times a power of ten") {
  const auto t = nice_ticks(0.0, 1.0, 5);
  REQUIRE(t.size() == 6);
  CHECK(t[1] == doctest::Approx(0.2));
  CHECK(t.back() == doctest::Approx(1.0));
  const auto u = nice_ticks(3, 97, 6);  // step 20 (raw 15.7 rounds up to 20)
  REQUIRE(!u.empty());
  CHECK(u.front() == doctest::Approx(20));
  CHECK(u[1] - u[0] == doctest::Approx(20));
}

TEST_CASE("tick labels are short") {
  CHECK(tick_label(20) == "20");
  CHECK(tick_label(0.25) == "0.25");
  CHECK(tick_label(1e6) == "1e6");
  CHECK(tick_label(2.5e-4) == "0.00025");
  CHECK(tick_label(2.5e-5) == "2.5e-5");
}

TEST_CASE("a chart is one SVG document with escaped text, series, legend and log ticks") {
  ChartSpec c;
  c.title = "R&D <test>";
  c.x_label = "k";
  c.y_label = "value";
  c.log_y = true;
  ChartSeries s;
  s.name = "eigenvalue";
  s.x = {1, 2, 3, 4};
  s.y = {1000, 10, 0, 0.1};  // 0 cannot sit on a log axis: skipped, line broken
  s.style.marker = MarkerShape::circle;
  c.series.push_back(s);
  c.lines.push_back({true, 2.0, "elbow", "#E69F00", "4 4"});
  const std::string svg = render_svg_chart(c);
  CHECK(svg.rfind("<?xml", 0) == 0);
  CHECK(svg.find("</svg>") != std::string::npos);
  CHECK(svg.find("R&amp;D &lt;test&gt;") != std::string::npos);
  CHECK(svg.find(">eigenvalue</text>") != std::string::npos);  // legend entry
  CHECK(svg.find(">1000</text>") != std::string::npos);        // decade tick
  CHECK(svg.find(">0.1</text>") != std::string::npos);
  CHECK(svg.find(">elbow</text>") != std::string::npos);
  // Three drawable points (the zero is skipped) give three circle markers.
  std::size_t circles = 0;
  for (std::size_t p = svg.find("<circle"); p != std::string::npos; p = svg.find("<circle", p + 1)) ++circles;
  CHECK(circles == 3 + 1);  // + the legend's sample marker
}

TEST_CASE("Okabe-Ito palette has its eight colours") {
  const auto& p = okabe_ito_palette();
  REQUIRE(p.size() == 8);
  CHECK(p[1] == "#E69F00");  // orange (Okabe & Ito 2008)
  CHECK(p[5] == "#0072B2");  // blue
}

TEST_CASE("long legend entries wrap onto as many lines as they need, none wider than the panel") {
  // The rate-distortion chart's reference line once ran out of the 960-px
  // document: only two legend lines were allowed, and line labels not wrapped.
  ChartSpec c;
  c.title = "wrap";
  ChartSeries s;
  s.name = "Gaussian R(D) from the eigenvalues (reference; real patches can beat it)";
  s.x = {0, 1};
  s.y = {0, 1};
  c.series.push_back(s);
  c.lines.push_back({true, 0.5, "a vertical reference line whose label is also far too long for one row", "#000",
                     "4 4", true});
  const std::string svg = render_svg_chart(c);
  for (const char* row : {">Gaussian R(D) from the<", ">eigenvalues (reference;<", ">real patches can beat it)<",
                          ">a vertical reference line<", ">whose label is also far too<", ">long for one row<"}) {
    INFO(row);
    CHECK(svg.find(row) != std::string::npos);
  }
}
