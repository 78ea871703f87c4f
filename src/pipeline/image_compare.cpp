#include "pipeline/image_compare.hpp"

#include <chrono>
#include <ctime>

#include "core/error.hpp"
#include "io/image.hpp"

namespace pcasweep {

ImageComparison compare_image_files(const std::string& original, const std::string& other, bool keep_map,
                                    SsimPrecision precision) {
  const Image a = read_image(original);
  const Image b = read_image(other);
  if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth) {
    throw usage_error(other + ": differs from " + original +
                      " in size, channels or bit depth; compare needs matching images");
  }
  ImageComparison c;
  c.data_range = a.max_value();
  c.channel_names = a.channel_names;
  c.quality = compare_images(a, b);
  const auto start = std::chrono::steady_clock::now();
  const std::clock_t cpu_start = std::clock();
  c.ssim = compute_ssim(a, b, keep_map, precision);
  c.ssim_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  c.ssim_cpu_seconds = double(std::clock() - cpu_start) / CLOCKS_PER_SEC;
  return c;
}

}  // namespace pcasweep
