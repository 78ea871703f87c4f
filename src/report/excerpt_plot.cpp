#include "report/excerpt_plot.hpp"

#include <algorithm>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "report/html.hpp"  // html_escape: the same escaping serves SVG text
#include "report/svg.hpp"

namespace pcasweep {

namespace {

constexpr int kWidth = 1000, kSignalHeight = 300, kResidualHeight = 230, kHeader = 70;

// Replaces every occurrence of `from` in `text` by `to`.
void replace_all(std::string& text, const std::string& from, const std::string& to) {
  for (std::size_t at = text.find(from); at != std::string::npos; at = text.find(from, at + to.size()))
    text.replace(at, from.size(), to);
}

// A chart from report/svg.hpp placed as a nested <svg> at vertical offset `y`.
// Its clip-path id is made unique so several charts can share one document.
std::string nested(std::string chart, int y, int index) {
  const std::size_t open = chart.find("<svg ");
  if (open == std::string::npos) return "";
  chart.erase(0, open);  // drop the XML declaration
  chart.replace(0, 5, "<svg x=\"0\" y=\"" + std::to_string(y) + "\" ");
  const std::string id = "plot" + std::to_string(index);
  replace_all(chart, "id=\"plot\"", "id=\"" + id + "\"");
  replace_all(chart, "url(#plot)", "url(#" + id + ")");
  return chart;
}

}  // namespace

std::string render_excerpt_svg(const ExcerptPlot& plot) {
  for (const auto& c : plot.channels)
    if (c.original.size() != plot.x.size() || c.reconstruction.size() != plot.x.size() ||
        c.residual.size() != plot.x.size()) {
      throw usage_error("excerpt plot: series lengths differ from the time axis");
    }
  std::vector<std::string> lines;
  for (std::size_t start = 0; start <= plot.subtitle.size();) {
    const std::size_t end = std::min(plot.subtitle.find('\n', start), plot.subtitle.size());
    lines.push_back(plot.subtitle.substr(start, end - start));
    start = end + 1;
  }
  const int header = kHeader + 20 * int(lines.size() - 1);
  const int per_channel = kSignalHeight + kResidualHeight;
  const int height = header + per_channel * int(plot.channels.size());
  std::string svg = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  svg += "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" + std::to_string(kWidth) + "\" height=\"" +
         std::to_string(height) + "\" viewBox=\"0 0 " + std::to_string(kWidth) + " " + std::to_string(height) +
         "\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\">\n";
  svg += "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n";
  svg += "<text x=\"20\" y=\"30\" font-size=\"19\" font-weight=\"bold\">" + html_escape(plot.title) + "</text>\n";
  for (std::size_t i = 0; i < lines.size(); ++i)
    svg += "<text x=\"20\" y=\"" + std::to_string(54 + 20 * i) + "\" font-size=\"14\" fill=\"#444\">" +
           html_escape(lines[i]) + "</text>\n";
  const auto& palette = okabe_ito_palette();
  int y = header, index = 0;
  for (const auto& c : plot.channels) {
    ChartSpec overlay;
    overlay.title = c.name;
    overlay.x_label = plot.x_label;
    overlay.y_label = plot.y_label;
    overlay.width = kWidth;
    overlay.height = kSignalHeight;
    ChartSeries original{"original", plot.x, c.original, {}, true};
    original.style.colour = palette[5];  // blue
    original.style.line_width = 1.6;
    ChartSeries reconstruction{"reconstruction", plot.x, c.reconstruction, {}, true};
    reconstruction.style.colour = palette[1];  // orange
    reconstruction.style.line_width = 1.3;
    overlay.series = {original, reconstruction};
    svg += nested(render_svg_chart(overlay), y, index++);
    y += kSignalHeight;
    ChartSpec residual;
    residual.title = c.name + ": residual";
    residual.x_label = plot.x_label;
    residual.y_label = "original − reconstruction";
    residual.width = kWidth;
    residual.height = kResidualHeight;
    ChartSeries r{"residual", plot.x, c.residual, {}, true};
    r.style.colour = palette[6];  // vermillion
    r.style.line_width = 1.2;
    residual.series = {r};
    residual.lines = {ReferenceLine{false, 0.0, "", "#555555", "5 4"}};
    svg += nested(render_svg_chart(residual), y, index++);
    y += kResidualHeight;
  }
  svg += "</svg>\n";
  return svg;
}

}  // namespace pcasweep
