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

}  // namespace

std::string render_svg_chart(const ChartSpec& c) {
  const auto& palette = okabe_ito_palette();
  // Layout: title band on top, legend panel on the right, axis labels left and bottom.
  const double W = c.width, H = c.height;
  const double top = c.subtitle.empty() ? 52 : 72;
  const double left = 84, bottom = c.note.empty() ? 62 : 84;
  bool any_legend = false;
  for (const auto& s : c.series) any_legend = any_legend || (s.in_legend && !s.name.empty());
  for (const auto& l : c.lines) any_legend = any_legend || (l.in_legend && !l.label.empty());
  const double legend_w = any_legend ? 250 : 20;
  const double px0 = left, px1 = W - legend_w - 10, py0 = top, py1 = H - bottom;

  // Data range.
  double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY, yhi = -INFINITY;
  for (const auto& s : c.series)
    for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
      if (!std::isfinite(s.x[i]) || !std::isfinite(s.y[i]) || (c.log_y && s.y[i] <= 0)) continue;
      xlo = std::min(xlo, s.x[i]);
      xhi = std::max(xhi, s.x[i]);
      ylo = std::min(ylo, s.y[i]);
      yhi = std::max(yhi, s.y[i]);
    }
  for (const auto& l : c.lines) {
    if (!std::isfinite(l.value)) continue;
    if (l.vertical) {
      xlo = std::min(xlo, l.value);
      xhi = std::max(xhi, l.value);
    } else if (!c.log_y || l.value > 0) {
      ylo = std::min(ylo, l.value);
      yhi = std::max(yhi, l.value);
    }
  }
  const bool empty = !(xlo <= xhi) || !(ylo <= yhi);
  if (empty) xlo = 0, xhi = 1, ylo = c.log_y ? 1 : 0, yhi = c.log_y ? 10 : 1;
  if (!std::isnan(c.x_min)) xlo = c.x_min;
  if (!std::isnan(c.x_max)) xhi = c.x_max;
  if (!std::isnan(c.y_min)) ylo = c.y_min;
  if (!std::isnan(c.y_max)) yhi = c.y_max;
  if (xhi == xlo) xlo -= 1, xhi += 1;
  if (c.log_y) {
    if (yhi <= ylo) ylo /= 10, yhi *= 10;
  } else if (yhi == ylo) {
    ylo -= 1, yhi += 1;
  }
  // Linear axes: extend to the outer ticks; log: to whole decades.
  std::vector<double> yt, xt = nice_ticks(xlo, xhi, 8);
  if (c.integer_x) {
    xt.erase(std::remove_if(xt.begin(), xt.end(), [](double v) { return v != std::round(v); }), xt.end());
    if (xt.empty()) xt = {std::round(xlo), std::round(xhi)};
  }
  if (std::isnan(c.x_min) && !xt.empty()) xlo = std::min(xlo, xt.front());
  if (std::isnan(c.x_max) && !xt.empty()) xhi = std::max(xhi, xt.back());
  double lylo = 0, lyhi = 0;
  std::vector<double> minor;
  if (c.log_y) {
    lylo = std::floor(std::log10(ylo));
    lyhi = std::ceil(std::log10(yhi));
    if (lyhi == lylo) lyhi += 1;
    const int decades = int(lyhi - lylo);
    const int every = std::max(1, (decades + 7) / 8);
    for (int e = int(lylo); e <= int(lyhi); e += every) yt.push_back(std::pow(10.0, e));
    if (decades <= 3)
      for (int e = int(lylo); e < int(lyhi); ++e)
        for (int m : {2, 5}) yt.push_back(m * std::pow(10.0, e));
    for (int e = int(lylo); e < int(lyhi); ++e)
      for (int m = 2; m <= 9; ++m) minor.push_back(m * std::pow(10.0, e));
    std::sort(yt.begin(), yt.end());
  } else {
    yt = nice_ticks(ylo, yhi, 6);
    if (std::isnan(c.y_min) && !yt.empty()) ylo = std::min(ylo, yt.front());
    if (std::isnan(c.y_max) && !yt.empty()) yhi = std::max(yhi, yt.back());
  }
  auto X = [&](double x) { return px0 + (x - xlo) / (xhi - xlo) * (px1 - px0); };
  auto Y = [&](double y) {
    const double t = c.log_y ? (std::log10(y) - lylo) / (lyhi - lylo) : (y - ylo) / (yhi - ylo);
    return py1 - t * (py1 - py0);
  };
  auto inside_x = [&](double x) { return x >= xlo - 1e-9 * std::abs(xhi - xlo) && x <= xhi + 1e-9 * std::abs(xhi - xlo); };
  auto inside_y = [&](double y) {
    if (c.log_y) return y > 0 && std::log10(y) >= lylo - 1e-9 && std::log10(y) <= lyhi + 1e-9;
    return y >= ylo - 1e-9 * std::abs(yhi - ylo) && y <= yhi + 1e-9 * std::abs(yhi - ylo);
  };

  std::ostringstream o;
  o << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
    << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << c.width << "\" height=\"" << c.height
    << "\" viewBox=\"0 0 " << c.width << " " << c.height << "\" font-family=\"DejaVu Sans, Helvetica, Arial, "
    << "sans-serif\" font-size=\"14\">\n"
    << "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n";
  o << "<text x=\"" << num(px0) << "\" y=\"28\" font-size=\"19\" font-weight=\"bold\">" << esc(c.title) << "</text>\n";
  if (!c.subtitle.empty())
    o << "<text x=\"" << num(px0) << "\" y=\"50\" font-size=\"14\" fill=\"#444\">" << esc(c.subtitle) << "</text>\n";
  // Grid and ticks.
  o << "<g stroke=\"#e4e4e4\" stroke-width=\"1\">\n";
  for (double v : minor)
    if (inside_y(v)) o << "<line x1=\"" << num(px0) << "\" x2=\"" << num(px1) << "\" y1=\"" << num(Y(v)) << "\" y2=\""
                       << num(Y(v)) << "\" stroke=\"#f2f2f2\"/>\n";
  for (double v : yt)
    if (inside_y(v)) o << "<line x1=\"" << num(px0) << "\" x2=\"" << num(px1) << "\" y1=\"" << num(Y(v)) << "\" y2=\""
                       << num(Y(v)) << "\"/>\n";
  for (double v : xt)
    if (inside_x(v)) o << "<line y1=\"" << num(py0) << "\" y2=\"" << num(py1) << "\" x1=\"" << num(X(v)) << "\" x2=\""
                       << num(X(v)) << "\"/>\n";
  o << "</g>\n";
  o << "<rect x=\"" << num(px0) << "\" y=\"" << num(py0) << "\" width=\"" << num(px1 - px0) << "\" height=\""
    << num(py1 - py0) << "\" fill=\"none\" stroke=\"#333\" stroke-width=\"1.2\"/>\n";
  o << "<g font-size=\"13\" fill=\"#222\">\n";
  for (double v : yt)
    if (inside_y(v)) o << "<line x1=\"" << num(px0 - 5) << "\" x2=\"" << num(px0) << "\" y1=\"" << num(Y(v))
                       << "\" y2=\"" << num(Y(v)) << "\" stroke=\"#333\"/><text x=\"" << num(px0 - 8) << "\" y=\""
                       << num(Y(v) + 4.5) << "\" text-anchor=\"end\">" << esc(tick_label(v)) << "</text>\n";
  for (double v : xt)
    if (inside_x(v)) o << "<line y1=\"" << num(py1) << "\" y2=\"" << num(py1 + 5) << "\" x1=\"" << num(X(v))
                       << "\" x2=\"" << num(X(v)) << "\" stroke=\"#333\"/><text x=\"" << num(X(v)) << "\" y=\""
                       << num(py1 + 21) << "\" text-anchor=\"middle\">" << esc(tick_label(v)) << "</text>\n";
  o << "</g>\n";
  o << "<text x=\"" << num((px0 + px1) / 2) << "\" y=\"" << num(py1 + 44) << "\" text-anchor=\"middle\" font-size=\"15\">"
    << esc(c.x_label) << "</text>\n";
  o << "<text transform=\"translate(22," << num((py0 + py1) / 2) << ") rotate(-90)\" text-anchor=\"middle\" "
    << "font-size=\"15\">" << esc(c.y_label) << "</text>\n";
  if (!c.note.empty())
    o << "<text x=\"" << num(px0) << "\" y=\"" << num(H - 12) << "\" font-size=\"12\" fill=\"#555\">" << esc(c.note)
      << "</text>\n";
  if (empty)
    o << "<text x=\"" << num((px0 + px1) / 2) << "\" y=\"" << num((py0 + py1) / 2) << "\" text-anchor=\"middle\" "
      << "fill=\"#777\">no data</text>\n";

  // Clip data to the plot area.
  o << "<defs><clipPath id=\"plot\"><rect x=\"" << num(px0) << "\" y=\"" << num(py0) << "\" width=\""
    << num(px1 - px0) << "\" height=\"" << num(py1 - py0) << "\"/></clipPath></defs>\n";
  // Reference lines with labels (labels stacked so they do not collide).
  int vlabel = 0;
  for (const auto& l : c.lines) {
    if (!std::isfinite(l.value)) continue;
    if (l.vertical) {
      if (!inside_x(l.value)) continue;
      o << "<line x1=\"" << num(X(l.value)) << "\" x2=\"" << num(X(l.value)) << "\" y1=\"" << num(py0) << "\" y2=\""
        << num(py1) << "\" stroke=\"" << l.colour << "\" stroke-width=\"1.3\" stroke-dasharray=\"" << l.dash
        << "\"/>\n";
      if (!l.label.empty() && !l.in_legend) {
        const double lx = X(l.value) + 4, ly = py0 + 16 + 16 * (vlabel++ % 6);
        const bool flip = lx > px1 - 120;
        o << "<text x=\"" << num(flip ? X(l.value) - 4 : lx) << "\" y=\"" << num(ly) << "\" font-size=\"12\" fill=\""
          << l.colour << "\"" << (flip ? " text-anchor=\"end\"" : "") << ">" << esc(l.label) << "</text>\n";
      }
    } else {
      if (!inside_y(l.value)) continue;
      o << "<line x1=\"" << num(px0) << "\" x2=\"" << num(px1) << "\" y1=\"" << num(Y(l.value)) << "\" y2=\""
        << num(Y(l.value)) << "\" stroke=\"" << l.colour << "\" stroke-width=\"1.3\" stroke-dasharray=\"" << l.dash
        << "\"/>\n";
      if (!l.label.empty() && !l.in_legend)
        o << "<text x=\"" << num(px1 - 6) << "\" y=\"" << num(Y(l.value) - 5) << "\" font-size=\"12\" text-anchor=\"end\" "
          << "fill=\"" << l.colour << "\">" << esc(l.label) << "</text>\n";
    }
  }
  // Series.
  std::vector<std::string> colours;
  int next = 0;
  for (const auto& s : c.series) {
    std::string col = s.style.colour;
    if (col.empty()) col = palette[std::size_t((s.style.palette_index >= 0 ? s.style.palette_index : next++) % 8)];
    colours.push_back(col);
  }
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
        d += (pen ? "L" : "M") + num(X(s.x[i])) + "," + num(Y(s.y[i]));
        pen = true;
      }
      if (!d.empty())
        o << "<path d=\"" << d << "\" fill=\"none\" stroke=\"" << col << "\" stroke-width=\"" << num(s.style.line_width)
          << "\" stroke-linejoin=\"round\"" << (s.style.dash.empty() ? "" : " stroke-dasharray=\"" + s.style.dash + "\"")
          << "/>\n";
    }
    if (s.style.marker != MarkerShape::none)
      for (std::size_t i = 0; i < n; ++i)
        if (ok(i)) o << marker_svg(s.style.marker, X(s.x[i]), Y(s.y[i]), s.style.marker_size, col, s.style.hollow, 1.8);
    o << "\n";
  }
  o << "</g>\n";
  // Legend panel.
  if (any_legend) {
    const double lx = px1 + 22;
    double ly = py0 + 6;
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
  o << "</svg>\n";
  return o.str();
}

}  // namespace pcasweep
