#include "report/html.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

namespace pcasweep {

std::string base64_encode(const std::string& bytes) {
  static const char* alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  std::size_t i = 0;
  const auto* b = reinterpret_cast<const unsigned char*>(bytes.data());
  for (; i + 2 < bytes.size(); i += 3) {
    const unsigned v = (b[i] << 16) | (b[i + 1] << 8) | b[i + 2];
    out += alphabet[(v >> 18) & 63];
    out += alphabet[(v >> 12) & 63];
    out += alphabet[(v >> 6) & 63];
    out += alphabet[v & 63];
  }
  if (i + 1 == bytes.size()) {
    const unsigned v = b[i] << 16;
    out += alphabet[(v >> 18) & 63];
    out += alphabet[(v >> 12) & 63];
    out += "==";
  } else if (i + 2 == bytes.size()) {
    const unsigned v = (b[i] << 16) | (b[i + 1] << 8);
    out += alphabet[(v >> 18) & 63];
    out += alphabet[(v >> 12) & 63];
    out += alphabet[(v >> 6) & 63];
    out += '=';
  }
  return out;
}

std::string html_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char ch : text) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += ch;
    }
  }
  return out;
}

namespace {

std::string html_number(double v) {
  if (std::isnan(v)) return "–";
  if (std::isinf(v)) return v > 0 ? "∞" : "−∞";
  char buf[64];
  const double a = std::fabs(v);
  if (a != 0.0 && (a >= 1e9 || a < 1e-4)) std::snprintf(buf, sizeof buf, "%.3e", v);
  else if (a >= 1.0) std::snprintf(buf, sizeof buf, "%.2f", v);
  else std::snprintf(buf, sizeof buf, "%.4g", v);
  return buf;
}

std::string html_cell(const Cell& c) {
  struct V {
    std::string operator()(std::monostate) const { return ""; }
    std::string operator()(std::int64_t v) const { return std::to_string(v); }
    std::string operator()(double v) const { return html_number(v); }
    std::string operator()(const std::string& s) const { return html_escape(s); }
  };
  return std::visit(V{}, c);
}

std::string img_tag(const HtmlImage& img, const std::string& extra_class = "") {
  std::string cls = extra_class;
  if (img.pixelated) cls += cls.empty() ? "pixelated" : " pixelated";
  return "<img" + (cls.empty() ? std::string() : " class=\"" + cls + "\"") + " alt=\"" + html_escape(img.alt) +
         "\" src=\"data:image/png;base64," + base64_encode(img.png) + "\">";
}

std::string figure(const HtmlImage& img) {
  return "<figure class=\"thumb\">" + img_tag(img) + "<figcaption>" + html_escape(img.caption) +
         "</figcaption></figure>\n";
}

void table_html(std::ostringstream& o, const Table& t, const std::string& caption) {
  o << "<div class=\"table-wrap\"><table>";
  if (!caption.empty()) o << "<caption>" << html_escape(caption) << "</caption>";
  o << "<thead><tr>";
  for (const auto& c : t.columns) o << "<th scope=\"col\">" << html_escape(c) << "</th>";
  o << "</tr></thead><tbody>\n";
  for (const auto& row : t.rows) {
    o << "<tr>";
    for (const auto& c : row) o << (std::holds_alternative<std::string>(c) ? "<td>" : "<td class=\"num\">") << html_cell(c) << "</td>";
    o << "</tr>\n";
  }
  o << "</tbody></table></div>\n";
}

const char* kStyle = R"CSS(
:root { --ink: #1a1a1a; --muted: #555; --accent: #0072b2; --warn: #d55e00; --ok: #009e73; --rule: #ccc; }
* { box-sizing: border-box; }
body { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; color: var(--ink);
       margin: 0 auto; max-width: 1200px; padding: 1rem 1.5rem 3rem; background: #fff; }
h1 { font-size: 1.6rem; margin: .5rem 0; } h2 { font-size: 1.25rem; border-bottom: 2px solid var(--accent);
  padding-bottom: .2rem; margin-top: 2rem; } h3 { font-size: 1.05rem; margin: 1rem 0 .3rem; }
.headline { font-size: 1.05rem; } .headline li { margin: .2rem 0; }
dl.settings { display: grid; grid-template-columns: max-content 1fr; gap: .2rem 1rem; }
dl.settings dt { font-weight: 600; } dl.settings dd { margin: 0; }
.table-wrap { overflow-x: auto; margin: .5rem 0 1rem; }
table { border-collapse: collapse; font-size: .85rem; } caption { text-align: left; font-weight: 600; padding: .3rem 0; }
th, td { border: 1px solid var(--rule); padding: .15rem .45rem; } th { background: #eef4fa; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
.charts { display: flex; flex-wrap: wrap; gap: 1rem; } .charts figure { margin: 0; max-width: 100%; }
.charts svg { max-width: 100%; height: auto; }
figure.thumb { display: inline-block; margin: .3rem .6rem .6rem 0; vertical-align: top; }
/* Previews and crops at their natural size (one screen pixel per image pixel at 100 % zoom), so the scale
   each heading states is the scale shown; narrower windows shrink them, never enlarge. */
figure.thumb img, .viewer img, .viewer canvas { max-width: 100%; height: auto; border: 1px solid var(--rule); image-rendering: pixelated; }
figcaption { font-size: .85rem; color: var(--muted); max-width: 512px; }
img.pixelated { image-rendering: pixelated; width: 64px; height: 64px; }
.components figure.thumb img { width: 64px; }
.viewer { border: 1px solid var(--rule); border-radius: 6px; padding: .6rem .9rem; margin: 1rem 0; }
.viewer .pair { display: flex; flex-wrap: wrap; gap: 1rem; } .viewer .pair figure { margin: 0; flex: 0 1 auto; }
.viewer .pair img, .viewer .pair canvas { max-width: 100%; }
.controls { display: flex; flex-wrap: wrap; align-items: center; gap: .8rem; margin-top: .6rem; }
.controls input[type=range] { width: min(480px, 90vw); accent-color: var(--accent); }
.controls input[type=range]:focus-visible { outline: 3px solid var(--warn); outline-offset: 2px; }
output { font-variant-numeric: tabular-nums; font-weight: 600; min-width: 16rem; }
.scale { display: inline-flex; align-items: center; gap: .4rem; font-size: .85rem; }
.scale span.bar { display: inline-block; width: 160px; height: 12px; border: 1px solid var(--rule); }
.note { color: var(--muted); font-size: .9rem; }
.fail { color: var(--warn); font-weight: 600; }
footer { margin-top: 3rem; border-top: 1px solid var(--rule); padding-top: .8rem; font-size: .9rem; }
footer .caution { border-left: 4px solid var(--warn); padding-left: .7rem; }
@media print {
  body { max-width: none; padding: 0; font-size: 11pt; }
  .controls input, #selftest-result { display: none !important; }
  h2 { break-after: avoid; } figure, .viewer, table { break-inside: avoid; }
  a { color: inherit; text-decoration: none; }
}
)CSS";

// The live viewer and the #selftest hook (a JavaScript constant, one block
// on purpose: the page runs it as written). Reconstruction mirrors
// reconstruct/ + observe/patches.hpp fold + observe/raster.hpp quantize.
const char* kScript = R"JS(
(function () {
  'use strict';
  var errors = [], violations = 0;
  window.addEventListener('error', function (e) { errors.push(String(e.message)); });
  document.addEventListener('securitypolicyviolation', function (e) { violations++; errors.push('CSP: ' + e.blockedURI); });
  var dataNode = document.getElementById('viewer-data');
  var viewers = dataNode ? JSON.parse(dataNode.textContent) : [];
  function bytes(b64) {
    var bin = atob(b64), u = new Uint8Array(bin.length);
    for (var i = 0; i < bin.length; i++) u[i] = bin.charCodeAt(i);
    return u;
  }
  function floats(b64) {
    var u = bytes(b64), dv = new DataView(u.buffer), out = new Float32Array(u.length / 4);
    for (var i = 0; i < out.length; i++) out[i] = dv.getFloat32(4 * i, true);
    return out;
  }
  function samples(b64, bits) {
    var u = bytes(b64);
    if (bits === 8) return u;
    var dv = new DataView(u.buffer), out = new Uint16Array(u.length / 2);
    for (var i = 0; i < out.length; i++) out[i] = dv.getUint16(2 * i, true);
    return out;
  }
  function roundHalfAway(v) { return v < 0 ? -Math.floor(-v + 0.5) : Math.floor(v + 0.5); }
  function reconstruct(v, k) {
    var N = v.observations, d = v.dimension, r = v.rank, c = v.channels;
    var ph = v.patch_height, pw = v.patch_width, sy = v.stride_y, sx = v.stride_x;
    var PW = v.padded_width, PH = v.padded_height, nx = v.patches_across, patches = nx * v.patches_down;
    var sum = new Float64Array(PW * PH * c), wt = new Float64Array(PW * PH), row = new Float64Array(d);
    var mean = v._mean, V = v._components, C = v._coefficients;
    for (var n = 0; n < N; n++) {
      for (var j = 0; j < d; j++) row[j] = mean[j];
      for (var q = 0; q < k; q++) {
        var a = C[n * r + q];
        if (a === 0) continue;
        var off = q * d;
        for (var j2 = 0; j2 < d; j2++) row[j2] += a * V[off + j2];
      }
      var ch0 = v.joint_colour ? 0 : Math.floor(n / patches), patch = v.joint_colour ? n : n % patches;
      var py = Math.floor(patch / nx), px = patch % nx;
      for (var rr = 0; rr < ph; rr++) {
        var y = py * sy + rr;
        for (var cc = 0; cc < pw; cc++) {
          var pixel = y * PW + px * sx + cc, cell = rr * pw + cc;
          if (v.joint_colour) {
            wt[pixel] += 1;
            for (var ch = 0; ch < c; ch++) sum[pixel * c + ch] += row[cell * c + ch];
          } else {
            if (ch0 === 0) wt[pixel] += 1;
            sum[pixel * c + ch0] += row[cell];
          }
        }
      }
    }
    var W = v.width, H = v.height, L = v.bit_depth === 16 ? 65535 : 255;
    var out = v.bit_depth === 16 ? new Uint16Array(W * H * c) : new Uint8Array(W * H * c);
    var orig = v._original, se = 0, hash = 2166136261 >>> 0;
    for (var yy = 0; yy < H; yy++) {
      for (var xx = 0; xx < W; xx++) {
        var p = (yy + v.crop_y) * PW + xx + v.crop_x;
        for (var k2 = 0; k2 < c; k2++) {
          var val = roundHalfAway(sum[p * c + k2] / wt[p]);
          if (val < 0) val = 0; else if (val > L) val = L;
          var idx = (yy * W + xx) * c + k2;
          out[idx] = val;
          var e = orig[idx] - val; se += e * e;
          hash = Math.imul(hash ^ (val & 255), 16777619) >>> 0;
          hash = Math.imul(hash ^ (val >>> 8), 16777619) >>> 0;
        }
      }
    }
    var mse = se / (W * H * c);
    return { image: out, psnr: mse === 0 ? Infinity : 10 * Math.log10(L * L / mse), checksum: hash };
  }
  function draw(canvas, v, img) {
    var W = v.width, H = v.height, c = v.channels, shift = v.bit_depth === 16 ? 8 : 0;
    var ctx = canvas.getContext('2d'), id = ctx.createImageData(W, H), D = id.data;
    for (var i = 0; i < W * H; i++) {
      var s = i * c, g;
      if (c <= 2) { g = img[s] >> shift; D[4 * i] = D[4 * i + 1] = D[4 * i + 2] = g; D[4 * i + 3] = c === 2 ? img[s + 1] >> shift : 255; }
      else { D[4 * i] = img[s] >> shift; D[4 * i + 1] = img[s + 1] >> shift; D[4 * i + 2] = img[s + 2] >> shift;
             D[4 * i + 3] = c === 4 ? img[s + 3] >> shift : 255; }
    }
    ctx.putImageData(id, 0, 0);
  }
  function psnrText(p) { return p === Infinity ? '∞ (exact)' : p.toFixed(2); }
  function setup(v, i) {
    var root = document.getElementById('viewer-' + i);
    var slider = root.querySelector('input[type=range]');
    var kOut = root.querySelector('.k-value'), pOut = root.querySelector('.psnr-value');
    var canvas = root.querySelector('canvas'), img = root.querySelector('img.stepped');
    if (v.live) {
      v._mean = floats(v.mean_f32); v._components = floats(v.components_f32);
      v._coefficients = floats(v.coefficients_f32); v._original = samples(v.original_samples, v.bit_depth);
    }
    v.update = function () {
      var k, p, sum;
      if (v.live) {
        k = Number(slider.value);
        var res = reconstruct(v, k);
        draw(canvas, v, res.image);
        p = res.psnr; sum = res.checksum;
        canvas.setAttribute('aria-label', 'Reconstruction of ' + v.file + ' with k = ' + k + ' components, PSNR ' + psnrText(p) + ' dB');
      } else {
        var at = Number(slider.value);
        k = v.ks[at]; p = v.psnr_db[at] === null ? Infinity : v.psnr_db[at];
        img.src = 'data:image/png;base64,' + v.pngs[at];
        img.alt = 'Reconstruction of ' + v.file + ' with k = ' + k + ' components (precomputed), PSNR ' + psnrText(p) + ' dB';
        sum = at;
      }
      kOut.textContent = String(k);
      pOut.textContent = psnrText(p);
      root.setAttribute('data-checksum', String(sum));
      slider.setAttribute('aria-valuetext', 'k = ' + k + ', PSNR ' + psnrText(p) + ' dB');
    };
    var pending = false;
    slider.addEventListener('input', function () {
      if (pending) return;
      pending = true;
      window.requestAnimationFrame(function () { pending = false; v.update(); });
    });
    v.update();
  }
  viewers.forEach(setup);
  if (location.hash === '#selftest') {
    var result = { viewers: [], errors: errors, csp_violations: violations,
                   resources: (performance.getEntriesByType ? performance.getEntriesByType('resource').length : -1) };
    viewers.forEach(function (v, i) {
      var root = document.getElementById('viewer-' + i), slider = root.querySelector('input[type=range]');
      var steps = [];
      v.test_positions.forEach(function (pos) {
        slider.value = String(pos);
        v.update();
        steps.push({ position: pos, k_shown: Number(root.querySelector('.k-value').textContent),
                     psnr_shown: root.querySelector('.psnr-value').textContent,
                     checksum: root.getAttribute('data-checksum') });
      });
      result.viewers.push({ file: v.file, live: v.live, steps: steps });
    });
    result.errors = errors; result.csp_violations = violations;
    var pre = document.getElementById('selftest-result');
    pre.textContent = JSON.stringify(result);
    pre.hidden = false;
  }
})();
)JS";

// The document head (with the page's content-security policy), the title and the headline.
void write_page_head(std::ostringstream& o, const HtmlReport& r) {
  o << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
    << "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; img-src data:; "
       "style-src 'unsafe-inline'; script-src 'unsafe-inline'\">\n"
    << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
    << "<title>" << html_escape(r.title) << "</title>\n<style>" << kStyle << "</style>\n</head>\n<body>\n"
    << "<header><h1>" << html_escape(r.title) << "</h1>\n";
  if (!r.headline.empty()) {
    o << "<ul class=\"headline\">";
    for (const auto& line : r.headline) o << "<li>" << html_escape(line) << "</li>";
    o << "</ul>\n";
  }
  o << "</header>\n<main>\n<section id=\"settings\"><h2>Settings and inputs</h2><dl class=\"settings\">";
  for (const auto& [label, value] : r.settings) o << "<dt>" << html_escape(label) << "</dt><dd>" << html_escape(value) << "</dd>";
  o << "</dl></section>\n";
}

// One section: title, intro, charts, then its tables with their captions.
void write_section(std::ostringstream& o, const HtmlSection& sec) {
  o << "<section><h2>" << html_escape(sec.title) << "</h2>\n";
  if (!sec.intro.empty()) o << "<p>" << html_escape(sec.intro) << "</p>\n";
  if (!sec.charts.empty()) {
    o << "<div class=\"charts\">";
    for (const auto& c : sec.charts) o << "<figure>" << c.svg << "<figcaption>" << html_escape(c.caption) << "</figcaption></figure>\n";
    o << "</div>\n";
  }
  for (std::size_t t = 0; t < sec.tables.size(); ++t)
    table_html(o, sec.tables[t], t < sec.table_captions.size() ? sec.table_captions[t] : "");
  o << "</section>\n";
}

// One viewer's markup: the original beside a canvas (live) or a stepped
// image, and the slider with its k and PSNR outputs.
void write_viewer_markup(std::ostringstream& o, const HtmlViewer& v, std::size_t i) {
  const std::string id = std::to_string(i);
  const std::string where = v.whole_image ? std::string(" (whole image, 1:1)")
                                          : " (1:1 crop of " + std::to_string(v.width) + "×" + std::to_string(v.height) +
                                                " pixels at x = " + std::to_string(v.image_x) + ", y = " +
                                                std::to_string(v.image_y) + ")";
  o << "<div class=\"viewer\" id=\"viewer-" << id << "\">\n<h3>" << html_escape(v.file + where) << "</h3>\n<div class=\"pair\">"
    << "<figure>" << img_tag(v.original) << "<figcaption>" << html_escape(v.original.caption) << "</figcaption></figure>";
  if (v.live) {
    o << "<figure><canvas width=\"" << v.width << "\" height=\"" << v.height
      << "\" role=\"img\" aria-label=\"Reconstruction of " << html_escape(v.file)
      << "\"></canvas><figcaption>Reconstructed in your browser from the embedded basis and coefficients, "
         "rounded and clipped like the written files</figcaption></figure>";
  } else {
    o << "<figure><img class=\"stepped\" alt=\"Reconstruction of " << html_escape(v.file)
      << "\" src=\"data:image/png;base64,\"><figcaption>Precomputed reconstructions at the swept k (the live "
         "viewer rebuilds bases of d up to 192 only)</figcaption></figure>";
  }
  o << "</div>\n<div class=\"controls\"><label for=\"slider-" << id << "\">Components kept (k)</label>";
  if (v.live) {
    o << "<input type=\"range\" id=\"slider-" << id << "\" min=\"1\" max=\"" << v.rank << "\" step=\"1\" value=\""
      << v.initial_k << "\">";
  } else {
    std::size_t at = 0;
    for (std::size_t j = 0; j < v.ks.size(); ++j)
      if (v.ks[j] <= v.initial_k) at = j;
    o << "<input type=\"range\" id=\"slider-" << id << "\" min=\"0\" max=\"" << (v.ks.empty() ? 0 : v.ks.size() - 1)
      << "\" step=\"1\" value=\"" << at << "\">";
  }
  o << "<output for=\"slider-" << id << "\" aria-live=\"polite\">k = <span class=\"k-value\">" << v.initial_k
    << "</span> · PSNR <span class=\"psnr-value\"></span> dB</output></div>\n</div>\n";
}

// One viewer's data for the script: geometry and base64 arrays (live), or
// the precomputed PNGs and PSNRs (stepped), with the self-test's positions.
nlohmann::json viewer_json(const HtmlViewer& v) {
  nlohmann::json j = {{"file", v.file}, {"live", v.live}};
  if (v.live) {
    j.update({{"width", v.width}, {"height", v.height}, {"channels", v.channels}, {"bit_depth", v.bit_depth},
              {"patch_height", v.patch_height}, {"patch_width", v.patch_width}, {"stride_y", v.stride_y},
              {"stride_x", v.stride_x}, {"padded_width", v.padded_width}, {"padded_height", v.padded_height},
              {"patches_across", v.patches_across}, {"patches_down", v.patches_down},
              {"crop_x", v.crop_x}, {"crop_y", v.crop_y}, {"image_x", v.image_x}, {"image_y", v.image_y},
              {"whole_image", v.whole_image},
              {"joint_colour", v.joint_colour}, {"dimension", v.dimension}, {"rank", v.rank},
              {"observations", v.observations}, {"mean_f32", base64_encode(v.mean_f32)},
              {"components_f32", base64_encode(v.components_f32)},
              {"coefficients_f32", base64_encode(v.coefficients_f32)},
              {"original_samples", base64_encode(v.original_samples)}});
    // The self-test visits the swept ks (so the PSNR can be checked against batch.csv).
    j["test_positions"] = v.ks;
  } else {
    std::vector<std::string> pngs;
    for (const auto& p : v.pngs) pngs.push_back(base64_encode(p));
    nlohmann::json ps = nlohmann::json::array();
    for (double p : v.psnr_db) ps.push_back(json_real(p));
    std::vector<int> positions_all;
    for (std::size_t q = 0; q < v.ks.size(); ++q) positions_all.push_back(int(q));
    j.update({{"ks", v.ks}, {"pngs", pngs}, {"psnr_db", ps}, {"test_positions", positions_all}});
  }
  return j;
}

// The viewers' section (when there are viewers); returns the script's data, one object per viewer.
nlohmann::json write_viewers(std::ostringstream& o, const HtmlReport& r) {
  nlohmann::json viewer_data = nlohmann::json::array();
  if (r.viewers.empty()) return viewer_data;
  o << "<section id=\"viewers\"><h2>Reconstruction at any k</h2>\n<p class=\"note\">" << html_escape(r.viewer_note)
    << "</p>\n";
  for (std::size_t i = 0; i < r.viewers.size(); ++i) {
    write_viewer_markup(o, r.viewers[i], i);
    viewer_data.push_back(viewer_json(r.viewers[i]));
  }
  o << "</section>\n";
  return viewer_data;
}

// The files' section: the error scale, then per file its preview triple and crops.
void write_panels(std::ostringstream& o, const HtmlReport& r) {
  if (r.panels.empty()) return;
  o << "<section id=\"files\"><h2>Files: original, reconstruction, error</h2>\n<p class=\"note\">"
    << html_escape(r.panels_note) << "</p>\n";
  if (!r.error_scale_colours.empty()) {
    o << "<p class=\"scale\">Error heat map: <span>0</span><span class=\"bar\" style=\"background: linear-gradient(to right";
    for (const auto& c : r.error_scale_colours) o << ", " << c;
    o << ")\" role=\"img\" aria-label=\"colour scale from dark purple (no error) to yellow (largest error)\"></span>"
      << "<span>max</span> <span class=\"note\">" << html_escape(r.error_scale_note) << "</span></p>\n";
  }
  for (const auto& p : r.panels) {
    o << "<div class=\"panel\"><h3>" << html_escape(p.file) << "</h3>";
    if (!p.note.empty()) o << "<p class=\"note\">" << html_escape(p.note) << "</p>";
    if (!p.preview_title.empty()) o << "<h4>" << html_escape(p.preview_title) << "</h4>";
    o << figure(p.original) << figure(p.reconstruction) << figure(p.error_map);
    for (const auto& c : p.crops) {
      o << "<h4>" << html_escape(c.title) << "</h4>" << figure(c.original) << figure(c.reconstruction)
        << figure(c.error_map);
    }
    o << "</div>\n";
  }
  o << "</section>\n";
}

// The components' section, the footer with the caution, and the scripts.
void write_page_end(std::ostringstream& o, const HtmlReport& r, const nlohmann::json& viewer_data) {
  if (!r.components.empty()) {
    o << "<section id=\"components\" class=\"components\"><h2>Leading components</h2>\n<p class=\"note\">"
      << html_escape(r.components_note) << "</p>\n";
    for (const auto& c : r.components) o << figure(c);
    o << "</section>\n";
  }
  o << "</main>\n<footer><p class=\"caution\"><strong>Caution:</strong> lossy reconstruction is not a substitute for "
       "originals in medical, forensic or legal records; follow local rules and licensed practice.</p>"
       "<p class=\"note\">Made by pcasweep " PCASWEEP_VERSION ". This page is self-contained: it loads nothing from the "
       "network.</p></footer>\n<pre id=\"selftest-result\" hidden></pre>\n";
  std::string data = viewer_data.dump();
  for (std::size_t at = 0; (at = data.find("</", at)) != std::string::npos;) data.replace(at, 2, "<\\/");
  o << "<script id=\"viewer-data\" type=\"application/json\">" << data << "</script>\n<script>" << kScript
    << "</script>\n</body>\n</html>\n";
}

}  // namespace

std::string render_report_html(const HtmlReport& r) {
  std::ostringstream o;
  write_page_head(o, r);
  const std::size_t before_viewers = std::min(r.viewers_after, r.sections.size());
  for (std::size_t s = 0; s < before_viewers; ++s) write_section(o, r.sections[s]);
  const nlohmann::json viewer_data = write_viewers(o, r);
  for (std::size_t s = before_viewers; s < r.sections.size(); ++s) write_section(o, r.sections[s]);
  write_panels(o, r);
  write_page_end(o, r, viewer_data);
  return o.str();
}

}  // namespace pcasweep
