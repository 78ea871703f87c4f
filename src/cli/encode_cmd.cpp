// pcasweep encode INPUT --k K [--basis BASIS] [--quality Q | --target-psnr DB] -o FILE
#include <iostream>
#include <memory>
#include <optional>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "pipeline/codec_study.hpp"

namespace pcasweep::cli {

namespace {
struct EncodeArgs {
  std::string input;
  std::string out;
  int k = 0;
  std::string basis;
  int quality = 90;
  double target_psnr = 0.0;
  bool dct = false;
  int zstd_level = 19;
  std::string entropy = "adaptive";
  bool quiet = false;
  bool stats = false;
  ImageOptionText image;
};
}  // namespace

Action setup_encode(CLI::App& sub) {
  auto args = std::make_shared<EncodeArgs>();
  sub.add_option("INPUT", args->input, "Image to encode (PNG, JPEG, BMP, TGA, PNM; 8 or 16 bit)")->required();
  sub.add_option("--out,-o", args->out, "Coded image to write (pcasweep coded-image format, docs/format.md)")
      ->required();
  sub.add_option("--k", args->k, "Components to consider, 1..d (those below the water level get no bits)")
      ->required();
  sub.add_option("--basis", args->basis,
                 "Basis file from `pcasweep fit`: only its SHA-256 is stored, so decoding needs the same file "
                 "(default: learn the image's own basis and store it in the file at 16-bit precision)");
  auto* q = sub.add_option("--quality", args->quality,
                           "1..100; sets the water level θ = L²·10^(−(10 + 0.4·Q)/10) of reverse water-filling, "
                           "i.e. Q = 50 aims at 30 dB, 75 at 40 dB, 100 at 50 dB (default 90)")
                ->check(CLI::Range(1, 100));
  auto* t = sub.add_option("--target-psnr", args->target_psnr,
                           "Aim at this PSNR in dB instead: θ is solved so the rate–distortion model's MSE "
                           "matches (the measured PSNR comes out near it, not exactly)");
  q->excludes(t);
  sub.add_flag("--dct", args->dct, "Use the fixed DCT-II basis instead of a learned one (for comparison)");
  sub.add_option("--zstd-level", args->zstd_level,
                 "zstd level for the side information (and the whole body with --entropy zstd), 1..22 (default 19)")
      ->check(CLI::Range(1, 22));
  sub.add_option("--entropy", args->entropy,
                 "Entropy stage: adaptive (context-adaptive range coder, the default) or zstd (for comparison; "
                 "docs/codec.md has the measured sizes)")
      ->check(CLI::IsMember({"adaptive", "zstd"}));
  sub.add_flag("--quiet,-q", args->quiet, "Print nothing on success");
  sub.add_flag("--stats", args->stats,
               "Also print the entropy-stage figures: file size with each coder, the side information, and "
               "the order-0 entropy of the quantised coefficients (docs/codec.md)");
  add_image_options(sub, args->image);
  return [args, t, app = &sub]() {
    ImageStudySettings settings = image_settings(args->image);
    CodecSettings codec;
    codec.k = args->k;
    codec.quality = args->quality;
    codec.zstd_level = args->zstd_level;
    codec.entropy = args->entropy == "zstd" ? EntropyStage::zstd : EntropyStage::adaptive;
    codec.compare_entropy = args->stats;
    if (t->count()) codec.target_psnr = args->target_psnr;
    if (!args->basis.empty() && args->dct) throw usage_error("--basis and --dct are alternatives; give one");
    std::optional<LoadedBasis> loaded;
    if (!args->basis.empty()) loaded = load_basis_file(args->basis);
    Image image = read_image(args->input, read_options(settings));
    const int width = image.width, height = image.height;
    const double max_value = image.max_value();
    EncodeResult result;
    if (loaded) {
      // The basis fixes patch size and colour mode; an explicit --patch/--colour must agree.
      PatchOptions patch = settings.patch;
      if (!app->get_option("--patch")->count()) {
        patch.patch_height = loaded->saved.patch.patch_height;
        patch.patch_width = loaded->saved.patch.patch_width;
      }
      if (!app->get_option("--colour")->count()) patch.colour = loaded->saved.patch.colour;
      check_basis_geometry(loaded->saved, image, patch, args->input, args->basis);
      BasisChoice choice{BasisKind::external, &loaded->saved.basis, loaded->sha256};
      result = encode_image(image, patch, choice, codec, args->input);
    } else if (args->dct) {
      BasisChoice choice;
      choice.kind = BasisKind::dct;
      result = encode_image(image, settings.patch, choice, codec, args->input);
    } else {
      // The image's own basis, from the image already read; the exact solve's moments
      // spare the encoder its own pass over the patches.
      auto layout = std::make_unique<PatchLayout>(image, settings.patch, args->input);
      if (layout->observation_count() < 2)
        throw usage_error(args->input + ": only one patch fits; use a smaller --patch or --stride");
      std::vector<Image> sources;
      sources.push_back(std::move(image));  // one copy of the samples, not two
      const ImageAnalysis analysis = analyze_sources({args->input}, std::move(sources), std::move(layout), settings.solver);
      BasisChoice choice;
      choice.basis = &analysis.basis;
      result = encode_image(analysis.image(), settings.patch, choice, codec, args->input,
                            analysis.moments ? &*analysis.moments : nullptr);
    }
    write_file_atomic(args->out, result.bytes);
    if (!args->quiet) {
      const double bpp = 8.0 * double(result.bytes.size()) / (double(width) * height);
      std::cout << args->input << ": k = " << args->k << ", " << result.coded
                << " component(s) above the water level θ = " << result.water_level << " (nominal "
                << result.nominal_psnr_db << " dB, model " << psnr_from_mse(result.predicted_mse, max_value)
                << " dB)\nwrote " << args->out << ": " << result.bytes.size() << " bytes, " << bpp
                << " bits per pixel\n";
    }
    if (args->stats) {
      const char* kept = result.coder == EntropyCoder::adaptive      ? "adaptive"
                         : result.coder == EntropyCoder::varint_zstd ? "varint+zstd"
                                                                      : "planes+zstd";
      std::cout << "entropy stage: adaptive file " << result.adaptive_file_bytes << " bytes, varint+zstd file "
                << result.varint_file_bytes << " bytes, planes+zstd file " << result.planes_file_bytes
                << " bytes; wrote " << kept << "\n"
                << "side information uncompressed (steps, indices, mean, basis columns): " << result.side_bytes
                << " bytes\n"
                << "order-0 entropy of the quantised coefficients (per component): "
                << result.coefficient_entropy_bits / 8.0 << " bytes\n"
                << "Gaussian model rate: " << result.gaussian_rate_bits << " bits per observation\n";
    }
    return 0;
  };
}

}  // namespace pcasweep::cli
