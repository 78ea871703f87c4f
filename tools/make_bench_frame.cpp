// make_bench_frame — a seeded generator of large, photo-like Tern Point frames for benchmarks.
//
// Usage: make_bench_frame OUT.png --width W --height H [--channels 3|1] [--bit-depth 8|16]
//                         [--seed N] [--scene dawn|midday|dusk|overcast|nir]
//   defaults: --channels 3 --bit-depth 8 --seed 20261202 --scene dawn
//
// Contract: paints one invented horizon-camera frame of the (invented) Tern Point field
// station, W×H pixels (16..65535 each, W·H·channels ≤ 2^30 samples), and writes it as PNG
// through pcasweep::write_png (8-bit by stb_image_write, 16-bit by libpng). The scene is
// laid out in "design units" (the frame is 1000 units tall, W/H·1000 wide; positions are
// fractions of that width, sizes are units), so any size shows the same scene, and every
// texture (clouds, waves, sand) adds octaves down to about a pixel, so detail scales with
// the pixel count. Objects are kept as a display list (rectangles, strokes, polygons,
// ellipses, glows) bucketed by bands of rows; each row is painted on its own (OpenMP over
// rows) from pure functions of (seed, x, y): the scene's random layout comes from
// std::mt19937_64 seeded with N and our own distributions, per-pixel grain and sensor noise
// from integer hashing (Box–Muller on hashed bits), so the bytes are the same for the same
// seed on the same build whatever the thread count. Memory: the Image (2 bytes a sample)
// plus what write_png needs to encode it. Gray frames (--channels 1) are the Rec. 601 luma
// of the colour scene, except `nir`, which is painted as a near-infrared band.
// Exit 0 on success, 2 on a bad command line, 1 when the file cannot be written.
//
// The painting functions follow tools/make_samples.cpp (the small bundled samples): sky
// gradient with sun glow, soft fractal clouds lit from the sun, sea with perspective waves
// and glints, a hazy headland, sand and dunes with grass, station buildings with windows and
// roof lines, a lattice mast with guy wires, fences, a sign with blocky lettering, a
// vignette, and read noise plus shot noise.
#include <omp.h>

#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <iostream>
#include <map>
#include <random>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "io/image.hpp"
#include "paint_noise.hpp"

namespace {

constexpr std::uint64_t kDefaultSeed = 20261202;
using namespace paint;

// ---------------------------------------------------------------- numbers (and tools/paint_noise.hpp)

// Hash of a pixel (and a stream number) to 64 bits.
std::uint64_t pixel_hash(std::uint64_t seed, std::int64_t x, std::int64_t y, std::uint64_t stream) {
  return mix64(seed ^ mix64(std::uint64_t(x) * 0x9E3779B97F4A7C15ull ^
                            mix64(std::uint64_t(y) * 0xD1B54A32D192ED03ull + stream)));
}

// Standard normal from one 64-bit hash by the Box–Muller transform (two 26-bit halves;
// (0, 1] for the logarithm).
double normal_from_hash(std::uint64_t h) {
  const double u1 = (double(h >> 38) + 1.0) * 0x1.0p-26;
  const double u2 = double((h >> 12) & 0x3FFFFFFull) * 0x1.0p-26;
  return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * kPi * u2);
}

// Octaves of an fbm whose first cell is `cell_px` pixels wide until the finest is ~1.5 px.
int octaves_to_pixel(double cell_px, int at_least, int at_most) {
  int o = 1;
  while (cell_px > 1.5 && o < at_most) cell_px /= 2.03, ++o;
  return std::clamp(o, at_least, at_most);
}

// ---------------------------------------------------------------- colour

struct Rgb {
  double r = 0, g = 0, b = 0;
};
Rgb rgb(double r, double g, double b) { return {r, g, b}; }
Rgb gray(double v) { return {v, v, v}; }
Rgb mix(const Rgb& a, const Rgb& b, double t) { return {lerp(a.r, b.r, t), lerp(a.g, b.g, t), lerp(a.b, b.b, t)}; }
Rgb operator+(const Rgb& a, const Rgb& b) { return {a.r + b.r, a.g + b.g, a.b + b.b}; }
Rgb operator*(const Rgb& a, double s) { return {a.r * s, a.g * s, a.b * s}; }

// ---------------------------------------------------------------- display list

// One painted object in pixel coordinates. Painted in list order over the background.
struct Prim {
  enum Kind { rect, line, poly, ellipse, glow } kind;
  Rgb color;
  double opacity = 1.0;
  double x0 = 0, y0 = 0, x1 = 0, y1 = 0;  // bounding box (for rect: the rectangle)
  double ax = 0, ay = 0, bx = 0, by = 0, width = 1;  // line: from a to b; ellipse/glow: centre a, radii b
  int first = 0, count = 0;  // poly: vertices in Scene::vertices
};

struct Point {
  double x, y;
};

// Lettering: blocky 5x7 capitals (the same glyph set as make_samples).
const std::map<char, std::array<const char*, 7>>& glyphs() {
  static const std::map<char, std::array<const char*, 7>> g = {
      {'A', {" ### ", "#   #", "#   #", "#####", "#   #", "#   #", "#   #"}},
      {'B', {"#### ", "#   #", "#   #", "#### ", "#   #", "#   #", "#### "}},
      {'C', {" ####", "#    ", "#    ", "#    ", "#    ", "#    ", " ####"}},
      {'D', {"#### ", "#   #", "#   #", "#   #", "#   #", "#   #", "#### "}},
      {'E', {"#####", "#    ", "#    ", "#### ", "#    ", "#    ", "#####"}},
      {'F', {"#####", "#    ", "#    ", "#### ", "#    ", "#    ", "#    "}},
      {'G', {" ####", "#    ", "#    ", "#  ##", "#   #", "#   #", " ####"}},
      {'H', {"#   #", "#   #", "#   #", "#####", "#   #", "#   #", "#   #"}},
      {'I', {"#####", "  #  ", "  #  ", "  #  ", "  #  ", "  #  ", "#####"}},
      {'K', {"#   #", "#  # ", "# #  ", "##   ", "# #  ", "#  # ", "#   #"}},
      {'L', {"#    ", "#    ", "#    ", "#    ", "#    ", "#    ", "#####"}},
      {'M', {"#   #", "## ##", "# # #", "# # #", "#   #", "#   #", "#   #"}},
      {'N', {"#   #", "##  #", "# # #", "#  ##", "#   #", "#   #", "#   #"}},
      {'O', {" ### ", "#   #", "#   #", "#   #", "#   #", "#   #", " ### "}},
      {'P', {"#### ", "#   #", "#   #", "#### ", "#    ", "#    ", "#    "}},
      {'R', {"#### ", "#   #", "#   #", "#### ", "# #  ", "#  # ", "#   #"}},
      {'S', {" ####", "#    ", "#    ", " ### ", "    #", "    #", "#### "}},
      {'T', {"#####", "  #  ", "  #  ", "  #  ", "  #  ", "  #  ", "  #  "}},
      {'U', {"#   #", "#   #", "#   #", "#   #", "#   #", "#   #", " ### "}},
      {'V', {"#   #", "#   #", "#   #", "#   #", " # # ", " # # ", "  #  "}},
      {'W', {"#   #", "#   #", "#   #", "# # #", "# # #", "## ##", "#   #"}},
      {'Y', {"#   #", "#   #", " # # ", "  #  ", "  #  ", "  #  ", "  #  "}},
      {'0', {" ### ", "#   #", "#  ##", "# # #", "##  #", "#   #", " ### "}},
      {'1', {"  #  ", " ##  ", "  #  ", "  #  ", "  #  ", "  #  ", " ### "}},
      {'2', {" ### ", "#   #", "    #", "   # ", "  #  ", " #   ", "#####"}},
      {'3', {"#### ", "    #", "    #", " ### ", "    #", "    #", "#### "}},
      {'4', {"   # ", "  ## ", " # # ", "#  # ", "#####", "   # ", "   # "}},
      {'7', {"#####", "    #", "   # ", "  #  ", " #   ", " #   ", " #   "}},
      {'9', {" ### ", "#   #", "#   #", " ####", "    #", "    #", " ### "}},
      {'-', {"     ", "     ", "     ", "#####", "     ", "     ", "     "}},
      {'.', {"     ", "     ", "     ", "     ", "     ", "     ", "  #  "}},
      {' ', {"     ", "     ", "     ", "     ", "     ", "     ", "     "}},
  };
  return g;
}
double text_width(const std::string& text, double cell) { return text.empty() ? 0 : (text.size() * 6 - 1) * cell; }

// ---------------------------------------------------------------- the scene

// Colours and lighting of one kind of frame.
struct Style {
  Rgb zenith, horizon_sky, sun_color;
  double sun_fx, sun_dy;  // sun at this fraction of the width, this many units above the horizon
  double sun_radius, glow_radius, glow_strength;
  struct Clouds {
    double top, bottom;  // units above the horizon (top > bottom)
    double scale_x, scale_y, cover, softness;
    Rgb shadow, lit;
    double opacity;
  };
  std::vector<Clouds> clouds;
  Rgb sea_deep, sea_reflection, glint;
  double glint_strength, glint_width, wave_contrast, calm;
  Rgb headland;
  Rgb sand, dark_sand, foam, dune, dark_dune, grass;
  Rgb wall_a, wall_b, wall_c, roof_a, roof_b, trim, glass, lamp;
  double lit_windows;
  Rgb mast, wire, post, fence_wire, board, ink;
  bool beacon, stars;
  double vignette, read_noise, shot_gain;
  double exposure;  // overall brightness factor
};

Style style_for(const std::string& scene) {
  Style s;
  if (scene == "dawn") {
    s = {rgb(0.20, 0.29, 0.50), rgb(0.98, 0.74, 0.52), rgb(1.0, 0.86, 0.62), 0.30, 45, 17, 150, 0.55,
         {{470, 240, 0.0030, 0.011, 0.42, 0.12, rgb(0.45, 0.42, 0.55), rgb(1.0, 0.72, 0.62), 0.9},
          {230, 10, 0.0060, 0.045, 0.30, 0.08, rgb(0.62, 0.52, 0.58), rgb(1.0, 0.80, 0.62), 0.7}},
         rgb(0.10, 0.20, 0.30), rgb(0.75, 0.62, 0.58), rgb(1.0, 0.86, 0.62), 0.9, 20, 0.9, 0.0,
         rgb(0.55, 0.50, 0.60),
         rgb(0.86, 0.72, 0.56), rgb(0.55, 0.44, 0.36), rgb(0.98, 0.93, 0.88), rgb(0.74, 0.64, 0.46),
         rgb(0.44, 0.42, 0.28), rgb(0.33, 0.40, 0.22),
         rgb(0.90, 0.88, 0.84), rgb(0.70, 0.74, 0.78), rgb(0.78, 0.64, 0.48), rgb(0.55, 0.20, 0.16),
         rgb(0.30, 0.32, 0.36), rgb(0.97, 0.97, 0.95), rgb(0.12, 0.16, 0.22), rgb(1.0, 0.85, 0.55), 0.1,
         rgb(0.22, 0.20, 0.24), rgb(0.18, 0.16, 0.20), rgb(0.36, 0.28, 0.22), rgb(0.30, 0.28, 0.28),
         rgb(0.94, 0.93, 0.88), rgb(0.10, 0.22, 0.40), false, false, 0.25, 0.0045, 0.00008, 1.0};
  } else if (scene == "midday") {
    s = {rgb(0.18, 0.38, 0.74), rgb(0.74, 0.84, 0.93), rgb(1.0, 0.97, 0.90), 0.78, 560, 0, 260, 0.22,
         {{480, 120, 0.0050, 0.0085, 0.44, 0.09, rgb(0.60, 0.64, 0.72), rgb(1.0, 1.0, 1.0), 0.97}},
         rgb(0.04, 0.22, 0.30), rgb(0.56, 0.68, 0.78), rgb(1.0, 1.0, 0.95), 0.5, 28, 0.7, 0.3,
         rgb(0.42, 0.52, 0.58),
         rgb(0.90, 0.83, 0.68), rgb(0.62, 0.55, 0.44), rgb(0.97, 0.98, 0.99), rgb(0.80, 0.74, 0.56),
         rgb(0.52, 0.50, 0.34), rgb(0.42, 0.50, 0.26),
         rgb(0.94, 0.94, 0.92), rgb(0.62, 0.16, 0.14), rgb(0.86, 0.86, 0.80), rgb(0.25, 0.25, 0.28),
         rgb(0.35, 0.35, 0.38), rgb(0.98, 0.98, 0.96), rgb(0.10, 0.14, 0.20), rgb(1.0, 0.85, 0.55), 0.0,
         rgb(0.30, 0.30, 0.33), rgb(0.35, 0.35, 0.37), rgb(0.40, 0.32, 0.25), rgb(0.45, 0.43, 0.42),
         rgb(0.97, 0.97, 0.95), rgb(0.10, 0.25, 0.50), false, false, 0.2, 0.004, 0.00006, 1.0};
  } else if (scene == "dusk") {
    s = {rgb(0.04, 0.06, 0.19), rgb(0.96, 0.55, 0.32), rgb(1.0, 0.52, 0.24), 0.25, -60, 0, 190, 0.5,
         {{430, 60, 0.0018, 0.018, 0.30, 0.12, rgb(0.22, 0.16, 0.30), rgb(1.0, 0.58, 0.48), 0.55}},
         rgb(0.03, 0.05, 0.12), rgb(0.62, 0.40, 0.36), rgb(1.0, 0.55, 0.30), 0.22, 52, 0.3, 0.85,
         rgb(0.10, 0.08, 0.14),
         rgb(0.16, 0.12, 0.13), rgb(0.08, 0.06, 0.08), rgb(0.45, 0.35, 0.38), rgb(0.12, 0.10, 0.11),
         rgb(0.06, 0.05, 0.06), rgb(0.07, 0.06, 0.07),
         rgb(0.09, 0.08, 0.11), rgb(0.10, 0.09, 0.12), rgb(0.08, 0.08, 0.10), rgb(0.06, 0.05, 0.07),
         rgb(0.06, 0.05, 0.07), rgb(0.12, 0.11, 0.13), rgb(0.05, 0.05, 0.08), rgb(1.0, 0.74, 0.38), 0.6,
         rgb(0.05, 0.04, 0.07), rgb(0.06, 0.05, 0.08), rgb(0.05, 0.04, 0.06), rgb(0.05, 0.04, 0.06),
         rgb(0.30, 0.26, 0.24), rgb(0.04, 0.04, 0.05), true, true, 0.3, 0.006, 0.00003, 1.0};
  } else if (scene == "overcast") {
    s = {rgb(0.52, 0.55, 0.60), rgb(0.80, 0.81, 0.82), rgb(1.0, 1.0, 1.0), 0.6, 300, 0, 300, 0.08,
         {{480, 20, 0.0022, 0.010, 0.70, 0.18, rgb(0.50, 0.52, 0.56), rgb(0.86, 0.87, 0.89), 0.9},
          {200, 15, 0.0050, 0.040, 0.40, 0.10, rgb(0.58, 0.60, 0.63), rgb(0.80, 0.81, 0.83), 0.6}},
         rgb(0.14, 0.20, 0.22), rgb(0.62, 0.66, 0.68), rgb(0.95, 0.95, 0.95), 0.12, 40, 1.0, 0.0,
         rgb(0.45, 0.48, 0.50),
         rgb(0.72, 0.66, 0.56), rgb(0.46, 0.42, 0.36), rgb(0.93, 0.94, 0.94), rgb(0.60, 0.56, 0.44),
         rgb(0.36, 0.36, 0.26), rgb(0.30, 0.36, 0.22),
         rgb(0.84, 0.84, 0.82), rgb(0.58, 0.62, 0.66), rgb(0.70, 0.58, 0.44), rgb(0.40, 0.18, 0.15),
         rgb(0.28, 0.30, 0.32), rgb(0.90, 0.90, 0.88), rgb(0.14, 0.17, 0.20), rgb(1.0, 0.85, 0.55), 0.15,
         rgb(0.20, 0.20, 0.22), rgb(0.22, 0.22, 0.24), rgb(0.32, 0.26, 0.21), rgb(0.28, 0.27, 0.27),
         rgb(0.90, 0.89, 0.85), rgb(0.55, 0.12, 0.10), false, false, 0.2, 0.005, 0.0001, 0.95};
  } else if (scene == "nir") {
    // Near-infrared band: dark sky, glowing clouds and vegetation, nearly black sea.
    s = {gray(0.14), gray(0.44), gray(0.9), 0.82, 480, 0, 230, 0.22,
         {{495, 30, 0.0055, 0.0105, 0.48, 0.10, gray(0.58), gray(0.97), 0.95}},
         gray(0.04), gray(0.30), gray(1.0), 0.55, 18, 0.8, 0.0,
         gray(0.30),
         gray(0.62), gray(0.44), gray(0.92), gray(0.80), gray(0.56), gray(0.93),
         gray(0.72), gray(0.55), gray(0.64), gray(0.26), gray(0.30), gray(0.86), gray(0.10), gray(0.9), 0.0,
         gray(0.07), gray(0.10), gray(0.16), gray(0.12),
         gray(0.86), gray(0.06), false, false, 0.2, 0.012, 0.0003, 1.0};
  } else {
    throw pcasweep::usage_error("--scene: unknown scene '" + scene + "' (dawn, midday, dusk, overcast, nir)");
  }
  return s;
}

// Everything needed to paint any row: the style, the seeded layout in pixels, the display list.
struct Scene {
  int w = 0, h = 0;
  double s = 1;    // pixels per design unit (the frame is 1000 units tall)
  double wd = 1;   // frame width in design units
  Style st;
  std::uint64_t seed = 0;
  std::uint64_t cloud_seed[4]{}, sea_seed = 0, head_seed = 0, land_seed = 0, dune_seed = 0, noise_seed = 0;
  double horizon = 520;                  // design units from the top
  double sun_x = 0, sun_y = 0;           // design units
  double head_x0 = 0, head_x1 = 0, head_height = 0;
  std::vector<float> head_top, shore_top, dune_top;  // per column, in pixels
  std::vector<Prim> prims;
  std::vector<Point> vertices;
  int band_rows = 32;
  std::vector<std::vector<int>> bands;  // prims touching each band of rows, in painting order
  std::vector<int> cloud_octaves;
  int sea_octaves = 6, sand_octaves = 4;

  // Design units -> pixels.
  double px(double units) const { return units * s; }

  // ---- building the display list (all arguments in design units)
  void add_rect(double x0, double y0, double x1, double y1, const Rgb& c, double opacity = 1.0) {
    Prim p{Prim::rect, c, opacity};
    p.x0 = px(x0), p.y0 = px(y0), p.x1 = px(x1), p.y1 = px(y1);
    prims.push_back(p);
  }
  // A stroke `width` units wide (never under 0.7 px: thinner strokes fade instead).
  void add_line(double ax, double ay, double bx, double by, double width, const Rgb& c, double opacity = 1.0) {
    Prim p{Prim::line, c, opacity};
    p.ax = px(ax), p.ay = px(ay), p.bx = px(bx), p.by = px(by), p.width = px(width);
    if (p.width < 0.7) p.opacity *= p.width / 0.7, p.width = 0.7;
    const double pad = p.width * 0.5 + 1.5;
    p.x0 = std::min(p.ax, p.bx) - pad, p.x1 = std::max(p.ax, p.bx) + pad;
    p.y0 = std::min(p.ay, p.by) - pad, p.y1 = std::max(p.ay, p.by) + pad;
    prims.push_back(p);
  }
  void add_wire(double ax, double ay, double bx, double by, double sag, double width, const Rgb& c, double opacity) {
    const int n = 24;
    for (int i = 0; i < n; ++i) {
      const double t0 = double(i) / n, t1 = double(i + 1) / n;
      add_line(lerp(ax, bx, t0), lerp(ay, by, t0) + 4 * sag * t0 * (1 - t0), lerp(ax, bx, t1),
               lerp(ay, by, t1) + 4 * sag * t1 * (1 - t1), width, c, opacity);
    }
  }
  void add_poly(const std::vector<Point>& pts, const Rgb& c, double opacity = 1.0) {
    Prim p{Prim::poly, c, opacity};
    p.first = int(vertices.size()), p.count = int(pts.size());
    p.x0 = p.y0 = 1e300, p.x1 = p.y1 = -1e300;
    for (const Point& q : pts) {
      vertices.push_back({px(q.x), px(q.y)});
      p.x0 = std::min(p.x0, px(q.x)), p.x1 = std::max(p.x1, px(q.x));
      p.y0 = std::min(p.y0, px(q.y)), p.y1 = std::max(p.y1, px(q.y));
    }
    prims.push_back(p);
  }
  void add_ellipse(double cx, double cy, double rx, double ry, const Rgb& c, double opacity = 1.0) {
    Prim p{Prim::ellipse, c, opacity};
    p.ax = px(cx), p.ay = px(cy), p.bx = std::max(px(rx), 0.5), p.by = std::max(px(ry), 0.5);
    p.x0 = p.ax - p.bx - 1, p.x1 = p.ax + p.bx + 1, p.y0 = p.ay - p.by - 1, p.y1 = p.ay + p.by + 1;
    prims.push_back(p);
  }
  // Additive light c·strength·exp(-d/radius) within 4 radii.
  void add_glow(double cx, double cy, double radius, const Rgb& c, double strength) {
    Prim p{Prim::glow, c, strength};
    p.ax = px(cx), p.ay = px(cy), p.width = std::max(px(radius), 0.5);
    p.x0 = p.ax - 4 * p.width, p.x1 = p.ax + 4 * p.width, p.y0 = p.ay - 4 * p.width, p.y1 = p.ay + 4 * p.width;
    prims.push_back(p);
  }
  void add_text(double x, double y, double cell, const std::string& text, const Rgb& c) {
    for (char ch : text) {
      const auto it = glyphs().find(ch);
      if (it != glyphs().end())
        for (int r = 0; r < 7; ++r)
          for (int k = 0; k < 5; ++k)
            if (it->second[r][k] == '#')
              add_rect(x + k * cell, y + r * cell, x + (k + 1) * cell, y + (r + 1) * cell, c);
      x += 6 * cell;
    }
  }

  // ---- outlines (design units)
  double shore_outline(double x) const {
    return lerp(1000 + 15, horizon + 118, smoothstep(0.18 * wd, 0.72 * wd, x)) +
           14 * (fbm(x * 0.008, 1.0, land_seed, 6) - 0.5);
  }
  double dune_outline(double x) const {
    return lerp(1000 + 60, horizon + 140, smoothstep(0.36 * wd, 0.80 * wd, x)) +
           22 * (fbm(x * 0.006, 4.0, dune_seed, 6) - 0.5);
  }
};

struct Building {
  double x, ground, width, height, side;
  Rgb wall, roof, trim;
  int roof_kind;  // 0 flat with railing, 1 gable, 2 shed
  int cols, rows;
  std::string sign;
};

void add_building(Scene& sc, const Building& b, Rng& rng) {
  const Style& st = sc.st;
  const double top = b.ground - b.height;
  if (b.side > 0) {
    const double rise = b.side * 0.35;
    sc.add_poly({{b.x + b.width, b.ground}, {b.x + b.width + b.side, b.ground - rise},
                 {b.x + b.width + b.side, top - rise}, {b.x + b.width, top}},
                b.wall * 0.68);
    if (b.roof_kind == 1)
      sc.add_poly({{b.x + b.width * 0.5, top - b.height * 0.35}, {b.x + b.width, top},
                   {b.x + b.width + b.side, top - rise}, {b.x + b.width * 0.5 + b.side, top - b.height * 0.35 - rise}},
                  b.roof);
    else
      sc.add_poly({{b.x, top}, {b.x + b.width, top}, {b.x + b.width + b.side, top - rise}, {b.x + b.side, top - rise}},
                  b.roof * 1.1);
  }
  sc.add_rect(b.x, top, b.x + b.width, b.ground, b.wall);
  // Weatherboards: faint horizontal lines every 2.2 units, each with a lit lower edge.
  for (double y = top + 2.2; y < b.ground - 0.5; y += 2.2) {
    sc.add_line(b.x, y, b.x + b.width, y, 0.35, b.wall * 0.80, 0.7);
    sc.add_line(b.x, y + 0.4, b.x + b.width, y + 0.4, 0.2, b.wall * 1.08, 0.5);
  }
  if (b.roof_kind == 1) {
    sc.add_poly({{b.x - 2, top}, {b.x + b.width * 0.5, top - b.height * 0.35}, {b.x + b.width + 2, top}},
                b.wall * 0.9);
    sc.add_line(b.x - 3, top + 0.5, b.x + b.width * 0.5, top - b.height * 0.35, 2.0, b.roof);
    sc.add_line(b.x + b.width * 0.5, top - b.height * 0.35, b.x + b.width + 3, top + 0.5, 2.0, b.roof);
  } else if (b.roof_kind == 2) {
    sc.add_poly({{b.x - 2, top + 1}, {b.x + b.width + 2, top - b.height * 0.18},
                 {b.x + b.width + 2, top - b.height * 0.18 + 3}, {b.x - 2, top + 4}},
                b.roof);
  } else {
    sc.add_rect(b.x - 1.5, top - 2.5, b.x + b.width + 1.5, top + 0.5, b.trim);
    const double rail = top - 7;
    sc.add_line(b.x, rail, b.x + b.width, rail, 0.7, b.trim * 0.6);
    for (double x = b.x + 0.5; x <= b.x + b.width; x += 3.0) sc.add_line(x, rail, x, top - 2.5, 0.5, b.trim * 0.6);
  }
  // Roof vents and an antenna: small dark details on the skyline.
  sc.add_rect(b.x + b.width * 0.2, top - 4.5, b.x + b.width * 0.2 + 2.4, top - 0.5, b.roof * 0.7);
  sc.add_line(b.x + b.width * 0.75, top - 0.5, b.x + b.width * 0.75, top - b.height * 0.6, 0.35, st.mast);
  // Windows: a frame, the glass with a reflection or a lamp, a mullion and a sill.
  if (b.cols > 0 && b.rows > 0) {
    const double mx = b.width * 0.1, cell_w = (b.width - 2 * mx) / b.cols, cell_h = b.height * 0.8 / b.rows;
    for (int r = 0; r < b.rows; ++r)
      for (int c = 0; c < b.cols; ++c) {
        const double wx = b.x + mx + c * cell_w + cell_w * 0.2, wy = top + b.height * 0.08 + r * cell_h + cell_h * 0.2;
        const double ww = cell_w * 0.6, wh = cell_h * 0.55;
        const bool lit = rng.uniform() < st.lit_windows;
        sc.add_rect(wx - 0.8, wy - 0.8, wx + ww + 0.8, wy + wh + 0.8, b.trim);
        sc.add_rect(wx, wy, wx + ww, wy + wh, lit ? st.lamp * rng.uniform(0.8, 1.05) : st.glass);
        if (lit) sc.add_glow(wx + ww / 2, wy + wh / 2, ww * 0.6, st.lamp, 0.10);
        sc.add_line(wx + ww * 0.5, wy, wx + ww * 0.5, wy + wh, 0.6, b.trim);
        sc.add_line(wx, wy + wh * 0.45, wx + ww, wy + wh * 0.45, 0.4, b.trim);
        if (!lit) sc.add_line(wx + 0.8, wy + wh - 1, wx + ww - 1, wy + 1, 0.5, st.glass * 1.8 + gray(0.15), 0.5);
        sc.add_rect(wx - 1.2, wy + wh + 0.8, wx + ww + 1.2, wy + wh + 1.6, b.trim * 0.85);
      }
  }
  const double dw = std::max(3.0, b.width * 0.12);
  sc.add_rect(b.x + b.width - dw * 1.8, b.ground - std::min(b.height * 0.7, dw * 2.4), b.x + b.width - dw * 0.8,
              b.ground, st.glass * 0.8);
  if (!b.sign.empty()) {
    const double cell = std::min(2.0, b.width * 0.7 / text_width(b.sign, 1.0));
    const double tw = text_width(b.sign, cell);
    sc.add_rect(b.x + (b.width - tw) / 2 - 2, top + 1, b.x + (b.width + tw) / 2 + 2, top + 3 + 7 * cell, b.trim);
    sc.add_text(b.x + (b.width - tw) / 2, top + 2, cell, b.sign, b.wall * 0.25);
  }
}

// A lattice mast with cross bracing, antennas, a dish and guy wires to ground anchors.
void add_mast(Scene& sc, double x, double ground, double height, double base_w, double top_w,
              const std::vector<double>& anchors) {
  const Style& st = sc.st;
  const double top = ground - height;
  auto left = [&](double t) { return x - lerp(base_w, top_w, t) / 2; };
  auto right = [&](double t) { return x + lerp(base_w, top_w, t) / 2; };
  auto row = [&](double t) { return ground - t * height; };
  const double leg = std::max(0.9, base_w * 0.10);
  sc.add_line(left(0), row(0), left(1), row(1), leg, st.mast);
  sc.add_line(right(0), row(0), right(1), row(1), leg, st.mast);
  const int sections = std::max(6, int(height / (base_w * 1.1 + 2)));
  for (int i = 0; i < sections; ++i) {
    const double t0 = double(i) / sections, t1 = double(i + 1) / sections;
    sc.add_line(left(t0), row(t0), right(t0), row(t0), leg * 0.6, st.mast);
    sc.add_line(left(t0), row(t0), right(t1), row(t1), leg * 0.45, st.mast, 0.9);
    sc.add_line(right(t0), row(t0), left(t1), row(t1), leg * 0.45, st.mast, 0.9);
  }
  sc.add_line(x, top, x, top - height * 0.12, leg * 0.7, st.mast);
  const double arm = top + height * 0.04;
  sc.add_line(x - base_w * 1.6, arm, x + base_w * 1.6, arm, leg * 0.7, st.mast);
  for (double dx : {-1.5, -0.8, 0.8, 1.5})
    sc.add_line(x + dx * base_w, arm - base_w * 0.7, x + dx * base_w, arm + base_w * 0.7, leg * 0.5, st.mast);
  sc.add_ellipse(x + top_w * 0.5 + base_w * 0.45, top + height * 0.18, base_w * 0.35, base_w * 0.5, st.mast * 1.25);
  for (double a : anchors)
    for (double t : {0.38, 0.68, 0.94}) {
      const double ax = a < 0 ? left(t) : right(t), gx = x + a;
      const double len = std::hypot(gx - ax, ground - row(t));
      sc.add_wire(ax, row(t), gx, ground + std::abs(a) * 0.04, len * 0.012, 0.45, st.wire, 0.95);
    }
  if (st.beacon) {
    sc.add_ellipse(x, top - height * 0.12, 1.6, 1.6, rgb(1.0, 0.12, 0.08));
    sc.add_glow(x, top - height * 0.12, 3.5, rgb(1.0, 0.12, 0.08), 0.3);
  }
}

// Post-and-wire fence from (x0, y0) to (x1, y1); posts shrink toward the far end.
void add_fence(Scene& sc, double x0, double y0, double x1, double y1, int posts, double near_h, double far_h,
               int wires) {
  std::vector<Point> tops;
  auto at = [&](int i) { return 1.0 - std::pow(1.0 - double(i) / (posts - 1), 1.6); };
  for (int i = 0; i < posts; ++i) {
    const double t = at(i), x = lerp(x0, x1, t), y = lerp(y0, y1, t), hgt = lerp(near_h, far_h, t);
    sc.add_line(x, y, x + hgt * 0.03, y - hgt, std::max(0.8, hgt * 0.07), sc.st.post);
    sc.add_line(x + hgt * 0.025, y, x + hgt * 0.05, y - hgt, std::max(0.3, hgt * 0.02), sc.st.post * 1.5, 0.6);
    tops.push_back({x + hgt * 0.03, y - hgt});
  }
  for (int w = 0; w < wires; ++w) {
    const double f = 1.0 - double(w) / wires * 0.85;
    for (int i = 0; i + 1 < posts; ++i) {
      const double ya = lerp(y0, y1, at(i)), yb = lerp(y0, y1, at(i + 1));
      sc.add_wire(tops[i].x, ya + (tops[i].y - ya) * f, tops[i + 1].x, yb + (tops[i + 1].y - yb) * f,
                  0.6 + (1 - at(i)) * 1.2, 0.5, sc.st.fence_wire, 0.9);
    }
  }
}

void add_sign(Scene& sc, double x, double ground, double cell, const std::vector<std::string>& lines) {
  double width = 0;
  for (const auto& l : lines) width = std::max(width, text_width(l, cell));
  const double pad = cell * 2, line_h = cell * 9;
  const double bw = width + 2 * pad, bh = lines.size() * line_h - 2 * cell + 2 * pad;
  const double top = ground - bh - cell * 12;
  sc.add_line(x + bw * 0.2, ground, x + bw * 0.2, top + bh, cell * 0.9, sc.st.post);
  sc.add_line(x + bw * 0.8, ground, x + bw * 0.8, top + bh, cell * 0.9, sc.st.post);
  sc.add_rect(x - 1, top - 1, x + bw + 1, top + bh + 1, sc.st.ink);
  sc.add_rect(x, top, x + bw, top + bh, sc.st.board);
  for (std::size_t i = 0; i < lines.size(); ++i)
    sc.add_text(x + pad + (width - text_width(lines[i], cell)) / 2, top + pad + i * line_h, cell, lines[i], sc.st.ink);
}

// Tufts of dune grass below the dune outline, farther tufts first.
void add_grass(Scene& sc, double x0, double x1, int tufts, double height, double spread, Rng& rng) {
  std::vector<Point> roots;
  for (int i = 0; i < tufts; ++i) {
    const double x = rng.uniform(x0, x1);
    roots.push_back({x, sc.dune_outline(x) + spread * std::pow(rng.uniform(), 1.5)});
  }
  std::sort(roots.begin(), roots.end(), [](const Point& a, const Point& b) { return a.y < b.y; });
  for (const Point& root : roots) {
    const double near = clamp01((root.y - sc.horizon) / (1000 - sc.horizon));  // nearer tufts are larger
    const double scale = 0.6 + 1.2 * near;
    const int blades = rng.integer(5, 11);
    for (int b = 0; b < blades; ++b) {
      const double lean = rng.uniform(-0.6, 0.6), len = height * scale * rng.uniform(0.5, 1.1);
      const double shade = rng.uniform(0.7, 1.2);
      const double bx = root.x + rng.uniform(-1.5, 1.5) * scale;
      sc.add_line(bx, root.y, bx + lean * len, root.y - len, rng.uniform(0.35, 0.7) * scale, sc.st.grass * shade, 0.9);
    }
  }
}

const char* const kSigns[][3] = {
    {"TERN POINT", "FIELD STATION", "NO ENTRY"},
    {"MAST 2", "KEEP CLEAR", "GUY WIRES"},
    {"STATION 7", "AUTHORISED", "ONLY"},
    {"TERN POINT", "DUNE PATH", "KEEP TO TRACK"},
};

Scene build_scene(int w, int h, const std::string& scene, std::uint64_t seed) {
  Scene sc;
  sc.w = w, sc.h = h, sc.s = h / 1000.0, sc.wd = w / sc.s, sc.st = style_for(scene), sc.seed = seed;
  Rng rng(mix64(seed ^ 0x7E57F00Dull));
  for (auto& c : sc.cloud_seed) c = rng.bits();
  sc.sea_seed = rng.bits(), sc.head_seed = rng.bits(), sc.land_seed = rng.bits(), sc.dune_seed = rng.bits();
  sc.noise_seed = rng.bits();
  const Style& st = sc.st;
  const double wd = sc.wd;
  sc.horizon = rng.uniform(470, 560);
  sc.sun_x = (st.sun_fx + rng.uniform(-0.05, 0.05)) * wd;
  sc.sun_y = sc.horizon - st.sun_dy;
  // Octaves: clouds to about a pixel; waves and sand likewise (capped for speed).
  for (const auto& c : st.clouds) sc.cloud_octaves.push_back(octaves_to_pixel(sc.s / c.scale_x, 6, 12));
  sc.sea_octaves = octaves_to_pixel(sc.s * 20.0, 6, 11);
  sc.sand_octaves = octaves_to_pixel(sc.s * 2.0, 2, 6);
  sc.head_x0 = rng.uniform(-0.05, 0.06) * wd, sc.head_x1 = sc.head_x0 + rng.uniform(0.18, 0.30) * wd;
  sc.head_height = rng.uniform(16, 30);
  // Per-column outlines in pixels.
  sc.head_top.resize(w), sc.shore_top.resize(w), sc.dune_top.resize(w);
  for (int x = 0; x < w; ++x) {
    const double X = (x + 0.5) / sc.s;
    const double t = (X - sc.head_x0) / (sc.head_x1 - sc.head_x0);
    const double prof = (t > 0 && t < 1) ? std::sin(kPi * std::pow(t, 0.7)) *
                                               (0.75 + 0.5 * fbm(X * 0.015, 3.0, sc.head_seed, 7))
                                         : -1.0;
    sc.head_top[x] = float(prof > 0 ? sc.px(sc.horizon - sc.head_height * prof) : 1e30);
    sc.shore_top[x] = float(sc.px(sc.shore_outline(X)));
    sc.dune_top[x] = float(sc.px(sc.dune_outline(X)));
  }
  // Stars (dusk) and terns in the sky.
  if (st.stars)
    for (int i = 0, n = int(wd * 0.12); i < n; ++i) {
      const double x = rng.uniform(0, wd), y = rng.uniform(0, sc.horizon * 0.5);
      sc.add_ellipse(x, y, 0.45, 0.45, rgb(0.9, 0.92, 1.0), rng.uniform(0.1, 0.6) * (1.0 - y / (sc.horizon * 0.5)));
    }
  for (int i = 0, n = rng.integer(3, 9); i < n; ++i) {
    const double x = rng.uniform(0.05, 0.6) * wd, y = rng.uniform(0.15, 0.85) * sc.horizon;
    const double span = rng.uniform(2.5, 6.0), beat = rng.uniform(-0.4, 0.6);
    const Rgb bird = st.stars ? gray(0.05) : st.mast * 0.8;
    sc.add_line(x - span, y - span * beat, x, y, 0.55, bird);
    sc.add_line(x, y, x + span, y - span * beat, 0.55, bird);
  }
  // Rocks at the water's edge: a few clusters of lumps lit from above.
  for (int cluster = 0, n = rng.integer(3, 6); cluster < n; ++cluster) {
    const double cx = rng.uniform(0.05, 0.55) * wd, spread = rng.uniform(10, 40);
    for (int i = 0, m = rng.integer(4, 14); i < m; ++i) {
      const double x = cx + spread * (rng.uniform() - 0.5) * 2;
      const double y = sc.shore_outline(x) + rng.uniform(-3, 7);
      const double r = rng.uniform(1.0, 4.5) * (0.6 + 0.8 * (y - sc.horizon) / (1000 - sc.horizon));
      const double shade = rng.uniform(0.6, 1.1);
      sc.add_ellipse(x, y, r * 1.4, r, st.dark_sand * (0.5 * shade));
      sc.add_ellipse(x - r * 0.25, y - r * 0.3, r * 1.0, r * 0.6, st.dark_sand * (0.85 * shade));
    }
  }
  add_grass(sc, 0.34 * wd, wd, int(wd * 0.45), 14, 130, rng);
  // The plateau on the right: mast behind the buildings, then the buildings, fence, sign.
  const double plateau = sc.horizon + 118;
  const double mast_x = rng.uniform(0.62, 0.74) * wd;
  const double mast_h = rng.uniform(380, 470);
  add_mast(sc, mast_x, plateau + 12, mast_h, 20, 7, {-rng.uniform(110, 160), rng.uniform(120, 170)});
  const Rgb walls[] = {st.wall_a, st.wall_b, st.wall_c};
  const Rgb roofs[] = {st.roof_a, st.roof_b};
  std::vector<std::string> names = {"TERN POINT", "STN 07", "TP-3", "STORE", "", ""};
  for (std::size_t i = names.size() - 1; i > 0; --i) std::swap(names[i], names[std::size_t(rng.integer(0, int(i)))]);
  double bx = rng.uniform(0.56, 0.60) * wd;
  for (int i = 0; bx < 0.97 * wd && i < 6; ++i) {
    const double bw = rng.uniform(70, 150), bh = rng.uniform(40, 75);
    Building b{bx, plateau + rng.uniform(14, 26), bw, bh, rng.uniform(8, 30), walls[rng.integer(0, 2)],
               roofs[rng.integer(0, 1)], st.trim, rng.integer(0, 2), std::max(1, int(bw / 22)),
               rng.integer(1, 2), names[std::size_t(i)]};
    add_building(sc, b, rng);
    bx += bw + b.side + rng.uniform(14, 50);
  }
  add_fence(sc, 0.46 * wd, 995, 0.995 * wd, plateau + 95, 18, 80, 18, 3);
  const auto& sign = kSigns[rng.integer(0, 3)];
  const double sign_x = rng.uniform(0.70, 0.76) * wd;  // one draw per statement: a fixed order
  const double sign_ground = rng.uniform(955, 985);
  add_sign(sc, sign_x, sign_ground, 3.4, {sign[0], sign[1], sign[2]});
  // Bucket the display list by bands of rows.
  sc.bands.assign((h + sc.band_rows - 1) / sc.band_rows, {});
  for (int i = 0; i < int(sc.prims.size()); ++i) {
    const Prim& p = sc.prims[i];
    if (p.x1 < 0 || p.x0 > w || p.y1 < 0 || p.y0 > h) continue;
    const int b0 = std::max(0, int(std::floor(p.y0)) / sc.band_rows);
    const int b1 = std::min(int(sc.bands.size()) - 1, int(std::ceil(p.y1)) / sc.band_rows);
    for (int b = b0; b <= b1; ++b) sc.bands[b].push_back(i);
  }
  return sc;
}

// ---------------------------------------------------------------- painting one row

// The background at pixel (x, y): sky, clouds, sea, headland, shore, dune.
Rgb background(const Scene& sc, int x, int y) {
  const Style& st = sc.st;
  const double X = (x + 0.5) / sc.s, Y = (y + 0.5) / sc.s;
  const double py = y + 0.5;
  Rgb c;
  if (Y < sc.horizon) {
    const double t = clamp01(Y / sc.horizon);
    c = mix(st.zenith, st.horizon_sky, std::pow(t, 1.8));
    const double dx = X - sc.sun_x, dy = Y - sc.sun_y, d = std::sqrt(dx * dx + 2.56 * dy * dy);
    c = c + st.sun_color * (st.glow_strength * std::exp(-d / st.glow_radius));  // halo flattened by the haze
    if (st.sun_radius > 0) {
      const double disc = std::sqrt(dx * dx + dy * dy);
      c = mix(c, st.sun_color * 1.15, smoothstep(st.sun_radius + 1.0 / sc.s, st.sun_radius - 1.0 / sc.s, disc));
    }
    for (std::size_t i = 0; i < st.clouds.size(); ++i) {
      const auto& cl = st.clouds[i];
      const double top = sc.horizon - cl.top, bottom = sc.horizon - cl.bottom;
      if (Y < top || Y >= bottom) continue;
      const double band = smoothstep(top, top + 0.25 * (bottom - top), Y) * smoothstep(bottom, bottom - 0.3 * (bottom - top), Y);
      const double threshold = 1.0 - cl.cover;
      const double coarse = fbm(X * cl.scale_x, Y * cl.scale_y, sc.cloud_seed[i], 5, 0.55);
      if (coarse < threshold - 0.5 * cl.softness - 0.08) continue;  // far from any cloud: finer octaves cannot reach
      const double n = fbm(X * cl.scale_x, Y * cl.scale_y, sc.cloud_seed[i], sc.cloud_octaves[i], 0.55);
      const double density = smoothstep(threshold - 0.5 * cl.softness, threshold + cl.softness, n) * band;
      if (density <= 0) continue;
      const double lx = sc.sun_x - X, ly = sc.sun_y - Y, len = std::max(1.0, std::sqrt(lx * lx + ly * ly));
      const double n2 = fbm((X + 6 * lx / len) * cl.scale_x, (Y + 6 * ly / len) * cl.scale_y, sc.cloud_seed[i], 5, 0.55);
      const double light = clamp01(0.5 + 4.0 * (coarse - n2));
      c = mix(c, mix(cl.shadow, cl.lit, light), cl.opacity * density);
    }
  } else {
    // Sea: perspective waves, octaves finer than a pixel left out; glints on the crests.
    const double dy = Y - sc.horizon + 0.5 / sc.s;
    const double depth = clamp01(dy / (1000 - sc.horizon));
    const Rgb body = mix(st.sea_reflection, st.sea_deep, std::pow(depth, 0.45));
    // Ground-plane coordinates: across ~ (x - centre)/dy, distance ~ 1/dy; crests run along x.
    const double u = (X - sc.wd * 0.5) / dy * 6.0, v = 750.0 / dy;
    double wave = 0.0, norm = 0.0, amp = 1.0, fu = 0.4, fv = 6.0;
    for (int o = 0; o < sc.sea_octaves; ++o) {
      // Footprint of one pixel in noise cells: octaves finer than a pixel are left out.
      const double footprint = std::max(fu * 6.0 / dy, fv * 750.0 / (dy * dy)) / sc.s;
      const double keep = clamp01(1.6 - 2.0 * footprint);
      if (keep > 0) wave += keep * amp * (value_noise(u * fu, v * fv, sc.sea_seed + o) - 0.5);
      norm += amp;
      amp *= 0.6, fu *= 2.0, fv *= 2.0;
    }
    wave /= norm;
    const double gust = 0.6 + 0.8 * fbm(X * 0.004, Y * 0.012, sc.sea_seed + 50, 3);  // wind patches
    c = body * (1.0 + (1.0 - st.calm) * st.wave_contrast * gust * wave * 2.5);
    // Sun path: a soft column widening toward the camera, broken into sparkles on the crests.
    const double width = st.glint_width * (0.3 + dy / 35.0);
    const double column = std::exp(-std::pow((X - sc.sun_x) / width, 2));
    const double crest = smoothstep(-0.02, 0.12, wave);
    const double sfoot = std::max(3.0 * 6.0 / dy, 40.0 * 750.0 / (dy * dy)) / sc.s;
    const double sparkle =
        clamp01(1.3 - sfoot) * smoothstep(0.62, 0.92, value_noise(u * 3.0, v * 40.0, sc.sea_seed + 99)) * crest;
    c = c + st.glint * (st.glint_strength * column * (st.calm * 0.6 + (1.0 - st.calm) * (0.25 * crest + 0.9 * sparkle)));
  }
  // Headland: hazy, between its outline and the horizon.
  const double ht = sc.head_top[x];
  if (py + 0.5 > ht && Y <= sc.horizon + 0.5 / sc.s) {
    const double haze = 0.85 + 0.15 * fbm(X * 0.05, Y * 0.05, sc.head_seed + 1, 4);
    c = mix(c, st.headland * haze, clamp01(y + 1.0 - ht) * 0.92);
  }
  // Shore sand and then the dune, each below its outline.
  auto land = [&](double top_px, const Rgb& sand, const Rgb& dark, double foam_strength, std::uint64_t seed) {
    if (y + 1.0 <= top_px) return;
    const double cover = clamp01(y + 1.0 - top_px), depth = (py - top_px) / sc.s;  // units below the outline
    const double patches = fbm(X * 0.006, Y * 0.015, seed, 6);
    const double ripple = 0.5 + 0.5 * std::sin((Y * 0.45 + 10 * fbm(X * 0.01, Y * 0.01, seed + 9, 3)) * 1.3);
    const double fine = fbm(X * 0.5, Y * 0.5, seed + 5, sc.sand_octaves);  // grains and footprints
    const double grain = unit_from_bits(pixel_hash(seed, x, y, 1));
    Rgb l = mix(dark, sand, clamp01(0.2 + 1.2 * patches));
    l = l * (0.93 + 0.1 * ripple * clamp01(depth / 30.0)) * (0.90 + 0.2 * fine) * (0.975 + 0.05 * grain);
    l = mix(l, dark * 0.8, 0.5 * std::exp(-depth / 6.0));
    const double edge = foam_strength * std::exp(-depth / 1.6);
    if (edge > 1e-4) l = mix(l, st.foam, clamp01(edge * (0.6 + 0.8 * fbm(X * 0.08, Y * 0.25, seed + 3, 5))));
    c = mix(c, l, cover);
  };
  if (y < sc.dune_top[x]) land(sc.shore_top[x], st.sand, st.dark_sand, 0.8, sc.land_seed);  // else hidden by the dune
  land(sc.dune_top[x], st.dune, st.dark_dune, 0.0, sc.dune_seed);
  return c;
}

// Paints the display list over `row` (pixels of row y), in list order.
void paint_prims(const Scene& sc, int y, std::vector<Rgb>& row, std::vector<double>& cover) {
  const int w = sc.w;
  const double py = y + 0.5;
  for (int i : sc.bands[y / sc.band_rows]) {
    const Prim& p = sc.prims[i];
    if (y + 1 <= p.y0 || y >= p.y1) continue;
    auto blend = [&](int x, const Rgb& c, double a) {
      if (a <= 0) return;
      row[x] = mix(row[x], c, std::min(a, 1.0));
    };
    switch (p.kind) {
      case Prim::rect: {
        const double cy = std::max(0.0, std::min(y + 1.0, p.y1) - std::max(double(y), p.y0));
        for (int x = std::max(0, int(std::floor(p.x0))); x < std::min(w, int(std::ceil(p.x1))); ++x) {
          const double cx = std::max(0.0, std::min(x + 1.0, p.x1) - std::max(double(x), p.x0));
          blend(x, p.color, p.opacity * cx * cy);
        }
        break;
      }
      case Prim::line: {
        const double hw = p.width * 0.5, dx = p.bx - p.ax, dy = p.by - p.ay, len2 = dx * dx + dy * dy;
        // Columns this row can touch: the part of the segment within hw + 1 rows of the row.
        double lo = p.x0, hi = p.x1;
        if (std::abs(dy) > 1e-9) {
          double t0 = (py - hw - 1.5 - p.ay) / dy, t1 = (py + hw + 1.5 - p.ay) / dy;
          if (t0 > t1) std::swap(t0, t1);
          t0 = std::clamp(t0, 0.0, 1.0), t1 = std::clamp(t1, 0.0, 1.0);
          lo = std::min(p.ax + t0 * dx, p.ax + t1 * dx) - hw - 1.5;
          hi = std::max(p.ax + t0 * dx, p.ax + t1 * dx) + hw + 1.5;
        }
        for (int x = std::max(0, int(std::floor(lo))); x <= std::min(w - 1, int(std::ceil(hi))); ++x) {
          const double qx = x + 0.5;
          const double t = len2 > 0 ? std::clamp(((qx - p.ax) * dx + (py - p.ay) * dy) / len2, 0.0, 1.0) : 0.0;
          const double ex = qx - (p.ax + t * dx), ey = py - (p.ay + t * dy);
          blend(x, p.color, p.opacity * clamp01(hw + 0.5 - std::sqrt(ex * ex + ey * ey)));
        }
        break;
      }
      case Prim::poly:
      case Prim::ellipse: {
        // Four sub-rows; on each, the exact covered length of every pixel (even-odd spans).
        const int xa = std::max(0, int(std::floor(p.x0))), xb = std::min(w - 1, int(std::ceil(p.x1)));
        if (xa > xb) break;
        std::fill(cover.begin() + xa, cover.begin() + xb + 1, 0.0);
        double cross[64];
        for (int sub = 0; sub < 4; ++sub) {
          const double ys = y + (sub + 0.5) / 4;
          int n = 0;
          if (p.kind == Prim::poly) {
            const Point* v = sc.vertices.data() + p.first;
            for (int a = 0, b = p.count - 1; a < p.count; b = a++)
              if ((v[a].y > ys) != (v[b].y > ys) && n < 64)
                cross[n++] = v[a].x + (v[b].x - v[a].x) * (ys - v[a].y) / (v[b].y - v[a].y);
            std::sort(cross, cross + n);
          } else {
            const double t = (ys - p.ay) / p.by;
            if (t * t >= 1) continue;
            const double half = p.bx * std::sqrt(1 - t * t);
            cross[0] = p.ax - half, cross[1] = p.ax + half, n = 2;
          }
          for (int k = 0; k + 1 < n; k += 2) {
            const double a = std::max(cross[k], double(xa)), b = std::min(cross[k + 1], double(xb + 1));
            for (int x = int(std::floor(a)); x < b && x <= xb; ++x)
              cover[x] += 0.25 * (std::min(b, x + 1.0) - std::max(a, double(x)));
          }
        }
        for (int x = xa; x <= xb; ++x) blend(x, p.color, p.opacity * cover[x]);
        break;
      }
      case Prim::glow: {
        for (int x = std::max(0, int(std::floor(p.x0))); x <= std::min(w - 1, int(std::ceil(p.x1))); ++x) {
          const double d = std::hypot(x + 0.5 - p.ax, py - p.ay);
          row[x] = row[x] + p.color * (p.opacity * std::exp(-d / p.width));
        }
        break;
      }
    }
  }
}

// Paints row y and stores it into `img` (vignette, sensor noise, quantisation).
void paint_row(const Scene& sc, int y, pcasweep::Image& img, bool luma, std::vector<Rgb>& row,
               std::vector<double>& cover) {
  const Style& st = sc.st;
  for (int x = 0; x < sc.w; ++x) row[x] = background(sc, x, y);
  paint_prims(sc, y, row, cover);
  const double mv = img.max_value();
  const double v = (y + 0.5) / sc.h - 0.5;
  for (int x = 0; x < sc.w; ++x) {
    const double u = (x + 0.5) / sc.w - 0.5;
    const Rgb c = row[x] * (st.exposure * (1.0 - st.vignette * (u * u + v * v) * 2.0));
    auto noisy = [&](double value, std::uint64_t channel) {
      const double sigma = std::sqrt(st.read_noise * st.read_noise + st.shot_gain * std::max(0.0, value));
      return value + sigma * normal_from_hash(pixel_hash(sc.noise_seed, x, y, channel));
    };
    auto q = [&](double value) { return std::uint16_t(std::lround(clamp01(value) * mv)); };
    std::uint16_t* out = img.samples.data() + (std::size_t(y) * sc.w + x) * img.channels;
    if (img.channels == 1) {
      out[0] = q(noisy(luma ? 0.299 * c.r + 0.587 * c.g + 0.114 * c.b : c.r, 0));
    } else {
      out[0] = q(noisy(c.r, 0)), out[1] = q(noisy(c.g, 1)), out[2] = q(noisy(c.b, 2));
    }
  }
}

long parse_int(const std::string& option, const std::string& text) {
  char* end = nullptr;
  const long v = std::strtol(text.c_str(), &end, 10);
  if (text.empty() || *end != '\0') throw pcasweep::usage_error(option + ": not an integer: " + text);
  return v;
}

}  // namespace

int main(int argc, char** argv) {
  const std::string usage =
      "usage: make_bench_frame OUT.png --width W --height H [--channels 3|1] [--bit-depth 8|16] [--seed N]\n"
      "                        [--scene dawn|midday|dusk|overcast|nir]   (seed default " +
      std::to_string(kDefaultSeed) + ", scene dawn)";
  try {
    std::string out, scene = "dawn";
    long width = 0, height = 0, channels = 3, bits = 8;
    std::uint64_t seed = kDefaultSeed;
    for (int i = 1; i < argc; ++i) {
      const std::string a = argv[i];
      auto value = [&]() -> std::string {
        if (i + 1 >= argc) throw pcasweep::usage_error(a + " needs a value");
        return argv[++i];
      };
      if (a == "--help" || a == "-h") {
        std::cout << usage << "\n";
        return 0;
      } else if (a == "--width") {
        width = parse_int(a, value());
      } else if (a == "--height") {
        height = parse_int(a, value());
      } else if (a == "--channels") {
        channels = parse_int(a, value());
      } else if (a == "--bit-depth") {
        bits = parse_int(a, value());
      } else if (a == "--scene") {
        scene = value();
      } else if (a == "--seed") {
        const std::string v = value();
        char* end = nullptr;
        seed = std::strtoull(v.c_str(), &end, 10);
        if (v.empty() || *end != '\0' || v[0] == '-')
          throw pcasweep::usage_error("--seed: not a non-negative integer: " + v);
      } else if (!a.empty() && a[0] == '-') {
        throw pcasweep::usage_error("unknown option " + a);
      } else if (out.empty()) {
        out = a;
      } else {
        throw pcasweep::usage_error("more than one output file given");
      }
    }
    if (out.empty()) throw pcasweep::usage_error("no output file given");
    if (width < 16 || width > 65535 || height < 16 || height > 65535)
      throw pcasweep::usage_error("--width and --height must be 16..65535");
    if (channels != 1 && channels != 3) throw pcasweep::usage_error("--channels must be 1 or 3");
    if (bits != 8 && bits != 16) throw pcasweep::usage_error("--bit-depth must be 8 or 16");
    if (std::uint64_t(width) * height * channels > pcasweep::kMaxImageSamples)
      throw pcasweep::usage_error("image too large: width x height x channels must be at most 2^30");
    const auto t0 = std::chrono::steady_clock::now();
    const Scene sc = build_scene(int(width), int(height), scene, seed);
    pcasweep::Image img = pcasweep::make_image(int(width), int(height), int(channels), int(bits));
    const bool luma = scene != "nir";
#pragma omp parallel
    {
      std::vector<Rgb> row(sc.w);
      std::vector<double> cover(sc.w + 1);
#pragma omp for schedule(dynamic, 8)
      for (int y = 0; y < sc.h; ++y) paint_row(sc, y, img, luma, row, cover);
    }
    const auto t1 = std::chrono::steady_clock::now();
    pcasweep::write_png(out, img);
    const auto t2 = std::chrono::steady_clock::now();
    std::cout << "wrote " << out << " (" << width << "x" << height << ", " << channels << " channel(s), " << bits
              << "-bit, scene " << scene << ", seed " << seed << ", " << sc.prims.size() << " shapes; painted in "
              << std::chrono::duration<double>(t1 - t0).count() << " s on " << omp_get_max_threads()
              << " thread(s), encoded in " << std::chrono::duration<double>(t2 - t1).count() << " s)\n";
  } catch (const pcasweep::Error& e) {
    std::cerr << "make_bench_frame: " << e.what() << "\n";
    if (e.kind() == pcasweep::ErrorKind::usage) std::cerr << usage << "\n";
    return e.exit_code();
  }
  return 0;
}
