// pcasweep encode INPUT --k K [--basis BASIS] [--quality Q | --target-psnr DB] -o FILE
#include <iostream>
#include <memory>
#include <sstream>

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

// What encode prints: k, the components coded, the water level and the file's size.
std::string encode_report(const EncodeArgs& args, const EncodedFile& e) {
  const EncodeResult& r = e.result;
  const double bpp = 8.0 * double(r.bytes.size()) / (double(e.width) * e.height);
  std::ostringstream o;
  o << args.input << ": k = " << args.k << ", " << r.coded << " component(s) above the water level θ = "
    << r.water_level << " (nominal " << r.nominal_psnr_db << " dB, model " << psnr_from_mse(r.predicted_mse, e.max_value)
    << " dB)\nwrote " << args.out << ": " << r.bytes.size() << " bytes, " << bpp << " bits per pixel\n";
  return o.str();
}

// The entropy stage's figures (--stats).
std::string entropy_report(const EncodeResult& r) {
  const char* kept = r.coder == EntropyCoder::adaptive      ? "adaptive"
                     : r.coder == EntropyCoder::varint_zstd ? "varint+zstd"
                                                            : "planes+zstd";
  std::ostringstream o;
  o << "entropy stage: adaptive file " << r.adaptive_file_bytes << " bytes, varint+zstd file " << r.varint_file_bytes
    << " bytes, planes+zstd file " << r.planes_file_bytes << " bytes; wrote " << kept << "\n"
    << "side information uncompressed (steps, indices, mean, basis columns): " << r.side_bytes << " bytes\n"
    << "order-0 entropy of the quantised coefficients (per component): " << r.coefficient_entropy_bits / 8.0
    << " bytes\n"
    << "Gaussian model rate: " << r.gaussian_rate_bits << " bits per observation\n";
  return o.str();
}

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
    EncodeFileSettings settings;
    settings.image = image_settings(args->image);
    settings.codec.k = args->k;
    settings.codec.quality = args->quality;
    settings.codec.zstd_level = args->zstd_level;
    settings.codec.entropy = args->entropy == "zstd" ? EntropyStage::zstd : EntropyStage::adaptive;
    settings.codec.compare_entropy = args->stats;
    if (t->count()) settings.codec.target_psnr = args->target_psnr;
    settings.basis_file = args->basis;
    settings.dct = args->dct;
    settings.patch_given = app->get_option("--patch")->count() > 0;
    settings.colour_given = app->get_option("--colour")->count() > 0;
    const EncodedFile encoded = encode_image_file(args->input, settings);
    write_file_atomic(args->out, encoded.result.bytes);
    if (!args->quiet) std::cout << encode_report(*args, encoded);
    if (args->stats) std::cout << entropy_report(encoded.result);
    return 0;
  };
}

}  // namespace pcasweep::cli
