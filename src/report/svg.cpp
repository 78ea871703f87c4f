#include "report/svg.hpp"

#include <algorithm>
#include <cstdio>
#include <sstream>
#include <vector>

namespace pcasweep {

const std::vector<std::string>& okabe_ito_palette() {
  // Okabe & Ito, "Color Universal Design" (2008), the usual 8-colour set.
  static const std::vector<std::string> p = {"#000000", "#E69F00", "#56B4E9", "#009E73",
                                             "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};
  return p;
}

std::vector<double> nice_ticks(double lo, double hi, int target) {
  std::vector<double> ticks;
  if (!std::isfinite(lo) || !std::isfinite(hi)) return ticks;
  if (hi < lo) std::swap(lo, hi);
  if (hi == lo) return {lo};
  const double raw = (hi - lo) / std::max(1, target);
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  double step = mag;
  for (double m : {1.0, 2.0, 5.0, 10.0}) {
    step = m * mag;
    if (step >= raw) break;
  }
  const double first = std::ceil(lo / step - 1e-9) * step;
  for (double v = first; v <= hi + step * 1e-9; v += step) ticks.push_back(std::abs(v) < step * 1e-9 ? 0.0 : v);
  return ticks;
}

std::string tick_label(double v) {
  char buf[64];
  const double a = std::abs(v);
  if (v == std::round(v) && a < 1e6) {
    std::snprintf(buf, sizeof buf, "%.0f", v);
  } else if (a != 0 && (a >= 1e5 || a < 1e-3)) {
    std::snprintf(buf, sizeof buf, "%.3g", v);
    std::string s = buf;
    // 1e+05 -> 1e5, 2.5e-04 -> 2.5e-4
    auto e = s.find('e');
    if (e != std::string::npos) {
      std::string mant = s.substr(0, e), ex = s.substr(e + 1);
      bool neg = ex[0] == '-';
      ex = ex.substr(1);
      while (ex.size() > 1 && ex[0] == '0') ex.erase(0, 1);
      return mant + "e" + (neg ? "-" : "") + ex;
    }
    return s;
  } else {
    std::snprintf(buf, sizeof buf, "%.4g", v);
  }
  return buf;
}

namespace {

std::string esc(const std::string& s) {
  std::string o;
  for (char c : s) {
    switch (c) {
      case '&': o += "&amp;"; break;
      case '<': o += "&lt;"; break;
      case '>': o += "&gt;"; break;
      case '"': o += "&quot;"; break;
      default: o += c;
    }
  }
  return o;
}

// Splits text at spaces into lines of at most `width` bytes (a word longer
// than that stands alone on its line). Returns at least one line.
std::vector<std::string> wrap_words(const std::string& text, std::size_t width) {
  std::vector<std::string> lines(1);
  std::istringstream words(text);
  std::string word;
  while (words >> word) {
    if (!lines.back().empty() && lines.back().size() + 1 + word.size() > width) lines.emplace_back();
    if (!lines.back().empty()) lines.back() += ' ';
    lines.back() += word;
  }
  return lines;
}

std::string num(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  return buf;
}

std::string marker_svg(MarkerShape shape, double x, double y, double s, const std::string& colour, bool hollow,
                       double stroke) {
  const std::string fill = hollow ? "white" : colour;
  const std::string common = " fill=\"" + fill + "\" stroke=\"" + colour + "\" stroke-width=\"" + num(stroke) + "\"";
  switch (shape) {
    case MarkerShape::none: return "";
    case MarkerShape::circle:
      return "<circle cx=\"" + num(x) + "\" cy=\"" + num(y) + "\" r=\"" + num(s) + "\"" + common + "/>";
    case MarkerShape::square:
      return "<rect x=\"" + num(x - s) + "\" y=\"" + num(y - s) + "\" width=\"" + num(2 * s) + "\" height=\"" +
             num(2 * s) + "\"" + common + "/>";
    case MarkerShape::triangle:
      return "<polygon points=\"" + num(x) + "," + num(y - 1.2 * s) + " " + num(x - 1.1 * s) + "," +
             num(y + 0.8 * s) + " " + num(x + 1.1 * s) + "," + num(y + 0.8 * s) + "\"" + common + "/>";
    case MarkerShape::triangle_down:
      return "<polygon points=\"" + num(x) + "," + num(y + 1.2 * s) + " " + num(x - 1.1 * s) + "," +
             num(y - 0.8 * s) + " " + num(x + 1.1 * s) + "," + num(y - 0.8 * s) + "\"" + common + "/>";
    case MarkerShape::diamond:
      return "<polygon points=\"" + num(x) + "," + num(y - 1.3 * s) + " " + num(x + 1.3 * s) + "," + num(y) + " " +
             num(x) + "," + num(y + 1.3 * s) + " " + num(x - 1.3 * s) + "," + num(y) + "\"" + common + "/>";
    case MarkerShape::cross:
      return "<path d=\"M" + num(x - s) + "," + num(y - s) + "L" + num(x + s) + "," + num(y + s) + "M" +
             num(x - s) + "," + num(y + s) + "L" + num(x + s) + "," + num(y - s) + "\" stroke=\"" + colour +
             "\" stroke-width=\"" + num(stroke + 0.5) + "\" fill=\"none\"/>";
    case MarkerShape::plus:
      return "<path d=\"M" + num(x - 1.2 * s) + "," + num(y) + "L" + num(x + 1.2 * s) + "," + num(y) + "M" +
             num(x) + "," + num(y - 1.2 * s) + "L" + num(x) + "," + num(y + 1.2 * s) + "\" stroke=\"" + colour +
             "\" stroke-width=\"" + num(stroke + 0.5) + "\" fill=\"none\"/>";
  }
  return "";
}

// The plot rectangle inside the picture: title band on top, legend panel on
// the right (when any entry has a label), axis labels left and bottom.
struct Frame {
  double width = 0, height = 0;
  double px0 = 0, px1 = 0, py0 = 0, py1 = 0;  // plot area, px
  bool legend = false;
};

Frame frame_of(const ChartSpec& c) {
  Frame f;
  f.width = c.width;
  f.height = c.height;
  const double top = c.subtitle.empty() ? 52 : 72;
  const double left = 84, bottom = c.note.empty() ? 62 : 84;
  for (const auto& s : c.series) f.legend = f.legend || (s.in_legend && !s.name.empty());
  for (const auto& l : c.lines) f.legend = f.legend || (l.in_legend && !l.label.empty());
  const double legend_w = f.legend ? 250 : 20;
  f.px0 = left, f.px1 = f.width - legend_w - 10, f.py0 = top, f.py1 = f.height - bottom;
  return f;
}

// The axes: data ranges widened to the outer ticks (whole decades on a log
// axis), the ticks, and the maps from data to picture coordinates.
struct Axes {
  double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY, yhi = -INFINITY;
  double lylo = 0, lyhi = 0;          // log axis: decades shown
  bool log_y = false;
  bool empty = false;                 // no finite data: a placeholder range and "no data"
  std::vector<double> xt, yt, minor;  // ticks; minor: log axis only
  Frame f;

  double X(double x) const { return f.px0 + (x - xlo) / (xhi - xlo) * (f.px1 - f.px0); }
  double Y(double y) const {
    const double t = log_y ? (std::log10(y) - lylo) / (lyhi - lylo) : (y - ylo) / (yhi - ylo);
    return f.py1 - t * (f.py1 - f.py0);
  }
  bool inside_x(double x) const {
    return x >= xlo - 1e-9 * std::abs(xhi - xlo) && x <= xhi + 1e-9 * std::abs(xhi - xlo);
  }
  bool inside_y(double y) const {
    if (log_y) return y > 0 && std::log10(y) >= lylo - 1e-9 && std::log10(y) <= lyhi + 1e-9;
    return y >= ylo - 1e-9 * std::abs(yhi - ylo) && y <= yhi + 1e-9 * std::abs(yhi - ylo);
  }
};

// Extends a's ranges over every finite point and reference line.
void cover_data(const ChartSpec& c, Axes& a) {
  for (const auto& s : c.series)
    for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
      if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i]) || (c.log_y && s.y[i] <= 0)) continue;
      a.xlo = std::min(a.xlo, s.x[i]);
      a.xhi = std::max(a.xhi, s.x[i]);
      a.ylo = std::min(a.ylo, s.y[i]);
      a.yhi = std::max(a.yhi, s.y[i]);
    }
  for (const auto& l : c.lines) {
    if (!std::isfinite(l.value)) continue;
    if (l.vertical) {
      a.xlo = std::min(a.xlo, l.value);
      a.xhi = std::max(a.xhi, l.value);
    } else if (!c.log_y || l.value > 0) {
      a.ylo = std::min(a.ylo, l.value);
      a.yhi = std::max(a.yhi, l.value);
    }
  }
}

// Applies the chart's fixed limits and widens degenerate ranges.
void apply_limits(const ChartSpec& c, Axes& a) {
  a.empty = !(a.xlo <= a.xhi) || !(a.ylo <= a.yhi);
  if (a.empty) a.xlo = 0, a.xhi = 1, a.ylo = c.log_y ? 1 : 0, a.yhi = c.log_y ? 10 : 1;
  if (!std::isnan(c.x_min)) a.xlo = c.x_min;
  if (!std::isnan(c.x_max)) a.xhi = c.x_max;
  if (!std::isnan(c.y_min)) a.ylo = c.y_min;
  if (!std::isnan(c.y_max)) a.yhi = c.y_max;
  if (a.xhi == a.xlo) a.xlo -= 1, a.xhi += 1;
  if (c.log_y) {
    if (a.yhi <= a.ylo) a.ylo /= 10, a.yhi *= 10;
  } else if (a.yhi == a.ylo) {
    a.ylo -= 1, a.yhi += 1;
  }
}

// x ticks (whole numbers only when asked); the range grows to the outer ticks.
void place_x_ticks(const ChartSpec& c, Axes& a) {
  a.xt = nice_ticks(a.xlo, a.xhi, 8);
  if (c.integer_x) {
    a.xt.erase(std::remove_if(a.xt.begin(), a.xt.end(), [](double v) { return v != std::round(v); }), a.xt.end());
    if (a.xt.empty()) a.xt = {std::round(a.xlo), std::round(a.xhi)};
  }
  if (std::isnan(c.x_min) && !a.xt.empty()) a.xlo = std::min(a.xlo, a.xt.front());
  if (std::isnan(c.x_max) && !a.xt.empty()) a.xhi = std::max(a.xhi, a.xt.back());
}

// y ticks: whole decades (and 2, 5 when few) on a log axis, else nice steps.
void place_y_ticks(const ChartSpec& c, Axes& a) {
  if (c.log_y) {
    a.lylo = std::floor(std::log10(a.ylo));
    a.lyhi = std::ceil(std::log10(a.yhi));
    if (a.lyhi == a.lylo) a.lyhi += 1;
    const int decades = int(a.lyhi - a.lylo);
    const int every = std::max(1, (decades + 7) / 8);
    for (int e = int(a.lylo); e <= int(a.lyhi); e += every) a.yt.push_back(std::pow(10.0, e));
    if (decades <= 3)
      for (int e = int(a.lylo); e < int(a.lyhi); ++e)
        for (int m : {2, 5}) a.yt.push_back(m * std::pow(10.0, e));
    for (int e = int(a.lylo); e < int(a.lyhi); ++e)
      for (int m = 2; m <= 9; ++m) a.minor.push_back(m * std::pow(10.0, e));
    std::sort(a.yt.begin(), a.yt.end());
  } else {
    a.yt = nice_ticks(a.ylo, a.yhi, 6);
    if (std::isnan(c.y_min) && !a.yt.empty()) a.ylo = std::min(a.ylo, a.yt.front());
    if (std::isnan(c.y_max) && !a.yt.empty()) a.yhi = std::max(a.yhi, a.yt.back());
  }
}

Axes axes_of(const ChartSpec& c, const Frame& f) {
  Axes a;
  a.f = f;
  a.log_y = c.log_y;
  cover_data(c, a);
  apply_limits(c, a);
  place_x_ticks(c, a);
  place_y_ticks(c, a);
  return a;
}

// The XML prologue, the white background, title and subtitle.
void write_head(std::ostringstream& o, const ChartSpec& c, const Frame& f) {
  o << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
    << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << c.width << "\" height=\"" << c.height
    << "\" viewBox=\"0 0 " << c.width << " " << c.height << "\" font-family=\"DejaVu Sans, Helvetica, Arial, "
    << "sans-serif\" font-size=\"14\">\n"
    << "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n";
  o << "<text x=\"" << num(f.px0) << "\" y=\"28\" font-size=\"19\" font-weight=\"bold\">" << esc(c.title) << "</text>\n";
  if (!c.subtitle.empty())
    o << "<text x=\"" << num(f.px0) << "\" y=\"50\" font-size=\"14\" fill=\"#444\">" << esc(c.subtitle) << "</text>\n";
}

// Grid lines (minor decades lighter), the plot's border, tick marks and labels.
void write_grid_and_ticks(std::ostringstream& o, const Axes& a) {
  const Frame& f = a.f;
  o << "<g stroke=\"#e4e4e4\" stroke-width=\"1\">\n";
  for (double v : a.minor)
    if (a.inside_y(v)) o << "<line x1=\"" << num(f.px0) << "\" x2=\"" << num(f.px1) << "\" y1=\"" << num(a.Y(v))
                         << "\" y2=\"" << num(a.Y(v)) << "\" stroke=\"#f2f2f2\"/>\n";
  for (double v : a.yt)
    if (a.inside_y(v)) o << "<line x1=\"" << num(f.px0) << "\" x2=\"" << num(f.px1) << "\" y1=\"" << num(a.Y(v))
                         << "\" y2=\"" << num(a.Y(v)) << "\"/>\n";
  for (double v : a.xt)
    if (a.inside_x(v)) o << "<line y1=\"" << num(f.py0) << "\" y2=\"" << num(f.py1) << "\" x1=\"" << num(a.X(v))
                         << "\" x2=\"" << num(a.X(v)) << "\"/>\n";
  o << "</g>\n";
  o << "<rect x=\"" << num(f.px0) << "\" y=\"" << num(f.py0) << "\" width=\"" << num(f.px1 - f.px0) << "\" height=\""
    << num(f.py1 - f.py0) << "\" fill=\"none\" stroke=\"#333\" stroke-width=\"1.2\"/>\n";
  o << "<g font-size=\"13\" fill=\"#222\">\n";
  for (double v : a.yt)
    if (a.inside_y(v)) o << "<line x1=\"" << num(f.px0 - 5) << "\" x2=\"" << num(f.px0) << "\" y1=\"" << num(a.Y(v))
                         << "\" y2=\"" << num(a.Y(v)) << "\" stroke=\"#333\"/><text x=\"" << num(f.px0 - 8)
                         << "\" y=\"" << num(a.Y(v) + 4.5) << "\" text-anchor=\"end\">" << esc(tick_label(v))
                         << "</text>\n";
  for (double v : a.xt)
    if (a.inside_x(v)) o << "<line y1=\"" << num(f.py1) << "\" y2=\"" << num(f.py1 + 5) << "\" x1=\"" << num(a.X(v))
                         << "\" x2=\"" << num(a.X(v)) << "\" stroke=\"#333\"/><text x=\"" << num(a.X(v))
                         << "\" y=\"" << num(f.py1 + 21) << "\" text-anchor=\"middle\">" << esc(tick_label(v))
                         << "</text>\n";
  o << "</g>\n";
}

// Axis labels, the footnote, "no data" on an empty chart, and the clip path of the plot area.
void write_labels_and_clip(std::ostringstream& o, const ChartSpec& c, const Axes& a) {
  const Frame& f = a.f;
  o << "<text x=\"" << num((f.px0 + f.px1) / 2) << "\" y=\"" << num(f.py1 + 44)
    << "\" text-anchor=\"middle\" font-size=\"15\">" << esc(c.x_label) << "</text>\n";
  o << "<text transform=\"translate(22," << num((f.py0 + f.py1) / 2) << ") rotate(-90)\" text-anchor=\"middle\" "
    << "font-size=\"15\">" << esc(c.y_label) << "</text>\n";
  if (!c.note.empty())
    o << "<text x=\"" << num(f.px0) << "\" y=\"" << num(f.height - 12) << "\" font-size=\"12\" fill=\"#555\">"
      << esc(c.note) << "</text>\n";
  if (a.empty)
    o << "<text x=\"" << num((f.px0 + f.px1) / 2) << "\" y=\"" << num((f.py0 + f.py1) / 2)
      << "\" text-anchor=\"middle\" " << "fill=\"#777\">no data</text>\n";
  o << "<defs><clipPath id=\"plot\"><rect x=\"" << num(f.px0) << "\" y=\"" << num(f.py0) << "\" width=\""
    << num(f.px1 - f.px0) << "\" height=\"" << num(f.py1 - f.py0) << "\"/></clipPath></defs>\n";
}

// Reference lines with their labels beside them (vertical lines' labels
// stacked in six rows so they do not collide).
void write_reference_lines(std::ostringstream& o, const ChartSpec& c, const Axes& a) {
  const Frame& f = a.f;
  int vlabel = 0;
  for (const auto& l : c.lines) {
    if (!std::isfinite(l.value)) continue;
    if (l.vertical) {
      if (!a.inside_x(l.value)) continue;
      o << "<line x1=\"" << num(a.X(l.value)) << "\" x2=\"" << num(a.X(l.value)) << "\" y1=\"" << num(f.py0)
        << "\" y2=\"" << num(f.py1) << "\" stroke=\"" << l.colour << "\" stroke-width=\"1.3\" stroke-dasharray=\""
        << l.dash << "\"/>\n";
      if (!l.label.empty() && !l.in_legend) {
        const double lx = a.X(l.value) + 4, ly = f.py0 + 16 + 16 * (vlabel++ % 6);
        const bool flip = lx > f.px1 - 120;
        o << "<text x=\"" << num(flip ? a.X(l.value) - 4 : lx) << "\" y=\"" << num(ly)
          << "\" font-size=\"12\" fill=\"" << l.colour << "\"" << (flip ? " text-anchor=\"end\"" : "") << ">"
          << esc(l.label) << "</text>\n";
      }
    } else {
      if (!a.inside_y(l.value)) continue;
      o << "<line x1=\"" << num(f.px0) << "\" x2=\"" << num(f.px1) << "\" y1=\"" << num(a.Y(l.value)) << "\" y2=\""
        << num(a.Y(l.value)) << "\" stroke=\"" << l.colour << "\" stroke-width=\"1.3\" stroke-dasharray=\"" << l.dash
        << "\"/>\n";
      if (!l.label.empty() && !l.in_legend)
        o << "<text x=\"" << num(f.px1 - 6) << "\" y=\"" << num(a.Y(l.value) - 5)
          << "\" font-size=\"12\" text-anchor=\"end\" " << "fill=\"" << l.colour << "\">" << esc(l.label)
          << "</text>\n";
    }
  }
}

// Each series' colour: its own, its palette index, or the next palette colour in order.
std::vector<std::string> series_colours(const ChartSpec& c) {
  const auto& palette = okabe_ito_palette();
  std::vector<std::string> colours;
  int next = 0;
  for (const auto& s : c.series) {
    std::string col = s.style.colour;
    if (col.empty()) col = palette[std::size_t((s.style.palette_index >= 0 ? s.style.palette_index : next++) % 8)];
    colours.push_back(col);
  }
  return colours;
}

// The series inside the clip path: a path broken at skipped points, then markers.
void write_series(std::ostringstream& o, const ChartSpec& c, const Axes& a, const std::vector<std::string>& colours) {
  o << "<g clip-path=\"url(#plot)\">\n";
  for (std::size_t si = 0; si < c.series.size(); ++si) {
    const auto& s = c.series[si];
    const std::string& col = colours[si];
    const std::size_t n = std::min(s.x.size(), s.y.size());
    auto ok = [&](std::size_t i) { return std::isfinite(s.x[i]) && std::isfinite(s.y[i]) && (!c.log_y || s.y[i] > 0); };
    if (s.style.line) {
      std::string d;
      bool pen = false;
      for (std::size_t i = 0; i < n; ++i) {
        if (!ok(i)) {
          pen = false;
          continue;
        }
        d += (pen ? "L" : "M") + num(a.X(s.x[i])) + "," + num(a.Y(s.y[i]));
        pen = true;
      }
      if (!d.empty())
        o << "<path d=\"" << d << "\" fill=\"none\" stroke=\"" << col << "\" stroke-width=\"" << num(s.style.line_width)
          << "\" stroke-linejoin=\"round\"" << (s.style.dash.empty() ? "" : " stroke-dasharray=\"" + s.style.dash + "\"")
          << "/>\n";
    }
    if (s.style.marker != MarkerShape::none)
      for (std::size_t i = 0; i < n; ++i)
        if (ok(i)) o << marker_svg(s.style.marker, a.X(s.x[i]), a.Y(s.y[i]), s.style.marker_size, col, s.style.hollow, 1.8);
    o << "\n";
  }
  o << "</g>\n";
}

// The legend panel right of the plot: series (line and marker swatch), then
// reference lines that asked to be listed; text word-wrapped to the panel.
void write_legend(std::ostringstream& o, const ChartSpec& c, const Frame& f, const std::vector<std::string>& colours) {
  const double lx = f.px1 + 22;
  double ly = f.py0 + 6;
  o << "<g font-size=\"13\">\n";
  // An entry's text, word-wrapped to the panel's width (about 27 characters
  // at 13 px), one line per 17 px; then the gap to the next entry.
  const auto legend_text = [&](const std::string& text, double x, double cy) {
    const std::vector<std::string> rows = wrap_words(text, 27);
    for (std::size_t r = 0; r < rows.size(); ++r)
      o << "<text x=\"" << num(x) << "\" y=\"" << num(cy + 4.5 + 17.0 * double(r)) << "\">" << esc(rows[r])
        << "</text>\n";
    ly += 24 + 17.0 * double(rows.size() - 1);
  };
  for (std::size_t si = 0; si < c.series.size(); ++si) {
    const auto& s = c.series[si];
    if (!s.in_legend || s.name.empty()) continue;
    const double cy = ly + 10;
    if (s.style.line)
      o << "<line x1=\"" << num(lx) << "\" x2=\"" << num(lx + 28) << "\" y1=\"" << num(cy) << "\" y2=\"" << num(cy)
        << "\" stroke=\"" << colours[si] << "\" stroke-width=\"" << num(s.style.line_width) << "\""
        << (s.style.dash.empty() ? "" : " stroke-dasharray=\"" + s.style.dash + "\"") << "/>";
    o << marker_svg(s.style.marker, lx + 14, cy, std::min(s.style.marker_size, 6.0), colours[si], s.style.hollow, 1.8);
    legend_text(s.name, lx + 36, cy);
  }
  for (const auto& l : c.lines) {
    if (!l.in_legend || l.label.empty()) continue;
    const double cy = ly + 10;
    o << "<line x1=\"" << num(lx) << "\" x2=\"" << num(lx + 28) << "\" y1=\"" << num(cy) << "\" y2=\"" << num(cy)
      << "\" stroke=\"" << l.colour << "\" stroke-width=\"1.6\" stroke-dasharray=\"" << l.dash << "\"/>";
    legend_text(l.label, lx + 36, cy);
  }
  o << "</g>\n";
}

}  // namespace

std::string render_svg_chart(const ChartSpec& c) {
  const Frame frame = frame_of(c);
  const Axes axes = axes_of(c, frame);
  const std::vector<std::string> colours = series_colours(c);
  std::ostringstream o;
  write_head(o, c, frame);
  write_grid_and_ticks(o, axes);
  write_labels_and_clip(o, c, axes);
  write_reference_lines(o, c, axes);
  write_series(o, c, axes, colours);
  if (frame.legend) write_legend(o, c, frame, colours);
  o << "</svg>\n";
  return o.str();
}

}  // namespace pcasweep
