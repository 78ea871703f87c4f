#include "report/excerpt_plot.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "core/error.hpp"
#include "report/table.hpp"

namespace pcasweep {

namespace {

constexpr double kWidth = 1000, kLeft = 86, kRight = 20, kTop = 64;
constexpr double kSignalHeight = 150, kResidualHeight = 80, kGap = 26, kChannelGap = 44;
constexpr const char* kOriginalColour = "#1f3a93";
constexpr const char* kReconstructionColour = "#e67e22";
constexpr const char* kResidualColour = "#c0392b";

std::string escape(const std::string& text) {
  std::string out;
  for (char ch : text) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += ch;
    }
  }
  return out;
}

std::string num(double v) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f", v);
  return buffer;
}

// Tick positions covering [lo, hi] with a 1-2-5 step, about `count` of them.
std::vector<double> ticks(double lo, double hi, int count) {
  std::vector<double> out;
  if (!(hi > lo)) return {lo};
  const double raw = (hi - lo) / count;
  const double power = std::pow(10.0, std::floor(std::log10(raw)));
  const double step = raw / power < 1.5 ? power : raw / power < 3.5 ? 2 * power : raw / power < 7.5 ? 5 * power
                                                                                                        : 10 * power;
  for (double t = std::ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) out.push_back(std::abs(t) < step * 1e-9 ? 0.0 : t);
  return out;
}

struct Range {
  double lo, hi;
};

Range range_of(std::initializer_list<const std::vector<double>*> series) {
  double lo = INFINITY, hi = -INFINITY;
  for (const auto* s : series)
    for (double v : *s)
      if (std::isfinite(v)) {
        lo = std::min(lo, v);
        hi = std::max(hi, v);
      }
  if (!std::isfinite(lo)) return {-1, 1};
  if (hi - lo < 1e-12 * std::max(1.0, std::abs(hi))) {
    const double pad = std::max(1.0, std::abs(hi) * 0.05);
    return {lo - pad, hi + pad};
  }
  const double pad = (hi - lo) * 0.05;
  return {lo - pad, hi + pad};
}

// One panel: frame, horizontal grid with y tick labels, the series as polylines.
void panel(std::string& svg, double top, double height, const std::vector<double>& x, Range xr, Range yr,
           const std::vector<std::pair<const std::vector<double>*, const char*>>& series, const std::string& label,
           bool x_labels) {
  const double plot_w = kWidth - kLeft - kRight;
  auto px = [&](double v) { return kLeft + (v - xr.lo) / (xr.hi - xr.lo) * plot_w; };
  auto py = [&](double v) { return top + height - (v - yr.lo) / (yr.hi - yr.lo) * height; };
  svg += "<rect x=\"" + num(kLeft) + "\" y=\"" + num(top) + "\" width=\"" + num(plot_w) + "\" height=\"" +
         num(height) + "\" fill=\"#ffffff\" stroke=\"#888888\"/>\n";
  for (double t : ticks(yr.lo, yr.hi, 4)) {
    const double y = py(t);
    svg += "<line x1=\"" + num(kLeft) + "\" y1=\"" + num(y) + "\" x2=\"" + num(kLeft + plot_w) + "\" y2=\"" + num(y) +
           "\" stroke=\"#e4e4e4\"/>\n";
    svg += "<text x=\"" + num(kLeft - 6) + "\" y=\"" + num(y + 4) + "\" text-anchor=\"end\" font-size=\"11\">" +
           escape(format_real(t, 6)) + "</text>\n";
  }
  for (double t : ticks(xr.lo, xr.hi, 8)) {
    const double xx = px(t);
    svg += "<line x1=\"" + num(xx) + "\" y1=\"" + num(top) + "\" x2=\"" + num(xx) + "\" y2=\"" +
           num(top + height) + "\" stroke=\"#efefef\"/>\n";
    if (x_labels)
      svg += "<text x=\"" + num(xx) + "\" y=\"" + num(top + height + 14) +
             "\" text-anchor=\"middle\" font-size=\"11\">" + escape(format_real(t, 6)) + "</text>\n";
  }
  for (const auto& [values, colour] : series) {
    svg += "<polyline fill=\"none\" stroke=\"" + std::string(colour) + "\" stroke-width=\"1.2\" points=\"";
    for (std::size_t i = 0; i < x.size(); ++i) {
      const double v = std::clamp((*values)[i], yr.lo, yr.hi);
      svg += num(px(x[i])) + "," + num(py(v)) + (i + 1 < x.size() ? " " : "");
    }
    svg += "\"/>\n";
  }
  svg += "<text x=\"" + num(kLeft + 6) + "\" y=\"" + num(top + 14) + "\" font-size=\"12\" font-weight=\"bold\">" +
         escape(label) + "</text>\n";
}

}  // namespace

std::string render_excerpt_svg(const ExcerptPlot& plot) {
  for (const auto& c : plot.channels)
    if (c.original.size() != plot.x.size() || c.reconstruction.size() != plot.x.size() ||
        c.residual.size() != plot.x.size()) {
      throw usage_error("excerpt plot: series lengths differ from the time axis");
    }
  const double per_channel = kSignalHeight + kGap + kResidualHeight + kChannelGap;
  const double height = kTop + per_channel * double(plot.channels.size()) + 20;
  std::string svg;
  svg += "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  svg += "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" + num(kWidth) + "\" height=\"" + num(height) +
         "\" viewBox=\"0 0 " + num(kWidth) + " " + num(height) + "\" font-family=\"sans-serif\">\n";
  svg += "<rect width=\"100%\" height=\"100%\" fill=\"#fafafa\"/>\n";
  svg += "<text x=\"" + num(kLeft) + "\" y=\"20\" font-size=\"15\" font-weight=\"bold\">" + escape(plot.title) +
         "</text>\n";
  svg += "<text x=\"" + num(kLeft) + "\" y=\"38\" font-size=\"12\">" + escape(plot.subtitle) + "</text>\n";
  // Legend.
  const std::pair<const char*, const char*> legend[] = {
      {"original", kOriginalColour}, {"reconstruction", kReconstructionColour}, {"residual (original − reconstruction)", kResidualColour}};
  double lx = kLeft;
  for (const auto& [name, colour] : legend) {
    svg += "<line x1=\"" + num(lx) + "\" y1=\"52\" x2=\"" + num(lx + 22) + "\" y2=\"52\" stroke=\"" + colour +
           "\" stroke-width=\"2.5\"/>\n";
    svg += "<text x=\"" + num(lx + 28) + "\" y=\"56\" font-size=\"12\">" + escape(name) + "</text>\n";
    lx += 40 + 7.0 * double(std::string(name).size());
  }
  if (plot.x.empty()) {
    svg += "</svg>\n";
    return svg;
  }
  const Range xr{plot.x.front(), plot.x.size() > 1 ? plot.x.back() : plot.x.front() + 1};
  double top = kTop + 8;
  for (const auto& c : plot.channels) {
    panel(svg, top, kSignalHeight, plot.x, xr, range_of({&c.original, &c.reconstruction}),
          {{&c.original, kOriginalColour}, {&c.reconstruction, kReconstructionColour}}, c.name, false);
    top += kSignalHeight + kGap;
    panel(svg, top, kResidualHeight, plot.x, xr, range_of({&c.residual}), {{&c.residual, kResidualColour}},
          c.name + " residual", true);
    top += kResidualHeight + kChannelGap;
  }
  svg += "<text x=\"" + num(kLeft + (kWidth - kLeft - kRight) / 2) + "\" y=\"" + num(height - 8) +
         "\" text-anchor=\"middle\" font-size=\"12\">" + escape(plot.x_label) + "</text>\n";
  svg += "<text transform=\"translate(16," + num(height / 2) + ") rotate(-90)\" text-anchor=\"middle\" "
         "font-size=\"12\">" + escape(plot.y_label) + "</text>\n";
  svg += "</svg>\n";
  return svg;
}

}  // namespace pcasweep
