// Rules for k on real images (pipeline/k_choice, measure/near_zero).
// Images: scikit-image's camera.png and astronaut.png as shipped by Debian's python3-skimage.
#include <doctest/doctest.h>

#include <filesystem>

#include "observe/patches.hpp"
#include "pipeline/k_choice.hpp"

using namespace pcasweep;

namespace {
const std::string kSkimageData = "/usr/lib/python3/dist-packages/skimage/data/";

Image crop(const Image& im, int x0, int y0, int w, int h) {
  Image out = im;
  out.width = w, out.height = h;
  out.samples.assign(std::size_t(w) * h * im.channels, 0);
  for (int y = 0; y < h; ++y)
    for (int x = 0; x < w; ++x)
      for (int c = 0; c < im.channels; ++c) out.at(x, y, c) = im.at(x0 + x, y0 + y, c);
  return out;
}

ImageAnalysis analyse(const Image& im, int patch, int stride = 0) {
  PatchOptions o;
  o.patch_height = o.patch_width = patch;
  o.stride_y = o.stride_x = stride;
  auto layout = std::make_unique<PatchLayout>(im, o, "test");
  return analyze_sources({"test"}, {im}, std::move(layout), SolverSettings{SolverChoice::exact});
}

Image with_channels(const Image& gray, int channels, std::uint16_t alpha = 0) {
  Image out = gray;
  out.channels = channels;
  out.channel_names = default_channel_names(channels);
  out.samples.resize(std::size_t(gray.width) * gray.height * channels);
  for (int y = 0; y < gray.height; ++y)
    for (int x = 0; x < gray.width; ++x)
      for (int c = 0; c < channels; ++c) out.at(x, y, c) = (channels == 4 && c == 3) ? alpha : gray.at(x, y, 0);
  return out;
}

Image add_alpha(const Image& rgb, std::uint16_t alpha) {
  Image out = rgb;
  out.channels = 4;
  out.channel_names = default_channel_names(4);
  out.samples.resize(std::size_t(rgb.width) * rgb.height * 4);
  for (int y = 0; y < rgb.height; ++y)
    for (int x = 0; x < rgb.width; ++x) {
      for (int c = 0; c < 3; ++c) out.at(x, y, c) = rgb.at(x, y, c);
      out.at(x, y, 3) = alpha;
    }
  return out;
}
}  // namespace

TEST_CASE("quality-target search equals an exhaustive search over every k") {
  REQUIRE(std::filesystem::exists(kSkimageData + "camera.png"));
  const Image camera = crop(read_image(kSkimageData + "camera.png"), 128, 64, 192, 160);
  const Image astronaut = crop(read_image(kSkimageData + "astronaut.png"), 100, 40, 160, 136);
  struct Case {
    const char* name;
    const Image* image;
    int patch, stride;
    QualityTarget target;
  };
  QualityTarget psnr35, ssim95, both, psnr42;
  psnr35.psnr_db = 35;
  ssim95.ssim = 0.95;
  both.psnr_db = 32, both.ssim = 0.9;
  psnr42.psnr_db = 42;
  const Case cases[] = {
      {"camera 8x8, PSNR 35", &camera, 8, 0, psnr35},       {"camera 8x8, SSIM 0.95", &camera, 8, 0, ssim95},
      {"camera 8x8 stride 4, PSNR 35", &camera, 8, 4, psnr35}, {"camera 6x6 (padded), PSNR 42", &camera, 6, 0, psnr42},
      {"astronaut 8x8 RGB, PSNR 35", &astronaut, 8, 0, psnr35}, {"astronaut 8x8 RGB, PSNR 32 + SSIM 0.9", &astronaut, 8, 0, both},
      {"astronaut 8x8 RGB, SSIM 0.95", &astronaut, 8, 0, ssim95},
  };
  for (const auto& c : cases) {
    const ImageAnalysis a = analyse(*c.image, c.patch, c.stride);
    const TargetSearch s = search_quality_target(a, c.target);
    const int exhaustive = exhaustive_quality_k(a, c.target);
    INFO(std::string(c.name) << ": search k = " << s.suggestion.k << " after " << s.evaluated.size()
                << " reconstructions, exhaustive k = " << exhaustive << " of d = " << a.basis.rank());
    MESSAGE(std::string(c.name) << ": search k = " << s.suggestion.k << " (" << s.evaluated.size() << " reconstructions, bracket "
                   << s.bracket_low << ".." << s.bracket_high << "), exhaustive k = " << exhaustive);
    CHECK(exhaustive > 0);
    CHECK(s.suggestion.k == exhaustive);
    CHECK(s.evaluated.size() < std::size_t(a.basis.rank()) / 3);  // far fewer than every k
  }
}

TEST_CASE("near-zero diagnosis fires on gray stored as RGB and names the channels") {
  const Image gray = crop(read_image(kSkimageData + "camera.png"), 0, 0, 256, 256);
  const ImageAnalysis a = analyse(with_channels(gray, 3), 8);
  const KChoice c = choose_k(a, {});
  const NearZeroReport& nz = c.near_zero;
  CHECK(nz.redundancy_found());
  CHECK(nz.exact_zero.size() == 128);  // 2 of 3 channels copy the first: 2·64 of 192 directions never vary
  CHECK(nz.copy_groups.size() == 64);  // one group per pixel position
  bool says_gray = false;
  for (const auto& f : nz.findings) says_gray = says_gray || f.find("grayscale image stored as colour") != std::string::npos;
  CHECK(says_gray);
}

TEST_CASE("near-zero diagnosis fires on a constant alpha channel") {
  const Image rgb = crop(read_image(kSkimageData + "astronaut.png"), 0, 0, 256, 256);
  const ImageAnalysis a = analyse(add_alpha(rgb, 255), 8);
  const NearZeroReport nz = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  CHECK(nz.redundancy_found());
  CHECK(nz.exact_zero.size() == 64);
  CHECK(nz.constant_variables.size() == 64);
  bool says_alpha = false;
  for (const auto& f : nz.findings) says_alpha = says_alpha || f.find("Channel alpha is constant") != std::string::npos;
  CHECK(says_alpha);
}

TEST_CASE("near-zero diagnosis finds a channel that is the sum of two others") {
  Image rgb = crop(read_image(kSkimageData + "astronaut.png"), 0, 0, 128, 128);
  for (int y = 0; y < rgb.height; ++y)
    for (int x = 0; x < rgb.width; ++x) {
      rgb.at(x, y, 0) /= 2;
      rgb.at(x, y, 1) /= 2;
      rgb.at(x, y, 2) = std::uint16_t(rgb.at(x, y, 0) + rgb.at(x, y, 1));  // blue = red + green, exactly
    }
  const ImageAnalysis a = analyse(rgb, 4);
  const NearZeroReport nz = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  CHECK(nz.redundancy_found());
  CHECK(nz.exact_zero.size() == 16);
  CHECK(nz.copy_groups.empty());
  bool relation = false;
  for (const auto& f : nz.findings) relation = relation || f.find("fixed linear relations") != std::string::npos;
  CHECK(relation);
}

TEST_CASE("near-zero diagnosis stays quiet on a natural colour image (astronaut)") {
  const ImageAnalysis a = analyse(read_image(kSkimageData + "astronaut.png"), 8);
  const NearZeroReport nz = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  MESSAGE("astronaut 8x8 RGB: smallest eigenvalue " << a.basis.eigenvalues(a.basis.rank() - 1));
  CHECK_FALSE(nz.redundancy_found());
  CHECK(nz.exact_zero.empty());
  CHECK(nz.constant_variables.empty());
  CHECK(nz.copy_groups.empty());
}

TEST_CASE("few observations: forced zeros are explained, not blamed on the variables") {
  const Image gray = crop(read_image(kSkimageData + "camera.png"), 0, 0, 32, 32);
  const ImageAnalysis a = analyse(gray, 8);  // N = 16 patches, d = 64
  const NearZeroReport nz = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  CHECK(nz.forced_zeros == 64 - 15);
  CHECK_FALSE(nz.redundancy_found());
  CHECK(nz.findings.front().find("at most N - 1 directions") != std::string::npos);
}
