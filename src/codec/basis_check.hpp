// pcasweep/codec/basis_check.hpp — a basis file loaded for encode/decode, and
// whether an image fits it.
//
// Contract: load_basis_file reads and parses a file written by `fit`
// (codec/basis_file.hpp) and keeps the SHA-256 of its bytes, which a coded
// image names; check_basis_geometry compares geometries and throws the
// one-line usage error. Neither writes anything.
#pragma once

#include <string>

#include "codec/basis_file.hpp"
#include "io/image.hpp"
#include "observe/patches.hpp"

namespace pcasweep {

// A basis file loaded for encode/decode, with the SHA-256 of its bytes.
struct LoadedBasis {
  SavedBasis saved;
  Sha256 sha256{};
};
// Throws Error(data) "<path>: ..." for an unreadable or malformed file.
LoadedBasis load_basis_file(const std::string& path);

// Throws Error(usage) "<basis>: ..." unless `image` and `patch` fit the basis's geometry
// (patch size, colour mode, channels, bit depth).
void check_basis_geometry(const SavedBasis& saved, const Image& image, const PatchOptions& patch,
                          const std::string& image_name, const std::string& basis_name);

}  // namespace pcasweep
