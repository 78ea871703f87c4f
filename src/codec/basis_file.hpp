// pcasweep/codec/basis_file.hpp — a learned (or fixed) basis saved for reuse (".pcsb", magic "PSBF").
//
// Contract: a basis file holds the patch geometry it was learned on (patch
// size, colour mode, channels, bit depth), the mean, the components and
// their eigenvalues, all in float64 (exact), and a CRC-32; the layout is in
// docs/format.md. A coded image made with it stores the file's SHA-256, so the
// decoder can refuse any other basis. The reader treats the file as
// untrusted: its exact length must follow from d and r, which are capped.
#pragma once

#include <string>
#include <string_view>

#include "codec/container.hpp"
#include "observe/patches.hpp"
#include "solve/solve_report.hpp"

namespace pcasweep {

enum class BasisTransform : std::uint8_t { pca = 0, dct = 1 };

struct SavedBasis {
  PatchOptions patch;      // patch size and colour mode (strides are the encoder's choice)
  int channels = 0;        // of the images it was learned on
  int bit_depth = 8;
  BasisTransform transform = BasisTransform::pca;
  Basis basis;             // mean d, components d×r, eigenvalues r, total_variance, observation_count
  SolveReport report;      // how it was made ("loaded" or "dct" when read from a file); not stored in the file
};

inline constexpr char kBasisFileMagic[4] = {'P', 'S', 'B', 'F'};
inline constexpr std::uint16_t kBasisFileVersion = 1;

// Returns the file bytes for `saved`. Throws Error(usage) if the shapes disagree.
std::string write_basis_file(const SavedBasis& saved);

// Parses `bytes` (untrusted). Throws Error(data) "<name>: ..." on any defect.
SavedBasis read_basis_file(std::string_view bytes, const std::string& name);

// d for a geometry: patch_height·patch_width·(channels if joint colour, else 1).
Eigen::Index basis_dimension(const PatchOptions& patch, int channels);

}  // namespace pcasweep
