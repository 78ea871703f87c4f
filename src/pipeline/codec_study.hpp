// pcasweep/pipeline/codec_study.hpp — wires the codec for the fit/encode/decode
// subcommands and runs the rate–distortion comparison of `sweep`.
//
// Contract: nothing here computes on its own; it reads files and calls
// observe/solve/codec/measure (the DCT basis and the Gaussian R(D) curve live
// in codec/), and returns typed results. It writes no file: the study's
// outputs (rd.csv, rd.svg, jpeg/) are written by present/rd_outputs.hpp.
#pragma once

#include <cmath>
#include <string>
#include <vector>

#include "codec/basis_file.hpp"
#include "codec/basis_check.hpp"
#include "codec/image_codec.hpp"
#include "codec/rd_curve.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep {

// Reads every input (all must share channels and bit depth), cuts each into patches
// with settings.patch, stacks the observations (N = Σ N_i rows, d columns) and
// learns a basis: PCA through settings.solver, or for BasisTransform::dct the
// DCT-II columns sorted by the data's coefficient variance (eigenvalues = those variances).
// Returns the basis ready for write_basis_file(). Throws Error.
SavedBasis fit_basis(const std::vector<std::string>& inputs, const ImageStudySettings& settings,
                     BasisTransform transform);


// What `encode` asks for: the image settings (patch, reader, solver), the codec's, and the basis.
struct EncodeFileSettings {
  ImageStudySettings image;
  CodecSettings codec;
  std::string basis_file;     // a basis from `fit` (only its SHA-256 is stored); empty: see dct
  bool dct = false;           // the fixed DCT-II basis; neither: the image's own basis
  bool patch_given = false;   // --patch / --colour given: with a basis file they must agree with it,
  bool colour_given = false;  // else the basis file's are used
};

// A coded image and the figures `encode` reports.
struct EncodedFile {
  EncodeResult result;
  int width = 0, height = 0;
  double max_value = 0.0;  // L of the input's bit depth
};

// Reads `input` once and encodes it (codec/image_codec.hpp) with the basis asked for;
// the image's own basis is solved from the image already read, and the exact solve's
// moments spare the encoder its own pass. Writes nothing. Throws Error(usage) for
// --basis with --dct, a basis whose geometry does not fit, or a single patch; Error(data)
// for unreadable files.
EncodedFile encode_image_file(const std::string& input, const EncodeFileSettings& settings);

// What rate_distortion() returns.
struct RdStudy {
  std::vector<RdPoint> points;         // each curve by increasing bits per pixel, curves pca, dct, jpeg, bound
  RdCost cost;                         // what the study took
  std::vector<RdJpegFile> jpeg_files;  // one per JPEG quality (none when JPEG cannot hold the channels)
};

// For analysis with one image and the patches layout: PCA (own basis, k = r) and DCT
// (k = d) through the codec at the qualities above — every point of both curves in one
// streaming pass over the image (codec/patch_sweep.hpp) — JPEG (libjpeg-turbo, 4:2:0,
// optimised Huffman) at each JPEG quality, encoded and decoded row by row, in parallel
// (the files kept in memory, RdPoint::file left empty), and the Gaussian bound
// R(D) = Σ ½log2(λ_i/D_i) per observation from the eigenvalues (codec/gaussian_rd.hpp),
// in bits per pixel (N·R / (W·H)). Returns the points, each curve by increasing bits
// per pixel, the JPEG files and what the study took. Writes nothing. Throws Error(usage)
// for another layout or several images, Error(data) when a coder fails.
RdStudy rate_distortion(const ImageAnalysis& analysis, const RdSettings& settings);

}  // namespace pcasweep
