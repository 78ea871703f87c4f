// pcasweep fit INPUTS... -o BASIS: learn a basis once, reuse it for many files.
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "codec/basis_file.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "pipeline/codec_study.hpp"

namespace pcasweep::cli {

namespace {
struct FitArgs {
  std::vector<std::string> inputs;
  std::string out;
  std::string transform = "pca";
  bool quiet = false;
  ImageOptionText image;
};
}  // namespace

Action setup_fit(CLI::App& sub) {
  auto args = std::make_shared<FitArgs>();
  sub.add_option("INPUTS", args->inputs, "Images to learn from (all with the same channels and bit depth)")
      ->required();
  sub.add_option("--out,-o", args->out, "Basis file to write (pcasweep basis format, docs/format.md)")->required();
  sub.add_option("--transform", args->transform,
                 "pca: learn the principal components (default); dct: the fixed DCT-II basis, its columns "
                 "sorted by the inputs' coefficient variance (for comparison)")
      ->check(CLI::IsMember({"pca", "dct"}));
  sub.add_flag("--quiet,-q", args->quiet, "Print nothing on success");
  add_image_options(sub, args->image);
  return [args]() {
    const ImageStudySettings settings = image_settings(args->image);
    const SavedBasis saved =
        fit_basis(args->inputs, settings, args->transform == "dct" ? BasisTransform::dct : BasisTransform::pca);
    const std::string bytes = write_basis_file(saved);
    write_file_atomic(args->out, bytes);
    if (!args->quiet) {
      const Basis& b = saved.basis;
      const double kept = b.eigenvalues.sum() / b.total_variance;
      std::cout << "learned a " << args->transform << " basis from " << args->inputs.size() << " image(s): "
                << saved.patch.patch_height << "x" << saved.patch.patch_width << " patches, " << saved.channels
                << " channel(s), " << saved.bit_depth << "-bit; N = " << b.observation_count
                << ", d = " << b.dimension() << ", r = " << b.rank() << " (" << saved.report.solver << ")"
                << "; computed components hold " << kept * 100.0 << " % of the variance\n"
                << "wrote " << args->out << " (" << bytes.size() << " bytes, SHA-256 " << to_hex(sha256_of(bytes))
                << ")\n";
    }
    return 0;
  };
}

}  // namespace pcasweep::cli
