// pcasweep/report/svg.hpp — small standalone SVG line/marker charts.
//
// Contract: a ChartSpec is data already computed elsewhere (named series of
// (x, y) points, reference lines, labels); render_svg_chart lays it out as
// one self-contained SVG document: title, axes with "nice" ticks (1-2-5
// steps; decades on a log axis), axis labels, grid, series drawn as lines
// and/or markers, labelled reference lines, and a legend in a panel to the
// right of the plot so it never covers data. Colours come from the
// Okabe–Ito palette (safe for the common colour-vision deficiencies);
// series also differ by marker shape and dash so they survive grayscale.
// Points with a non-finite coordinate (or y ≤ 0 on a log axis) are skipped
// and break the line. The report stage never computes: no fitting, no
// smoothing. Text is XML-escaped. Throws nothing for empty charts (it draws
// empty axes with the note "no data").
#pragma once

#include <cmath>
#include <limits>
#include <string>
#include <vector>

namespace pcasweep {

enum class MarkerShape { none, circle, square, triangle, triangle_down, diamond, cross, plus };

struct SeriesStyle {
  int palette_index = -1;      // Okabe–Ito colour (0..7); -1 = next in order
  std::string colour;          // explicit "#rrggbb", overrides palette_index when set
  bool line = true;            // join the points
  double line_width = 2.0;     // in px
  std::string dash;            // SVG stroke-dasharray, e.g. "6 4"; empty = solid
  MarkerShape marker = MarkerShape::none;
  double marker_size = 4.0;    // marker half-size in px
  bool hollow = false;         // marker outline only (lets coincident markers show)
};

struct ChartSeries {
  std::string name;            // legend text
  std::vector<double> x, y;    // same length
  SeriesStyle style;
  bool in_legend = true;
};

struct ReferenceLine {
  bool vertical = true;        // true: x = value; false: y = value
  double value = 0.0;
  std::string label;           // drawn beside the line (empty: none)
  std::string colour = "#555555";
  std::string dash = "5 4";
  bool in_legend = false;      // true: the label goes into the legend instead of beside the line
};

struct ChartSpec {
  std::string title;
  std::string subtitle;        // second line under the title (optional)
  std::string x_label, y_label;
  bool log_y = false;
  bool integer_x = false;      // x ticks only at whole numbers
  // Axis limits; NaN = from the data (with a small margin on linear axes).
  double x_min = std::numeric_limits<double>::quiet_NaN(), x_max = std::numeric_limits<double>::quiet_NaN();
  double y_min = std::numeric_limits<double>::quiet_NaN(), y_max = std::numeric_limits<double>::quiet_NaN();
  int width = 960, height = 540;   // whole picture in px (legend panel included)
  std::vector<ChartSeries> series;
  std::vector<ReferenceLine> lines;
  std::string note;            // footnote under the plot (optional)
};

// The eight Okabe–Ito colours as "#rrggbb": black, orange, sky blue, bluish
// green, yellow, blue, vermillion, reddish purple.
const std::vector<std::string>& okabe_ito_palette();

// "Nice" tick values covering [lo, hi] with about `target` steps of 1, 2 or 5 × 10^n.
std::vector<double> nice_ticks(double lo, double hi, int target);

// Tick text: integers plainly, otherwise up to 4 significant digits; very
// large or small magnitudes as 1e5, 2.5e-4.
std::string tick_label(double value);

// The chart as a complete SVG document (UTF-8 text).
std::string render_svg_chart(const ChartSpec& chart);

}  // namespace pcasweep
