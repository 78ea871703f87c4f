// pcasweep/pipeline/file_visuals.hpp — what the report shows of one file, at a bounded size.
//
// Contract: file_visuals() makes one streaming pass of the file's patches at
// k (codec/patch_sweep.hpp) and returns, whatever the image size:
//   - previews: the original, the reconstruction and the error map reduced by
//     an integer factor s so that the longer side is at most
//     settings.preview_side (each preview pixel is the mean of an s×s block;
//     the error preview is the block mean of |x − x̂| averaged over channels);
//   - 1:1 crops of the regions that matter: the tile (settings.crop_side
//     square, on a grid of whole tiles) with the largest squared error at k,
//     and the tile with the finest detail (largest gradient energy of the
//     original, Σ of squared differences of neighbouring samples) — their
//     reconstructions come from observe/patch_crop.hpp and equal the same
//     pixels of the whole written image;
//   - the data for the report's slider over the detail crop at full
//     resolution: the crop's own patches' coefficients on every computed
//     component (live: the browser rebuilds any k, d ≤ settings.live_max_dimension),
//     or the crop's reconstruction at each swept k (stepped).
// An image no larger than one crop is its own crop (and preview at 1:1).
#pragma once

#include <string>
#include <vector>

#include "observe/patch_crop.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep {

struct VisualSettings {
  int preview_side = 512;       // longest preview side, pixels
  int crop_side = 192;          // crops are this square (or the whole image when smaller)
  int live_max_dimension = 192; // d up to this: the slider rebuilds the crop in the browser
};

struct VisualCrop {
  std::string label;            // "largest error at k", "finest detail"
  PatchCrop crop;
  Image original, reconstruction;  // crop × crop, the original's bit depth
  std::vector<double> error;       // crop pixels, |x − x̂| averaged over channels
  double max_error = 0.0;
  double psnr_db = 0.0;            // of this crop at k
};

struct CropViewer {
  PatchCrop crop;               // the detail crop
  bool live = false;
  Image original;               // the crop of the original
  // live: float32 little-endian, as report/html.hpp's viewer reads them
  std::string mean_f32, components_f32, coefficients_f32;  // d; r×d component-major; n×r row-major
  int rank = 0, dimension = 0, observations = 0;           // observations = crop patches · planes
  // stepped: the crop's reconstruction at each k, and its PSNR
  std::vector<int> ks;
  std::vector<Image> images;
  std::vector<double> psnr_db;
};

struct FileVisuals {
  int k = 0;
  ImageQuality quality;         // of the whole written image at k
  double ssim = 0.0;
  int preview_scale = 1;        // s
  Image preview_original, preview_reconstruction;  // 8-bit, ceil(W/s) × ceil(H/s)
  std::vector<double> preview_error;               // the same size, mean |x − x̂| per block
  double preview_error_max = 0.0;
  std::vector<VisualCrop> crops;
  CropViewer viewer;
};

// analysis: one image cut into patches (streamed or held), basis of rank r ≥ k.
// viewer_ks: the ks a stepped slider offers (each ≤ r). Throws Error(usage) otherwise.
FileVisuals file_visuals(const ImageAnalysis& analysis, int k, const std::vector<int>& viewer_ks,
                         const VisualSettings& settings = {});

}  // namespace pcasweep
