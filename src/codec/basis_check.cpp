#include "codec/basis_check.hpp"

#include "core/error.hpp"
#include "io/atomic_file.hpp"

namespace pcasweep {

LoadedBasis load_basis_file(const std::string& path) {
  LoadedBasis loaded;
  const std::string bytes = read_file(path);
  loaded.saved = read_basis_file(bytes, path);
  loaded.sha256 = sha256_of(bytes);
  return loaded;
}

void check_basis_geometry(const SavedBasis& s, const Image& image, const PatchOptions& patch,
                          const std::string& image_name, const std::string& basis_name) {
  const auto describe = [](int ph, int pw, ColourMode colour, int channels, int bits) {
    return std::to_string(ph) + "x" + std::to_string(pw) + " patches, " +
           (colour == ColourMode::joint ? "joint" : "channels") + " colour, " + std::to_string(channels) +
           " channel(s), " + std::to_string(bits) + "-bit";
  };
  if (s.channels != image.channels || s.bit_depth != image.bit_depth || s.patch.patch_height != patch.patch_height ||
      s.patch.patch_width != patch.patch_width || s.patch.colour != patch.colour) {
    throw usage_error(basis_name + ": basis geometry (" +
                      describe(s.patch.patch_height, s.patch.patch_width, s.patch.colour, s.channels, s.bit_depth) +
                      ") does not match " + image_name + " (" +
                      describe(patch.patch_height, patch.patch_width, patch.colour, image.channels, image.bit_depth) +
                      ")");
  }
}

}  // namespace pcasweep
