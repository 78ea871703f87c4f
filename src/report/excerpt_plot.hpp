// pcasweep/report/excerpt_plot.hpp — an SVG of a short stretch of a recording:
// the original and a reconstruction overlaid, and the residual beneath.
//
// Contract: the caller hands over finished numbers (time axis, samples,
// residual); this file only lays them out. One pair of panels per channel,
// stacked: top, original (blue) and reconstruction (orange) on one y-axis;
// below, the residual original − reconstruction on its own y-axis (its range
// is usually far smaller). Each panel is a chart of report/svg.hpp, nested in
// one standalone SVG document under a shared title.
#pragma once

#include <string>
#include <vector>

namespace pcasweep {

struct ExcerptChannel {
  std::string name;                     // "axial"
  std::vector<double> original;         // L values
  std::vector<double> reconstruction;   // L values
  std::vector<double> residual;         // L values, original − reconstruction
};

struct ExcerptPlot {
  std::string title;                    // "ternpoint_pump_vibration, k = 8"
  std::string subtitle;                 // lines under the title, separated by '\n'
  std::string x_label;                  // "time (s)" or "frame"
  std::string y_label;                  // "sample value (PCM 16-bit counts)"
  std::vector<double> x;                // L values, increasing
  std::vector<ExcerptChannel> channels; // one per channel
};

// Returns the SVG text. Throws Error(usage) when series lengths differ from x.
std::string render_excerpt_svg(const ExcerptPlot& plot);

}  // namespace pcasweep
