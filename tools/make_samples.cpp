// make_samples — the seeded generator of the bundled Tern Point sample images.
//
// Usage: make_samples OUTDIR [--seed N]     (default seed 20261202)
//
// Contract: paints a few invented horizon-camera frames of the (invented)
// Tern Point field station, a coastal station that archives its camera
// frames, and writes them as PNG into OUTDIR (created if missing) through
// pcasweep::write_png, so 16-bit stays 16-bit. Every random choice comes from
// std::mt19937_64 seeded with N, and every noise field from integer hashing,
// so the same seed gives byte-identical files on the same platform and build.
// Gaussian samples use our own Box–Muller transform (std::normal_distribution
// is not the same across standard libraries). Exit 0 on success, 2 on a bad
// command line, 1 when a file cannot be written.
//
// The frames mix what makes the PCA quality trade-off visible: smooth sky
// gradients and soft clouds (few components suffice), sea with wave texture
// and sun glints, sand and dune grass (texture), station buildings with
// windows and roof lines, and fine high-contrast detail (lattice mast with
// thin guy wires, fences, blocky sign lettering), plus sensor noise.
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
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

// Numbers and value noise: tools/paint_noise.hpp.

// ---------------------------------------------------------------- canvas

struct Rgb {
  double r = 0, g = 0, b = 0;
};
Rgb rgb(double r, double g, double b) { return {r, g, b}; }
Rgb gray(double v) { return {v, v, v}; }
Rgb mix(const Rgb& a, const Rgb& b, double t) { return {lerp(a.r, b.r, t), lerp(a.g, b.g, t), lerp(a.b, b.b, t)}; }
Rgb operator+(const Rgb& a, const Rgb& b) { return {a.r + b.r, a.g + b.g, a.b + b.b}; }
Rgb operator*(const Rgb& a, double s) { return {a.r * s, a.g * s, a.b * s}; }

// A floating-point picture, values nominally in [0, 1], painted back to front.
struct Canvas {
  int w, h;
  std::vector<Rgb> px;
  std::vector<double> alpha;  // coverage mask, used only by frames that keep alpha
  Canvas(int width, int height) : w(width), h(height), px(std::size_t(width) * height), alpha(px.size(), 1.0) {}
  Rgb& at(int x, int y) { return px[std::size_t(y) * w + x]; }
  void blend(int x, int y, const Rgb& c, double a) {
    if (x < 0 || y < 0 || x >= w || y >= h || a <= 0.0) return;
    Rgb& p = at(x, y);
    p = mix(p, c, std::min(a, 1.0));
  }
};

// Area of pixel (x, y) covered by the axis-aligned box [x0, x1] x [y0, y1].
double box_coverage(int x, int y, double x0, double y0, double x1, double y1) {
  const double cx = std::max(0.0, std::min(x + 1.0, x1) - std::max(double(x), x0));
  const double cy = std::max(0.0, std::min(y + 1.0, y1) - std::max(double(y), y0));
  return cx * cy;
}

void fill_rect(Canvas& cv, double x0, double y0, double x1, double y1, const Rgb& c, double opacity = 1.0) {
  for (int y = std::max(0, int(std::floor(y0))); y < std::min(cv.h, int(std::ceil(y1))); ++y)
    for (int x = std::max(0, int(std::floor(x0))); x < std::min(cv.w, int(std::ceil(x1))); ++x)
      cv.blend(x, y, c, opacity * box_coverage(x, y, x0, y0, x1, y1));
}

// Antialiased straight stroke of the given width (widths below one pixel fade instead of thinning).
void draw_line(Canvas& cv, double ax, double ay, double bx, double by, double width, const Rgb& c,
               double opacity = 1.0) {
  const double hw = std::max(width, 1.0) * 0.5;
  const double fade = std::min(width, 1.0) * opacity;
  const int x0 = std::max(0, int(std::floor(std::min(ax, bx) - hw - 1)));
  const int x1 = std::min(cv.w - 1, int(std::ceil(std::max(ax, bx) + hw + 1)));
  const int y0 = std::max(0, int(std::floor(std::min(ay, by) - hw - 1)));
  const int y1 = std::min(cv.h - 1, int(std::ceil(std::max(ay, by) + hw + 1)));
  const double dx = bx - ax, dy = by - ay, len2 = dx * dx + dy * dy;
  for (int y = y0; y <= y1; ++y)
    for (int x = x0; x <= x1; ++x) {
      const double px = x + 0.5, py = y + 0.5;
      const double t = len2 > 0 ? std::clamp(((px - ax) * dx + (py - ay) * dy) / len2, 0.0, 1.0) : 0.0;
      const double ex = px - (ax + t * dx), ey = py - (ay + t * dy);
      const double d = std::sqrt(ex * ex + ey * ey);
      cv.blend(x, y, c, fade * clamp01(hw + 0.5 - d));
    }
}

// A hanging wire from a to b that sags by `sag` pixels at its middle (drawn as short strokes).
void draw_wire(Canvas& cv, double ax, double ay, double bx, double by, double sag, double width, const Rgb& c,
               double opacity = 1.0) {
  const int n = 24;
  for (int i = 0; i < n; ++i) {
    const double t0 = double(i) / n, t1 = double(i + 1) / n;
    const double y0 = lerp(ay, by, t0) + 4 * sag * t0 * (1 - t0);
    const double y1 = lerp(ay, by, t1) + 4 * sag * t1 * (1 - t1);
    draw_line(cv, lerp(ax, bx, t0), y0, lerp(ax, bx, t1), y1, width, c, opacity);
  }
}

struct Point {
  double x, y;
};

bool inside_polygon(const std::vector<Point>& poly, double x, double y) {
  bool in = false;
  for (std::size_t i = 0, j = poly.size() - 1; i < poly.size(); j = i++) {
    if ((poly[i].y > y) != (poly[j].y > y) &&
        x < (poly[j].x - poly[i].x) * (y - poly[i].y) / (poly[j].y - poly[i].y) + poly[i].x)
      in = !in;
  }
  return in;
}

// Polygon fill, antialiased by 4x4 supersampling.
void fill_polygon(Canvas& cv, const std::vector<Point>& poly, const Rgb& c, double opacity = 1.0) {
  double minx = 1e9, miny = 1e9, maxx = -1e9, maxy = -1e9;
  for (const auto& p : poly) {
    minx = std::min(minx, p.x), maxx = std::max(maxx, p.x);
    miny = std::min(miny, p.y), maxy = std::max(maxy, p.y);
  }
  for (int y = std::max(0, int(miny)); y <= std::min(cv.h - 1, int(maxy)); ++y)
    for (int x = std::max(0, int(minx)); x <= std::min(cv.w - 1, int(maxx)); ++x) {
      int hits = 0;
      for (int sy = 0; sy < 4; ++sy)
        for (int sx = 0; sx < 4; ++sx) hits += inside_polygon(poly, x + (sx + 0.5) / 4, y + (sy + 0.5) / 4);
      cv.blend(x, y, c, opacity * hits / 16.0);
    }
}

void fill_ellipse(Canvas& cv, double cx, double cy, double rx, double ry, const Rgb& c, double opacity = 1.0) {
  for (int y = std::max(0, int(cy - ry - 1)); y <= std::min(cv.h - 1, int(cy + ry + 1)); ++y)
    for (int x = std::max(0, int(cx - rx - 1)); x <= std::min(cv.w - 1, int(cx + rx + 1)); ++x) {
      int hits = 0;
      for (int sy = 0; sy < 4; ++sy)
        for (int sx = 0; sx < 4; ++sx) {
          const double u = (x + (sx + 0.5) / 4 - cx) / rx, v = (y + (sy + 0.5) / 4 - cy) / ry;
          hits += u * u + v * v <= 1.0;
        }
      cv.blend(x, y, c, opacity * hits / 16.0);
    }
}

// ---------------------------------------------------------------- lettering

// Blocky 5x7 capitals drawn for these frames ('#' = filled cell).
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
      {'J', {"  ###", "    #", "    #", "    #", "    #", "#   #", " ### "}},
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
      {'/', {"    #", "    #", "   # ", "  #  ", " #   ", "#    ", "#    "}},
      {' ', {"     ", "     ", "     ", "     ", "     ", "     ", "     "}},
  };
  return g;
}

// Width in pixels of `text` drawn with cells of `cell` pixels.
double text_width(const std::string& text, double cell) { return text.empty() ? 0 : (text.size() * 6 - 1) * cell; }

// Draws `text` with its top-left corner at (x, y); each glyph cell is `cell` pixels square.
void draw_text(Canvas& cv, double x, double y, double cell, const std::string& text, const Rgb& c,
               double opacity = 1.0) {
  for (char ch : text) {
    const auto it = glyphs().find(ch);
    if (it != glyphs().end())
      for (int r = 0; r < 7; ++r)
        for (int k = 0; k < 5; ++k)
          if (it->second[r][k] == '#')
            fill_rect(cv, x + k * cell, y + r * cell, x + (k + 1) * cell, y + (r + 1) * cell, c, opacity);
    x += 6 * cell;
  }
}

// ---------------------------------------------------------------- scene parts

struct SkyStyle {
  Rgb zenith, horizon;
  double horizon_y;     // row of the sea horizon
  double sun_x, sun_y;  // sun centre in pixels
  double sun_radius;    // 0: no disc
  Rgb sun_color;
  double glow_radius;  // size of the warm halo around the sun
  double glow_strength;
};

// Smooth sky: a zenith-to-horizon gradient plus a halo and disc around the sun.
void paint_sky(Canvas& cv, const SkyStyle& s) {
  for (int y = 0; y < cv.h; ++y)
    for (int x = 0; x < cv.w; ++x) {
      const double t = clamp01(double(y) / std::max(1.0, s.horizon_y));
      Rgb c = mix(s.zenith, s.horizon, std::pow(t, 1.8));
      const double dx = x + 0.5 - s.sun_x, dy = (y + 0.5 - s.sun_y) * 1.6;
      const double d = std::sqrt(dx * dx + dy * dy);
      c = c + s.sun_color * (s.glow_strength * std::exp(-d / s.glow_radius));
      if (s.sun_radius > 0) c = mix(c, s.sun_color * 1.15, smoothstep(s.sun_radius + 1.0, s.sun_radius - 1.0, d));
      cv.at(x, y) = c;
    }
}

struct CloudStyle {
  double top, bottom;       // rows the cloud band covers (faded at both ends)
  double scale_x, scale_y;  // noise frequency per pixel (stretched: layered clouds)
  double cover;             // 0..1, more is cloudier
  double softness;
  Rgb shadow, lit;  // cloud base colour and sun-lit edge colour
  double opacity;
  double sun_x, sun_y;
};

// Soft clouds from thresholded fractal noise; the side facing the sun is lit.
void paint_clouds(Canvas& cv, const CloudStyle& s, std::uint64_t seed) {
  const double threshold = 1.0 - s.cover;
  for (int y = std::max(0, int(s.top)); y < std::min(cv.h, int(s.bottom)); ++y) {
    const double band = smoothstep(s.top, s.top + 0.25 * (s.bottom - s.top), y) *
                        smoothstep(s.bottom, s.bottom - 0.3 * (s.bottom - s.top), y);
    for (int x = 0; x < cv.w; ++x) {
      const double n = fbm(x * s.scale_x, y * s.scale_y, seed, 6, 0.55);
      const double density = smoothstep(threshold - 0.5 * s.softness, threshold + s.softness, n) * band;
      if (density <= 0) continue;
      // Lighting: the noise a little toward the sun is thinner on the lit side.
      const double dx = s.sun_x - x, dy = s.sun_y - y, len = std::max(1.0, std::sqrt(dx * dx + dy * dy));
      const double n2 = fbm((x + 6 * dx / len) * s.scale_x, (y + 6 * dy / len) * s.scale_y, seed, 6, 0.55);
      const double light = clamp01(0.5 + 4.0 * (n - n2));
      cv.blend(x, y, mix(s.shadow, s.lit, light), s.opacity * density);
    }
  }
}

struct SeaStyle {
  double horizon_y;
  Rgb deep, sky_reflection;  // water body colour and the reflected sky near the horizon
  double sun_x;
  Rgb glint;
  double glint_strength, glint_width;
  double wave_contrast;
  double calm;  // 0 choppy .. 1 glassy (long exposure)
};

// Sea below the horizon: perspective wave texture that fades with distance, and sun glints.
void paint_sea(Canvas& cv, const SeaStyle& s, std::uint64_t seed) {
  const double cx = cv.w * 0.5;
  for (int y = int(s.horizon_y); y < cv.h; ++y) {
    const double dy = y + 0.5 - s.horizon_y;  // rows below the horizon, > 0
    const double depth = clamp01(dy / (cv.h - s.horizon_y));
    const Rgb body = mix(s.sky_reflection, s.deep, std::pow(depth, 0.45));
    for (int x = 0; x < cv.w; ++x) {
      // Ground-plane coordinates: distance ~ 1/dy, across ~ (x - cx)/dy; crests run along x.
      const double u = (x + 0.5 - cx) / dy * 6.0, v = 300.0 / dy;
      double wave = 0.0, norm = 0.0, amp = 1.0, fu = 0.10, fv = 1.0;
      for (int o = 0; o < 6; ++o) {
        // Footprint of one pixel in noise cells: octaves finer than a pixel are left out.
        const double footprint = std::max(fu * 6.0 / dy, fv * 300.0 / (dy * dy));
        const double keep = clamp01(1.6 - 2.0 * footprint);
        wave += keep * amp * (value_noise(u * fu, v * fv, seed + o) - 0.5);
        norm += amp;
        amp *= 0.6, fu *= 2.0, fv *= 2.0;
      }
      wave /= norm;
      Rgb c = body * (1.0 + (1.0 - s.calm) * s.wave_contrast * wave * 2.5);
      // Sun path: a soft column that widens toward the camera, broken into sparkles on the crests.
      const double width = s.glint_width * (0.3 + dy / 14.0);
      const double column = std::exp(-std::pow((x + 0.5 - s.sun_x) / width, 2));
      const double crest = smoothstep(-0.02, 0.12, wave);
      const double sparkle = smoothstep(0.62, 0.92, value_noise(x * 0.55, y * 1.1, seed + 99)) * crest;
      const double glow = s.calm * 0.6 + (1.0 - s.calm) * (0.25 * crest + 0.9 * sparkle);
      c = c + s.glint * (s.glint_strength * column * glow);
      cv.at(x, y) = c;
    }
  }
}

// Far headland on the horizon, hazy: filled between the horizon and a bumpy outline.
void paint_headland(Canvas& cv, double horizon_y, double x0, double x1, double height, const Rgb& c,
                    std::uint64_t seed) {
  for (int x = std::max(0, int(x0)); x < std::min(cv.w, int(x1)); ++x) {
    const double t = (x - x0) / (x1 - x0);
    const double profile = std::sin(kPi * std::pow(t, 0.7)) * (0.75 + 0.5 * fbm(x * 0.03, 3.0, seed, 4));
    const double top = horizon_y - height * profile;
    for (int y = std::max(0, int(top)); y <= int(horizon_y); ++y) cv.blend(x, y, c, clamp01(y + 1.0 - top) * 0.92);
  }
}

// Land below the outline `top(x)`: sand with patches, ripples and grain, a foam line at the water's edge.
template <class Outline>
void paint_land(Canvas& cv, Outline top, const Rgb& sand, const Rgb& dark_sand, const Rgb& foam, Rng& rng,
                std::uint64_t seed, double foam_strength = 0.8) {
  for (int x = 0; x < cv.w; ++x) {
    const double t0 = top(x + 0.5);
    for (int y = std::max(0, int(std::floor(t0))); y < cv.h; ++y) {
      const double cover = clamp01(y + 1.0 - t0);
      const double depth = y - t0;
      const double patches = fbm(x * 0.012, y * 0.03, seed, 5);
      const double ripple = 0.5 + 0.5 * std::sin((y * 0.9 + 10 * fbm(x * 0.02, y * 0.02, seed + 9, 3)) * 1.3);
      Rgb c = mix(dark_sand, sand, clamp01(0.2 + 1.2 * patches));
      c = c * (0.93 + 0.1 * ripple * clamp01(depth / 30.0)) * (0.965 + 0.07 * rng.uniform());
      // Wet band and foam just below the water line.
      const double wet = std::exp(-depth / 6.0);
      c = mix(c, dark_sand * 0.8, 0.5 * wet);
      const double froth = foam_strength * std::exp(-depth / 1.6) * (0.6 + 0.8 * fbm(x * 0.15, y * 0.5, seed + 3, 3));
      c = mix(c, foam, clamp01(froth));
      cv.blend(x, y, c, cover);
    }
  }
}

// Tufts of dune grass below an outline: thin leaning strokes, scattered down to `spread` pixels
// below it and drawn top to bottom so that nearer tufts cover farther ones.
template <class Outline>
void paint_grass(Canvas& cv, Outline top, double x0, double x1, int tufts, const Rgb& c, double height, double spread,
                 Rng& rng) {
  std::vector<Point> roots;
  for (int i = 0; i < tufts; ++i) {
    const double x = rng.uniform(x0, x1);
    roots.push_back({x, top(x) + spread * std::pow(rng.uniform(), 1.5)});
  }
  std::sort(roots.begin(), roots.end(), [](const Point& a, const Point& b) { return a.y < b.y; });
  for (const Point& root : roots) {
    const double x = root.x, y = root.y;
    const int blades = rng.integer(4, 9);
    for (int b = 0; b < blades; ++b) {
      const double lean = rng.uniform(-0.6, 0.6);
      const double len = height * rng.uniform(0.5, 1.1);
      const double shade = rng.uniform(0.75, 1.15);
      draw_line(cv, x + rng.uniform(-1.5, 1.5), y, x + lean * len, y - len, rng.uniform(0.6, 1.1), c * shade, 0.9);
    }
  }
}

struct Building {
  double x, ground, width, height;  // front face, bottom-left corner at (x, ground)
  double side;                      // width of the visible side face (to the right); 0 for none
  Rgb wall, roof, trim;
  int roof_kind;  // 0 flat with railing, 1 gable, 2 shed
  int window_cols, window_rows;
  double lit_fraction;  // share of windows lit (dusk)
  Rgb glass, lamp;
  std::string sign;  // lettering on the front, may be empty
};

void draw_building(Canvas& cv, const Building& b, Rng& rng) {
  const double top = b.ground - b.height;
  // Side face, darker, receding up and to the right.
  if (b.side > 0) {
    const double rise = b.side * 0.35;
    fill_polygon(cv,
                 {{b.x + b.width, b.ground},
                  {b.x + b.width + b.side, b.ground - rise},
                  {b.x + b.width + b.side, top - rise},
                  {b.x + b.width, top}},
                 b.wall * 0.68);
    if (b.roof_kind == 1)
      fill_polygon(cv,
                   {{b.x + b.width * 0.5, top - b.height * 0.35},
                    {b.x + b.width, top},
                    {b.x + b.width + b.side, top - rise},
                    {b.x + b.width * 0.5 + b.side, top - b.height * 0.35 - rise}},
                   b.roof);
    else
      fill_polygon(cv,
                   {{b.x, top}, {b.x + b.width, top}, {b.x + b.width + b.side, top - rise}, {b.x + b.side, top - rise}},
                   b.roof * 1.1);
  }
  fill_rect(cv, b.x, top, b.x + b.width, b.ground, b.wall);
  // Weatherboard lines: faint horizontal strokes on the wall.
  for (double y = top + 3; y < b.ground - 1; y += 3.0) draw_line(cv, b.x, y, b.x + b.width, y, 0.5, b.wall * 0.82, 0.6);
  // Roof.
  if (b.roof_kind == 1) {
    fill_polygon(cv, {{b.x - 2, top}, {b.x + b.width * 0.5, top - b.height * 0.35}, {b.x + b.width + 2, top}},
                 b.wall * 0.9);
    draw_line(cv, b.x - 3, top + 0.5, b.x + b.width * 0.5, top - b.height * 0.35, 2.0, b.roof);
    draw_line(cv, b.x + b.width * 0.5, top - b.height * 0.35, b.x + b.width + 3, top + 0.5, 2.0, b.roof);
  } else if (b.roof_kind == 2) {
    fill_polygon(cv,
                 {{b.x - 2, top + 1},
                  {b.x + b.width + 2, top - b.height * 0.18},
                  {b.x + b.width + 2, top - b.height * 0.18 + 3},
                  {b.x - 2, top + 4}},
                 b.roof);
  } else {
    fill_rect(cv, b.x - 1.5, top - 2.5, b.x + b.width + 1.5, top + 0.5, b.trim);
    // Roof railing: posts and a rail, fine detail against the sky.
    const double rail = top - 7;
    draw_line(cv, b.x, rail, b.x + b.width, rail, 0.8, b.trim * 0.6);
    for (double x = b.x + 0.5; x <= b.x + b.width; x += 4.0) draw_line(cv, x, rail, x, top - 2.5, 0.6, b.trim * 0.6);
  }
  // Windows in a grid, each with a frame and a glint or a lamp.
  if (b.window_cols > 0 && b.window_rows > 0) {
    const double mx = b.width * 0.1, usable_w = b.width - 2 * mx;
    const double usable_h = b.height * 0.8;
    const double cell_w = usable_w / b.window_cols, cell_h = usable_h / b.window_rows;
    for (int r = 0; r < b.window_rows; ++r)
      for (int c = 0; c < b.window_cols; ++c) {
        const double wx = b.x + mx + c * cell_w + cell_w * 0.2, wy = top + b.height * 0.08 + r * cell_h + cell_h * 0.2;
        const double ww = cell_w * 0.6, wh = cell_h * 0.55;
        const bool lit = rng.uniform() < b.lit_fraction;
        fill_rect(cv, wx - 0.8, wy - 0.8, wx + ww + 0.8, wy + wh + 0.8, b.trim);
        fill_rect(cv, wx, wy, wx + ww, wy + wh, lit ? b.lamp * rng.uniform(0.8, 1.05) : b.glass);
        draw_line(cv, wx + ww * 0.5, wy, wx + ww * 0.5, wy + wh, 0.7, b.trim);  // mullion
        if (!lit) draw_line(cv, wx + 0.8, wy + wh - 1, wx + ww - 1, wy + 1, 0.6, b.glass * 1.8 + gray(0.15), 0.5);
      }
  }
  // Door at the right of the front face.
  const double dw = std::max(3.0, b.width * 0.12);
  fill_rect(cv, b.x + b.width - dw * 1.8, b.ground - std::min(b.height * 0.7, dw * 2.4), b.x + b.width - dw * 0.8,
            b.ground, b.glass * 0.8);
  if (!b.sign.empty()) {
    const double cell = std::max(0.8, std::min(2.0, b.width * 0.7 / text_width(b.sign, 1.0)));
    const double tw = text_width(b.sign, cell);
    fill_rect(cv, b.x + (b.width - tw) / 2 - 2, top + 1, b.x + (b.width + tw) / 2 + 2, top + 3 + 7 * cell, b.trim);
    draw_text(cv, b.x + (b.width - tw) / 2, top + 2, cell, b.sign, b.wall * 0.25);
  }
}

struct Mast {
  double x, ground, height;
  double base_width, top_width;
  Rgb color, wire;
  double wire_width;
  bool beacon;  // red light at the top
  Rgb beacon_color;
  std::vector<double> anchors;  // ground anchor offsets from the base for the guy wires (pixels)
};

// A lattice mast with cross bracing, top antennas and guy wires to ground anchors.
void draw_mast(Canvas& cv, const Mast& m) {
  const double top = m.ground - m.height;
  auto left = [&](double t) { return m.x - lerp(m.base_width, m.top_width, t) / 2; };
  auto right = [&](double t) { return m.x + lerp(m.base_width, m.top_width, t) / 2; };
  auto row = [&](double t) { return m.ground - t * m.height; };
  const double leg = std::max(0.9, m.base_width * 0.12);
  draw_line(cv, left(0), row(0), left(1), row(1), leg, m.color);
  draw_line(cv, right(0), row(0), right(1), row(1), leg, m.color);
  const int sections = std::max(6, int(m.height / (m.base_width * 1.3 + 2)));
  for (int i = 0; i < sections; ++i) {
    const double t0 = double(i) / sections, t1 = double(i + 1) / sections;
    draw_line(cv, left(t0), row(t0), right(t0), row(t0), leg * 0.6, m.color);
    draw_line(cv, left(t0), row(t0), right(t1), row(t1), leg * 0.5, m.color, 0.9);
    draw_line(cv, right(t0), row(t0), left(t1), row(t1), leg * 0.5, m.color, 0.9);
  }
  // Top: a whip antenna, a cross-arm with dipoles and a small dish.
  draw_line(cv, m.x, top, m.x, top - m.height * 0.12, leg * 0.7, m.color);
  const double arm = top + m.height * 0.04;
  draw_line(cv, m.x - m.base_width * 1.6, arm, m.x + m.base_width * 1.6, arm, leg * 0.7, m.color);
  for (double dx : {-1.5, -0.8, 0.8, 1.5})
    draw_line(cv, m.x + dx * m.base_width, arm - m.base_width * 0.7, m.x + dx * m.base_width, arm + m.base_width * 0.7,
              leg * 0.5, m.color);
  fill_ellipse(cv, m.x + m.top_width * 0.5 + m.base_width * 0.45, top + m.height * 0.18, m.base_width * 0.35,
               m.base_width * 0.5, m.color * 1.25);
  // Guy wires: from three heights to each anchor, with a slight sag.
  for (double a : m.anchors)
    for (double t : {0.38, 0.68, 0.94}) {
      const double ax = a < 0 ? left(t) : right(t);
      const double gx = m.x + a;
      const double len = std::hypot(gx - ax, m.ground - row(t));
      draw_wire(cv, ax, row(t), gx, m.ground + std::abs(a) * 0.04, len * 0.012, m.wire_width, m.wire, 0.95);
    }
  if (m.beacon) {
    fill_ellipse(cv, m.x, top - m.height * 0.12, 1.6, 1.6, m.beacon_color);
    for (int y = 0; y < cv.h; ++y)  // soft halo
      for (int x = std::max(0, int(m.x) - 12); x < std::min(cv.w, int(m.x) + 13); ++x) {
        const double d = std::hypot(x + 0.5 - m.x, y + 0.5 - (top - m.height * 0.12));
        if (d < 12) cv.at(x, y) = cv.at(x, y) + m.beacon_color * (0.25 * std::exp(-d / 3.0));
      }
  }
}

// A post-and-wire fence from (x0, y0) to (x1, y1); posts shrink toward the far end (x1, y1).
void draw_fence(Canvas& cv, double x0, double y0, double x1, double y1, int posts, double near_height,
                double far_height, const Rgb& post_color, const Rgb& wire_color, int wires) {
  std::vector<Point> tops;
  for (int i = 0; i < posts; ++i) {
    // Perspective spacing: posts bunch together toward the far end.
    const double t = 1.0 - std::pow(1.0 - double(i) / (posts - 1), 1.6);
    const double x = lerp(x0, x1, t), y = lerp(y0, y1, t), hgt = lerp(near_height, far_height, t);
    draw_line(cv, x, y, x + hgt * 0.03, y - hgt, std::max(0.8, hgt * 0.07), post_color);
    tops.push_back({x + hgt * 0.03, y - hgt});
  }
  for (int w = 0; w < wires; ++w) {
    const double f = 1.0 - double(w) / wires * 0.85;  // wire height as a share of the post
    for (int i = 0; i + 1 < posts; ++i) {
      const double t0 = 1.0 - std::pow(1.0 - double(i) / (posts - 1), 1.6);
      const double t1 = 1.0 - std::pow(1.0 - double(i + 1) / (posts - 1), 1.6);
      const double ya = lerp(y0, y1, t0), yb = lerp(y0, y1, t1);
      const double wa = ya + (tops[i].y - ya) * f, wb = yb + (tops[i + 1].y - yb) * f;
      draw_wire(cv, tops[i].x, wa, tops[i + 1].x, wb, 0.6 + (1 - t0) * 0.8, 0.6, wire_color, 0.9);
    }
  }
}

// A sign board on two posts with blocky lettering, one string per line.
void draw_sign(Canvas& cv, double x, double ground, double cell, const std::vector<std::string>& lines,
               const Rgb& board, const Rgb& ink, const Rgb& post) {
  double width = 0;
  for (const auto& l : lines) width = std::max(width, text_width(l, cell));
  const double pad = cell * 2, line_h = cell * 9;
  const double bw = width + 2 * pad, bh = lines.size() * line_h - 2 * cell + 2 * pad;
  const double top = ground - bh - cell * 12;
  draw_line(cv, x + bw * 0.2, ground, x + bw * 0.2, top + bh, std::max(1.0, cell * 0.9), post);
  draw_line(cv, x + bw * 0.8, ground, x + bw * 0.8, top + bh, std::max(1.0, cell * 0.9), post);
  fill_rect(cv, x - 1, top - 1, x + bw + 1, top + bh + 1, ink);
  fill_rect(cv, x, top, x + bw, top + bh, board);
  for (std::size_t i = 0; i < lines.size(); ++i)
    draw_text(cv, x + pad + (width - text_width(lines[i], cell)) / 2, top + pad + i * line_h, cell, lines[i], ink);
}

// A small boat: hull polygon, cabin with windows, a short mast.
void draw_boat(Canvas& cv, double x, double waterline, double length, const Rgb& hull, const Rgb& cabin,
               const Rgb& trim) {
  const double h = length * 0.16;
  fill_polygon(cv,
               {{x, waterline - h},
                {x + length, waterline - h * 1.25},
                {x + length * 0.9, waterline},
                {x + length * 0.08, waterline}},
               hull);
  draw_line(cv, x, waterline - h, x + length, waterline - h * 1.25, 1.0, trim);
  fill_rect(cv, x + length * 0.3, waterline - h * 2.3, x + length * 0.62, waterline - h * 1.1, cabin);
  for (int i = 0; i < 3; ++i)
    fill_rect(cv, x + length * (0.33 + i * 0.1), waterline - h * 2.0, x + length * (0.39 + i * 0.1),
              waterline - h * 1.6, trim * 0.5);
  draw_line(cv, x + length * 0.5, waterline - h * 2.3, x + length * 0.5, waterline - h * 5.5, 0.8, trim);
  draw_line(cv, x + length * 0.5, waterline - h * 5.5, x + length * 0.05, waterline - h * 1.05, 0.5, trim, 0.8);
  // Reflection: a darker, wobbly copy below the waterline.
  for (int y = int(waterline); y < std::min(cv.h, int(waterline + h * 1.8)); ++y)
    for (int xx = std::max(0, int(x)); xx < std::min(cv.w, int(x + length)); ++xx) {
      if ((y + xx / 3) % 3 == 0) continue;
      cv.blend(xx, y, hull * 0.6, 0.35 * (1.0 - (y - waterline) / (h * 1.8)));
    }
}

// ---------------------------------------------------------------- sensor and output

// Camera noise: signal-dependent shot noise plus read noise, per channel, from Box–Muller normals.
void add_sensor_noise(Canvas& cv, Rng& rng, double read_sigma, double shot_gain) {
  for (auto& p : cv.px)
    for (double* v : {&p.r, &p.g, &p.b}) {
      const double sigma = std::sqrt(read_sigma * read_sigma + shot_gain * std::max(0.0, *v));
      *v += sigma * rng.normal();
    }
}

// A gentle darkening toward the corners, as through a real lens.
void vignette(Canvas& cv, double strength) {
  for (int y = 0; y < cv.h; ++y)
    for (int x = 0; x < cv.w; ++x) {
      const double u = (x + 0.5) / cv.w - 0.5, v = (y + 0.5) / cv.h - 0.5;
      cv.at(x, y) = cv.at(x, y) * (1.0 - strength * (u * u + v * v) * 2.0);
    }
}

std::uint16_t quantize(double v, double max_value) { return std::uint16_t(std::lround(clamp01(v) * max_value)); }

// Canvas -> Image: `channels` 1 (gray, from the red plane), 3 (RGB) or 4 (RGB + the canvas alpha).
pcasweep::Image to_image(const Canvas& cv, int channels, int bit_depth) {
  pcasweep::Image img;
  img.width = cv.w;
  img.height = cv.h;
  img.channels = channels;
  img.bit_depth = bit_depth;
  img.channel_names = pcasweep::default_channel_names(channels);
  const double mv = bit_depth == 16 ? 65535.0 : 255.0;
  img.samples.reserve(std::size_t(cv.w) * cv.h * channels);
  for (std::size_t i = 0; i < cv.px.size(); ++i) {
    const Rgb& p = cv.px[i];
    if (channels == 1) {
      img.samples.push_back(quantize(p.r, mv));
      continue;
    }
    img.samples.push_back(quantize(p.r, mv));
    img.samples.push_back(quantize(p.g, mv));
    img.samples.push_back(quantize(p.b, mv));
    if (channels == 4) img.samples.push_back(quantize(cv.alpha[i], mv));
  }
  return img;
}

// ---------------------------------------------------------------- the frames

// Dawn from the west camera: low sun over the sea, pink-lit clouds, the station on the point at
// right with its mast and guy wires, a fence and the entrance sign in the foreground.
Canvas make_dawn(Rng& rng) {
  Canvas cv(637, 411);
  const double horizon = 221;
  const double sun_x = 190, sun_y = horizon - 22;
  SkyStyle sky{
      rgb(0.20, 0.29, 0.50), rgb(0.98, 0.74, 0.52), horizon, sun_x, sun_y, 9.0, rgb(1.0, 0.86, 0.62), 70.0, 0.55};
  paint_sky(cv, sky);
  paint_clouds(cv, {8, 150, 0.006, 0.022, 0.42, 0.12, rgb(0.45, 0.42, 0.55), rgb(1.0, 0.72, 0.62), 0.9, sun_x, sun_y},
               rng.bits());
  paint_clouds(
      cv, {150, horizon - 4, 0.012, 0.09, 0.30, 0.08, rgb(0.62, 0.52, 0.58), rgb(1.0, 0.80, 0.62), 0.7, sun_x, sun_y},
      rng.bits());
  paint_sea(cv,
            {horizon, rgb(0.10, 0.20, 0.30), rgb(0.75, 0.62, 0.58), sun_x, rgb(1.0, 0.86, 0.62), 0.9, 10.0, 0.9, 0.0},
            rng.bits());
  paint_headland(cv, horizon, 20, 140, 9, rgb(0.55, 0.50, 0.60), rng.bits());
  // The point: land rising from the bottom-left corner to a plateau at right.
  const std::uint64_t land_seed = rng.bits();
  auto shore = [&](double x) {
    const double t = smoothstep(120, 470, x);
    return lerp(400, horizon + 52, t) + 6 * (fbm(x * 0.02, 1.0, land_seed, 4) - 0.5);
  };
  paint_land(cv, shore, rgb(0.86, 0.72, 0.56), rgb(0.55, 0.44, 0.36), rgb(0.98, 0.93, 0.88), rng, rng.bits());
  auto dune = [&](double x) {
    const double t = smoothstep(230, 520, x);
    return lerp(430, horizon + 62, t) + 9 * (fbm(x * 0.015, 4.0, land_seed + 1, 4) - 0.5);
  };
  paint_land(cv, dune, rgb(0.74, 0.64, 0.46), rgb(0.44, 0.42, 0.28), rgb(0.74, 0.64, 0.46), rng, rng.bits(), 0.0);
  paint_grass(cv, dune, 250, 637, 220, rgb(0.33, 0.40, 0.22), 10, 60, rng);
  // The mast stands behind the station buildings, so they hide its lower guy anchors.
  draw_mast(cv,
            {448, horizon + 68, 190, 9, 3, rgb(0.22, 0.20, 0.24), rgb(0.18, 0.16, 0.20), 0.55, false, {}, {-58, 62}});
  // Station buildings on the plateau.
  const Rgb glass = rgb(0.12, 0.16, 0.22), lamp = rgb(1.0, 0.85, 0.55);
  draw_building(cv,
                {470, horizon + 70, 74, 30, 18, rgb(0.90, 0.88, 0.84), rgb(0.55, 0.20, 0.16), rgb(0.98, 0.98, 0.96), 1,
                 4, 1, 0.0, glass, lamp, ""},
                rng);
  draw_building(cv,
                {372, horizon + 76, 66, 22, 12, rgb(0.70, 0.74, 0.78), rgb(0.30, 0.32, 0.36), rgb(0.93, 0.93, 0.93), 0,
                 5, 1, 0.0, glass, lamp, "TERN POINT"},
                rng);
  draw_building(cv,
                {560, horizon + 73, 40, 16, 8, rgb(0.78, 0.64, 0.48), rgb(0.36, 0.28, 0.22), rgb(0.92, 0.90, 0.86), 2,
                 2, 1, 0.0, glass, lamp, ""},
                rng);
  draw_fence(cv, 300, 405, 630, horizon + 96, 16, 34, 8, rgb(0.36, 0.28, 0.22), rgb(0.30, 0.28, 0.28), 3);
  draw_sign(cv, 468, 399, 1.6, {"TERN POINT", "FIELD STATION", "NO ENTRY"}, rgb(0.94, 0.93, 0.88),
            rgb(0.10, 0.22, 0.40), rgb(0.35, 0.28, 0.22));
  vignette(cv, 0.25);
  add_sensor_noise(cv, rng, 0.0045, 0.00008);
  return cv;
}

// Near-infrared frame of mast 2 from the dune path (one band, stored as gray): in this band the
// sky is dark, clouds and dune vegetation glow, and the sea is nearly black. The guy wires, the
// fence and the warning sign are the fine high-contrast detail.
Canvas make_mast_nir(Rng& rng) {
  Canvas cv(431, 323);
  const double horizon = 196;
  const double sun_x = 360, sun_y = 30;
  paint_sky(cv, {gray(0.14), gray(0.44), horizon, sun_x, sun_y, 0.0, gray(0.9), 110.0, 0.22});
  paint_clouds(cv, {4, 185, 0.011, 0.021, 0.48, 0.10, gray(0.58), gray(0.97), 0.95, sun_x, sun_y}, rng.bits());
  paint_sea(cv, {horizon, gray(0.04), gray(0.30), sun_x, gray(1.0), 0.55, 9.0, 0.8, 0.0}, rng.bits());
  const std::uint64_t land_seed = rng.bits();
  auto shore = [&](double x) {
    return lerp(323, horizon + 14, smoothstep(-40, 170, x)) + 5 * (fbm(x * 0.03, 1.0, land_seed, 4) - 0.5);
  };
  paint_land(cv, shore, gray(0.62), gray(0.44), gray(0.92), rng, rng.bits());
  auto dune = [&](double x) {
    return lerp(340, horizon + 22, smoothstep(30, 230, x)) + 8 * (fbm(x * 0.02, 4.0, land_seed + 1, 4) - 0.5);
  };
  // Vegetated dune: chlorophyll reflects strongly in the near infrared.
  paint_land(cv, dune, gray(0.80), gray(0.56), gray(0.80), rng, rng.bits(), 0.0);
  paint_grass(cv, dune, 40, 431, 260, gray(0.93), 12, 90, rng);
  draw_mast(cv, {228, horizon + 30, 204, 14, 5, gray(0.07), gray(0.10), 0.7, false, {}, {-118, 125}});
  draw_building(
      cv,
      {352, horizon + 36, 96, 34, 0, gray(0.72), gray(0.26), gray(0.86), 0, 4, 2, 0.0, gray(0.10), gray(0.9), "STN 07"},
      rng);
  draw_fence(cv, -5, 318, 436, horizon + 62, 13, 46, 14, gray(0.16), gray(0.12), 3);
  draw_sign(cv, 40, 306, 2.0, {"MAST 2", "KEEP CLEAR"}, gray(0.86), gray(0.06), gray(0.2));
  vignette(cv, 0.2);
  add_sensor_noise(cv, rng, 0.012, 0.0003);
  return cv;
}

// A long-exposure dusk frame (16-bit): the sun is below the horizon, the sky is one wide smooth
// gradient, the sea is smoothed by the exposure, the station is a silhouette with lit windows and
// a red beacon on the mast. The steps between 8-bit levels would show here; 16 bits keep it smooth.
Canvas make_dusk16(Rng& rng) {
  Canvas cv(401, 267);
  const double horizon = 163;
  const double sun_x = 112, sun_y = horizon + 28;
  paint_sky(
      cv, {rgb(0.04, 0.06, 0.19), rgb(0.96, 0.55, 0.32), horizon, sun_x, sun_y, 0.0, rgb(1.0, 0.52, 0.24), 95.0, 0.5});
  // Faint stars where the sky is already dark.
  for (int i = 0; i < 70; ++i) {
    const double x = rng.uniform(0, cv.w), y = rng.uniform(0, horizon * 0.55);
    const double b = rng.uniform(0.1, 0.6) * (1.0 - y / (horizon * 0.55));
    fill_ellipse(cv, x, y, 0.7, 0.7, rgb(0.9, 0.92, 1.0), b);
  }
  paint_clouds(cv,
               {30, 150, 0.0035, 0.035, 0.30, 0.12, rgb(0.22, 0.16, 0.30), rgb(1.0, 0.58, 0.48), 0.55, sun_x, sun_y},
               rng.bits());
  paint_sea(cv,
            {horizon, rgb(0.03, 0.05, 0.12), rgb(0.62, 0.40, 0.36), sun_x, rgb(1.0, 0.55, 0.30), 0.22, 26.0, 0.3, 0.85},
            rng.bits());
  paint_headland(cv, horizon, 265, 401 + 140, 20, rgb(0.10, 0.08, 0.14), rng.bits());
  const std::uint64_t land_seed = rng.bits();
  auto shore = [&](double x) {
    return lerp(275, horizon + 36, smoothstep(140, 355, x)) + 4 * (fbm(x * 0.02, 1.0, land_seed, 4) - 0.5);
  };
  paint_land(cv, shore, rgb(0.16, 0.12, 0.13), rgb(0.08, 0.06, 0.08), rgb(0.45, 0.35, 0.38), rng, rng.bits(), 0.5);
  const Rgb wall = rgb(0.09, 0.08, 0.11), glass = rgb(0.05, 0.05, 0.08), lamp = rgb(1.0, 0.74, 0.38);
  draw_mast(cv, {285,
                 horizon + 40,
                 142,
                 8,
                 3,
                 rgb(0.05, 0.04, 0.07),
                 rgb(0.06, 0.05, 0.08),
                 0.55,
                 true,
                 rgb(1.0, 0.12, 0.08),
                 {-50, 56}});
  draw_building(cv,
                {298, horizon + 46, 60, 24, 12, wall, rgb(0.06, 0.05, 0.07), rgb(0.12, 0.11, 0.13), 1, 4, 1, 0.7, glass,
                 lamp, ""},
                rng);
  draw_building(cv,
                {226, horizon + 54, 52, 18, 10, wall, rgb(0.06, 0.05, 0.07), rgb(0.12, 0.11, 0.13), 0, 5, 1, 0.6, glass,
                 lamp, ""},
                rng);
  // A path lamp on a post with its glow.
  const double lamp_x = 268, lamp_y = horizon + 58;
  draw_line(cv, lamp_x, lamp_y + 26, lamp_x, lamp_y, 1.2, rgb(0.05, 0.04, 0.06));
  for (int y = 0; y < cv.h; ++y)
    for (int x = int(lamp_x) - 40; x < int(lamp_x) + 40; ++x) {
      const double d = std::hypot(x + 0.5 - lamp_x, y + 0.5 - (lamp_y - 1));
      cv.at(x, y) = cv.at(x, y) + rgb(1.0, 0.8, 0.5) * (0.5 * std::exp(-d / 4.0) + 0.06 * std::exp(-d / 18.0));
    }
  vignette(cv, 0.3);
  add_sensor_noise(cv, rng, 0.0008, 0.00001);
  return cv;
}

// Rocks of a breakwater: lumps lit from above between rows y0 and y1.
void paint_rocks(Canvas& cv, double x0, double x1, double y0, double y1, int count, const Rgb& c, Rng& rng) {
  for (int i = 0; i < count; ++i) {
    const double x = rng.uniform(x0, x1), y = rng.uniform(y0, y1);
    const double r = rng.uniform(2.5, 6.5) * (0.6 + 0.6 * (y - y0) / (y1 - y0));
    const double shade = rng.uniform(0.7, 1.2);
    fill_ellipse(cv, x, y, r * 1.3, r, c * (0.55 * shade));
    fill_ellipse(cv, x - r * 0.2, y - r * 0.25, r * 1.0, r * 0.7, c * shade);
  }
}

// Midday in the station harbour: cumulus over a calm harbour, a rock breakwater with a light
// tower, moored boats, a jetty on pilings, the boat house and its signage.
Canvas make_harbour(Rng& rng) {
  Canvas cv(500, 333);
  const double horizon = 146;
  const double sun_x = 420, sun_y = -60;
  paint_sky(
      cv, {rgb(0.20, 0.42, 0.76), rgb(0.76, 0.85, 0.93), horizon, sun_x, sun_y, 0.0, rgb(1.0, 0.97, 0.9), 140.0, 0.2});
  paint_clouds(cv, {0, 136, 0.010, 0.017, 0.44, 0.09, rgb(0.60, 0.64, 0.72), rgb(1.0, 1.0, 1.0), 0.97, sun_x, sun_y},
               rng.bits());
  paint_sea(cv, {horizon, rgb(0.04, 0.22, 0.30), rgb(0.56, 0.68, 0.78), 400, rgb(1.0, 1.0, 0.95), 0.5, 14.0, 0.7, 0.3},
            rng.bits());
  paint_headland(cv, horizon, -40, 260, 12, rgb(0.42, 0.52, 0.58), rng.bits());
  // Breakwater with a light tower at its end.
  paint_rocks(cv, 0, 250, 168, 186, 160, rgb(0.55, 0.52, 0.48), rng);
  fill_rect(cv, 246, 140, 256, 178, rgb(0.95, 0.95, 0.93));
  for (int i = 0; i < 3; ++i) fill_rect(cv, 246, 146 + i * 11, 256, 151 + i * 11, rgb(0.80, 0.12, 0.10));
  fill_rect(cv, 244, 136, 258, 140, rgb(0.2, 0.2, 0.2));
  fill_ellipse(cv, 251, 133, 3.5, 3.5, rgb(0.9, 0.9, 0.6));
  // The station side of the harbour: land at right with the boat house and a store.
  const std::uint64_t land_seed = rng.bits();
  auto shore = [&](double x) {
    return lerp(333, horizon + 26, smoothstep(330, 430, x)) + 3 * (fbm(x * 0.05, 1.0, land_seed, 3) - 0.5);
  };
  paint_land(cv, shore, rgb(0.82, 0.76, 0.62), rgb(0.55, 0.50, 0.42), rgb(0.95, 0.97, 0.98), rng, rng.bits(), 0.6);
  const Rgb glass = rgb(0.10, 0.14, 0.20), lamp = rgb(1.0, 0.85, 0.55);
  draw_building(cv,
                {392, horizon + 52, 84, 40, 14, rgb(0.62, 0.16, 0.14), rgb(0.25, 0.25, 0.28), rgb(0.96, 0.96, 0.94), 1,
                 3, 1, 0.0, glass, lamp, "BOAT HOUSE"},
                rng);
  draw_building(cv,
                {440, horizon + 86, 48, 22, 0, rgb(0.86, 0.86, 0.80), rgb(0.35, 0.35, 0.38), rgb(0.60, 0.60, 0.60), 2,
                 2, 1, 0.0, glass, lamp, "TP-3"},
                rng);
  // Flagpole with a flag.
  draw_line(cv, 380, horizon + 60, 380, horizon - 10, 1.0, rgb(0.85, 0.85, 0.85));
  fill_polygon(cv, {{380.5, horizon - 10}, {398, horizon - 7}, {396, horizon + 1}, {380.5, horizon}},
               rgb(0.15, 0.30, 0.65));
  // Boats moored in the harbour.
  draw_boat(cv, 60, 232, 78, rgb(0.95, 0.95, 0.93), rgb(0.85, 0.80, 0.70), rgb(0.15, 0.20, 0.35));
  draw_boat(cv, 190, 205, 50, rgb(0.15, 0.35, 0.55), rgb(0.95, 0.95, 0.92), rgb(0.2, 0.2, 0.2));
  draw_boat(cv, 300, 196, 34, rgb(0.85, 0.60, 0.15), rgb(0.95, 0.95, 0.92), rgb(0.2, 0.2, 0.2));
  // Jetty on pilings from the right shore, with reflections of the piles.
  const double deck = 250;
  for (double x = 200; x < 420; x += 9) {
    draw_line(cv, x, deck, x, deck + 16, 1.6, rgb(0.25, 0.20, 0.16));
    draw_line(cv, x, deck + 17, x + 0.5, deck + 30, 1.2, rgb(0.10, 0.14, 0.16), 0.5);
  }
  fill_rect(cv, 195, deck - 4, 420, deck + 1, rgb(0.55, 0.45, 0.35));
  for (double x = 196; x < 420; x += 3) draw_line(cv, x, deck - 4, x, deck + 1, 0.5, rgb(0.35, 0.28, 0.22), 0.6);
  draw_line(cv, 195, deck - 12, 420, deck - 12, 0.8, rgb(0.85, 0.85, 0.85));  // handrail
  for (double x = 196; x < 420; x += 18) draw_line(cv, x, deck - 12, x, deck - 4, 0.8, rgb(0.85, 0.85, 0.85));
  // Quay in the foreground: concrete with bollards and a painted edge.
  fill_rect(cv, 0, 300, 500, 333, rgb(0.62, 0.61, 0.58));
  for (int y = 300; y < 333; ++y)
    for (int x = 0; x < 500; ++x) cv.at(x, y) = cv.at(x, y) * (0.92 + 0.16 * fbm(x * 0.08, y * 0.2, land_seed + 7, 3));
  fill_rect(cv, 0, 300, 500, 303, rgb(0.95, 0.82, 0.15));
  for (double x = 40; x < 500; x += 110) {
    fill_rect(cv, x, 288, x + 8, 301, rgb(0.12, 0.12, 0.14));
    fill_rect(cv, x - 2, 286, x + 10, 289, rgb(0.12, 0.12, 0.14));
  }
  draw_wire(cv, 44, 290, 110, 236, 6, 0.9, rgb(0.80, 0.75, 0.60));  // mooring line
  draw_sign(cv, 150, 324, 1.3, {"TERN POINT HARBOUR", "NO MOORING AT JETTY"}, rgb(0.10, 0.25, 0.50),
            rgb(0.97, 0.97, 0.95), rgb(0.3, 0.3, 0.3));
  vignette(cv, 0.2);
  add_sensor_noise(cv, rng, 0.005, 0.00008);
  return cv;
}

// The all-sky camera on the station roof: a fisheye looking straight up (equidistant projection,
// zenith at the centre, horizon on the rim). Only the lens circle holds data, so alpha says so:
// opaque inside, transparent outside, with an antialiased rim. Around the rim: the tops of the
// mast and the station roofs against the sky.
Canvas make_allsky_rgba(Rng& rng) {
  Canvas cv(263, 247);
  const double cx = 131.5, cy = 123.5, radius = 118;
  const double sun_zenith = 58.0 * kPi / 180, sun_azimuth = 2.3;
  const double sx = std::sin(sun_zenith) * std::cos(sun_azimuth), sy = std::sin(sun_zenith) * std::sin(sun_azimuth),
               sz = std::cos(sun_zenith);
  const std::uint64_t cloud_seed = rng.bits();
  for (int y = 0; y < cv.h; ++y)
    for (int x = 0; x < cv.w; ++x) {
      const double dx = x + 0.5 - cx, dy = y + 0.5 - cy, r = std::hypot(dx, dy);
      const double zenith = std::min(r / radius, 1.0) * kPi / 2;  // equidistant fisheye
      const double az = std::atan2(dy, dx);
      const double vx = std::sin(zenith) * std::cos(az), vy = std::sin(zenith) * std::sin(az), vz = std::cos(zenith);
      const double to_sun = std::acos(std::clamp(vx * sx + vy * sy + vz * sz, -1.0, 1.0));
      const double t = zenith / (kPi / 2);
      Rgb c = mix(rgb(0.12, 0.30, 0.70), rgb(0.70, 0.80, 0.90), std::pow(t, 2.4));
      c = c + rgb(1.0, 0.95, 0.85) * (0.55 * std::exp(-to_sun / 0.25) + 0.15 * std::exp(-to_sun / 0.9));
      c = mix(c, rgb(1.1, 1.08, 1.0), smoothstep(0.045, 0.03, to_sun));  // sun disc
      // Clouds on a flat layer overhead: layer coordinates are tan(zenith) along the azimuth.
      const double reach = std::tan(std::min(zenith, 1.45));
      const double n = fbm(reach * std::cos(az) * 1.6 + 3.0, reach * std::sin(az) * 1.6 - 2.0, cloud_seed, 6, 0.55);
      const double density = smoothstep(0.50, 0.64, n) * smoothstep(1.50, 1.25, zenith);
      const Rgb cloud = mix(rgb(0.62, 0.64, 0.70), rgb(1.0, 1.0, 0.98), clamp01(0.4 + 0.6 * std::exp(-to_sun / 0.8)));
      c = mix(c, cloud, 0.95 * density);
      cv.at(x, y) = c;
    }
  // Horizon ring: the dune crest, then the station roofs, dark against the bright rim of the sky.
  const std::uint64_t rim_seed = rng.bits();
  for (int y = 0; y < cv.h; ++y)
    for (int x = 0; x < cv.w; ++x) {
      const double dx = x + 0.5 - cx, dy = y + 0.5 - cy, r = std::hypot(dx, dy) / radius;
      const double az = std::atan2(dy, dx);
      const double crest = 0.975 - 0.05 * fbm(az * 4.0 + 10.0, 0.5, rim_seed, 5);
      const Rgb dune = rgb(0.20, 0.22, 0.14) * (0.8 + 0.4 * fbm(x * 0.3, y * 0.3, rim_seed + 1, 2));
      cv.blend(x, y, dune, clamp01((r - crest) * radius + 0.5));
      double roof = 2.0;  // no roof at this azimuth
      if (az > 0.55 && az < 1.05) roof = 0.86;
      if (az > 1.05 && az < 1.25) roof = 0.89;
      if (az > 1.55 && az < 1.85) roof = 0.84 + 0.1 * std::abs(az - 1.7);  // gable seen end-on
      if (roof < 2.0) cv.blend(x, y, rgb(0.36, 0.33, 0.32), clamp01((r - roof) * radius + 0.5));
    }
  // The mast rises toward the zenith along one azimuth, with a cross-arm and guy wires.
  const double mast_az = -0.9, top = 0.52 * radius;
  const double ux = std::cos(mast_az), uy = std::sin(mast_az);
  draw_line(cv, cx + ux * top, cy + uy * top, cx + ux * radius, cy + uy * radius, 2.0, rgb(0.10, 0.10, 0.12));
  draw_line(cv, cx + ux * top - uy * 6, cy + uy * top + ux * 6, cx + ux * top + uy * 6, cy + uy * top - ux * 6, 1.0,
            rgb(0.10, 0.10, 0.12));
  for (double side : {-1.0, 1.0})
    for (double along : {0.62, 0.75})
      draw_line(cv, cx + ux * along * radius, cy + uy * along * radius, cx + std::cos(mast_az + side * 0.5) * radius,
                cy + std::sin(mast_az + side * 0.5) * radius, 0.6, rgb(0.10, 0.10, 0.12), 0.9);
  add_sensor_noise(cv, rng, 0.006, 0.0001);
  // The lens circle: data inside, nothing outside.
  for (int y = 0; y < cv.h; ++y)
    for (int x = 0; x < cv.w; ++x) {
      const double r = std::hypot(x + 0.5 - cx, y + 0.5 - cy);
      const double a = clamp01(radius + 0.5 - r);
      cv.alpha[std::size_t(y) * cv.w + x] = a;
      cv.at(x, y) = cv.at(x, y) * a;
    }
  return cv;
}

}  // namespace

int main(int argc, char** argv) {
  const std::string usage =
      "usage: make_samples OUTDIR [--seed N]   (default seed " + std::to_string(kDefaultSeed) + ")";
  std::string out;
  std::uint64_t seed = kDefaultSeed;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--help" || a == "-h") {
      std::cout << usage << "\n";
      return 0;
    } else if (a == "--seed") {
      if (i + 1 >= argc) {
        std::cerr << "make_samples: --seed needs a value\n" << usage << "\n";
        return 2;
      }
      const std::string v = argv[++i];
      char* end = nullptr;
      seed = std::strtoull(v.c_str(), &end, 10);
      if (v.empty() || *end != '\0' || v[0] == '-') {
        std::cerr << "make_samples: --seed: not a non-negative integer: " << v << "\n";
        return 2;
      }
    } else if (!a.empty() && a[0] == '-') {
      std::cerr << "make_samples: unknown option " << a << "\n" << usage << "\n";
      return 2;
    } else if (out.empty()) {
      out = a;
    } else {
      std::cerr << "make_samples: more than one output folder given\n" << usage << "\n";
      return 2;
    }
  }
  if (out.empty()) {
    std::cerr << usage << "\n";
    return 2;
  }
  try {
    std::error_code ec;
    std::filesystem::create_directories(out, ec);
    if (ec) throw pcasweep::data_error(out + ": cannot create folder: " + ec.message());
    struct Frame {
      const char* name;
      Canvas (*paint)(Rng&);
      int channels, bit_depth;
    };
    const Frame frames[] = {
        {"ternpoint_dawn_rgb.png", make_dawn, 3, 8},           {"ternpoint_mast_nir_gray.png", make_mast_nir, 1, 8},
        {"ternpoint_dusk16.png", make_dusk16, 3, 16},          {"ternpoint_harbour_rgb.png", make_harbour, 3, 8},
        {"ternpoint_allsky_rgba.png", make_allsky_rgba, 4, 8},
    };
    std::uint64_t index = 0;
    for (const auto& f : frames) {
      // Each frame has its own stream, so adding a frame never changes the others.
      Rng rng(mix64(seed ^ mix64(++index)));
      const Canvas cv = f.paint(rng);
      const std::string path = (std::filesystem::path(out) / f.name).string();
      pcasweep::write_png(path, to_image(cv, f.channels, f.bit_depth));
      std::cout << "wrote " << path << " (" << cv.w << "x" << cv.h << ", " << f.channels << " channel(s), "
                << f.bit_depth << "-bit)\n";
    }
  } catch (const pcasweep::Error& e) {
    std::cerr << "make_samples: " << e.what() << "\n";
    return e.exit_code();
  }
  return 0;
}
