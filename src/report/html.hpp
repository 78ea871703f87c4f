// pcasweep/report/html.hpp — the study as one self-contained HTML page.
//
// Contract: render_report_html() lays out numbers, tables, charts and images
// that earlier stages computed; it computes nothing about quality itself.
// The page is self-contained: no network access of any kind. A Content-
// Security-Policy meta tag (default-src 'none'; images only from data: URIs;
// inline style and script) makes any stray request fail visibly in the
// browser's console. Images are PNG bytes embedded as data: URIs; charts are
// inline SVG strings; the live viewer's numbers are little-endian float32 /
// uint8 / uint16 arrays embedded as base64.
//
// The live viewer reconstructs in JavaScript exactly as pcasweep does
// (observe/patches.hpp, reconstruct/, observe/raster.hpp): X̂_k = C[:, :k]·V[:, :k]ᵀ
// + 1μᵀ, fold patches (overlaps averaged), round half away from zero, clip to
// the bit depth; then PSNR = 10·log10(L²/MSE) on all samples shown. It works
// on a crop of the image at full resolution: the embedded patches are those
// that overlap the crop (observe/patch_crop.hpp), folded on a canvas that
// starts at the first of them, and the crop is cut from that canvas at
// (crop_x, crop_y); an image no larger than the crop is its own crop. Opened as report.html#selftest, the page moves each viewer's
// slider through a few k and writes what it displayed into
// <pre id="selftest-result"> as JSON (for the browser test).
//
// Accessibility: every image has alt text; sliders are <input type=range>
// with a <label>, operable by keyboard; colours are from a colour-blind-safe
// palette; a print stylesheet hides the controls and keeps figures whole.
#pragma once

#include <string>
#include <vector>

#include "report/table.hpp"

namespace pcasweep {

struct HtmlImage {
  std::string png;      // PNG bytes
  std::string alt;      // alt text
  std::string caption;  // shown under the image
  bool pixelated = false;  // small images (components): scale up without smoothing
};

struct HtmlChart {
  std::string svg;      // a complete <svg> element (report/svg.hpp)
  std::string caption;
};

// One slider over k for one file.
struct HtmlViewer {
  std::string file;
  bool live = false;
  int initial_k = 1;
  HtmlImage original;
  // live: geometry and data for the in-browser reconstruction
  int width = 0, height = 0, channels = 0, bit_depth = 8;
  int patch_height = 0, patch_width = 0, stride_y = 0, stride_x = 0;
  int padded_width = 0, padded_height = 0, patches_across = 0, patches_down = 0;  // the canvas and sub-grid
  int crop_x = 0, crop_y = 0;    // the crop's offset on the canvas (live)
  int image_x = 0, image_y = 0;  // the crop's place in the image
  bool whole_image = true;       // the crop is the whole image
  bool joint_colour = true;
  int dimension = 0, rank = 0, observations = 0;
  std::string mean_f32;          // d float32
  std::string components_f32;    // r×d float32, component-major (component j: d values)
  std::string coefficients_f32;  // N×r float32, row-major
  std::string original_samples;  // W·H·c samples, uint8 or uint16 little-endian
  // stepped: precomputed images at the swept ks
  std::vector<int> ks;
  std::vector<std::string> pngs;
  std::vector<double> psnr_db;
};

// Original, reconstruction and error map of one region, side by side.
struct HtmlTriple {
  std::string title;       // e.g. "preview, 1:8" or "1:1 crop: largest error at k = 12"
  HtmlImage original, reconstruction, error_map;
};

struct HtmlFilePanel {
  std::string file;
  std::string note;        // e.g. "k = 12, PSNR 38.2 dB: below target"
  HtmlImage original, reconstruction, error_map;  // the preview
  std::string preview_title;                      // what scale the preview is at
  std::vector<HtmlTriple> crops;                  // 1:1 crops
};

struct HtmlSection {
  std::string title;
  std::string intro;                 // plain text paragraph (escaped)
  std::vector<HtmlChart> charts;
  std::vector<Table> tables;
  std::vector<std::string> table_captions;  // one per table
};

struct HtmlReport {
  std::string title;
  std::vector<std::pair<std::string, std::string>> settings;  // label, value
  std::vector<std::string> headline;                          // short lines at the top (escaped)
  std::vector<HtmlSection> sections;                          // in order, after the headline
  std::size_t viewers_after = 1;                              // sliders come after this many sections
  std::string viewer_note;
  std::vector<HtmlViewer> viewers;
  std::string panels_note;
  std::vector<HtmlFilePanel> panels;
  std::string components_note;
  std::vector<HtmlImage> components;
  std::string error_scale_note;        // what the heat map's colours mean
  std::vector<std::string> error_scale_colours;  // "#rrggbb" stops, low to high
};

// Returns the whole page (UTF-8).
std::string render_report_html(const HtmlReport& report);

// Standard base64 (RFC 4648, with padding) of `bytes`.
std::string base64_encode(const std::string& bytes);

// Escapes &, <, >, " and ' for HTML text and attributes.
std::string html_escape(const std::string& text);

}  // namespace pcasweep
