#include "cli/image_options.hpp"

#include "core/error.hpp"

namespace pcasweep::cli {

void add_image_options(CLI::App& sub, ImageOptionText& text) {
  sub.add_option("--patch", text.patch,
                 "Patch size in pixels, ROWSxCOLUMNS or one number for a square (default 8)");
  sub.add_option("--stride", text.stride,
                 "Step between patches in pixels, ROWSxCOLUMNS or one number (default: the patch size, "
                 "no overlap); smaller steps overlap and are averaged when folded back");
  sub.add_option("--colour", text.colour,
                 "joint: one observation of patch·channels values per patch (default); "
                 "channels: each channel's patches are separate observations sharing one basis")
      ->check(CLI::IsMember({"joint", "channels"}));
  sub.add_flag("--drop-alpha", text.drop_alpha,
               "Remove an alpha channel before analysis (default: alpha is kept as a channel)");
}

ImageStudySettings image_settings(const ImageOptionText& text) {
  ImageStudySettings s;
  parse_size_pair(text.patch, "--patch", s.patch.patch_height, s.patch.patch_width);
  if (!text.stride.empty()) {
    if (text.stride == "0" || text.stride.find("x0") != std::string::npos || text.stride.rfind("0x", 0) == 0) {
      throw usage_error("--stride must be at least 1, not '" + text.stride + "'");
    }
    parse_size_pair(text.stride, "--stride", s.patch.stride_y, s.patch.stride_x);
  }
  s.patch.colour = text.colour == "channels" ? ColourMode::channels : ColourMode::joint;
  s.drop_alpha = text.drop_alpha;
  return s;
}

nlohmann::json image_settings_json(const ImageStudySettings& s) {
  return {{"layout", "patches"},
          {"patch", {s.patch.patch_height, s.patch.patch_width}},
          {"stride", {s.patch.stride_y ? s.patch.stride_y : s.patch.patch_height,
                      s.patch.stride_x ? s.patch.stride_x : s.patch.patch_width}},
          {"colour", s.patch.colour == ColourMode::joint ? "joint" : "channels"},
          {"drop_alpha", s.drop_alpha}};
}

}  // namespace pcasweep::cli
