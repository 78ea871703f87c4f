// pcasweep/codec/patch_sweep.hpp — every reconstruction of one image in one streaming pass.
//
// Contract: run_patch_sweep() walks the image's bands of patch rows
// (observe/patch_blocks.hpp) once, top to bottom, and for each band makes
// every requested reconstruction ("point") of those rows:
//   plain point (k):  X̂ = C[:, :k]·V[:, :k]ᵀ + 1μᵀ with C = (X − 1μᵀ)·V, built
//                     upwards over the ascending plain ks (one N·d·k_max
//                     product for all of them, as reconstruct/ does);
//   coded point:      the band's coefficients on a decoder basis (one
//                     product per basis, shared by every point on it) go
//                     through that point's PatchEncoder (codec/image_codec.hpp),
//                     which codes them and returns the decoder's X̂.
// Each X̂ is folded (PatchFolder), rounded and clipped to the bit depth, and
// the rows are measured against the original — MSE/PSNR exactly
// (QualityAccumulator), SSIM with the window's border rows carried between
// bands (SsimAccumulator), so both equal the whole-image figures — and handed
// to the point's sinks (a PNG writer, a preview, ...). Points run in
// parallel within a band; a point's sinks are called from one thread at a
// time, in row order. Memory: the image plus O(points·band·width) and the
// coded bytes; never N×d or a whole reconstruction.
//
// Why in codec/: the pass reconstructs (reconstruct/), codes (image_codec.hpp)
// and measures (measure/) each band; codec/ is the lowest stage that may call
// all three, and the pass is numerical work, not wiring. pipeline/ (the sweep,
// the rules for k, the RD study, the report's visuals) runs it.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <vector>

#include "codec/image_codec.hpp"
#include "io/image.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
#include "observe/patches.hpp"
#include "solve/basis.hpp"

namespace pcasweep {

// Receives a point's written rows as they are made.
class RowSink {
 public:
  virtual ~RowSink() = default;
  // original, written: rows [y0, y0 + count) of the original and of the written image,
  // count × width × channels samples each, interleaved.
  virtual void add(const std::uint16_t* original, const std::uint16_t* written, int y0, int count) = 0;
  // After the last row (default: nothing). May throw Error.
  virtual void finish() {}
};

struct PatchSweepPoint {
  int k = 0;                          // plain point: the first k components of the basis (1..r)
  const CodingPlan* plan = nullptr;   // coded point when set (k is then only a label)
  int decoder_basis = 0;              // coded point: index into PatchSweepInputs::decoder_bases
  bool ssim = true;                   // measure SSIM (else NaN)
  std::vector<RowSink*> sinks;        // not owned; each must outlive the run
  // With ssim: receives each row of the local-SSIM map (SsimAccumulator's on_map_row).
  std::function<void(int row, const float* values)> on_ssim_map_row;
};

struct PatchSweepInputs {
  const Image* image = nullptr;                    // the original
  const PatchLayout* layout = nullptr;             // its patch geometry
  const Basis* basis = nullptr;                    // plain points: the basis (r components)
  std::vector<const DecoderBasis*> decoder_bases;  // coded points' bases
  CodecSettings codec;                             // coded points: entropy stage, zstd level
  SsimPrecision ssim_precision = SsimPrecision::automatic;
};

struct PatchSweepResult {
  ImageQuality quality;        // of the written image
  SsimResult ssim;             // mean and per channel (NaN when not asked or under 11×11)
  std::size_t clipped = 0;     // samples clipped to the bit depth's range
  EncodeResult encoded;        // coded points: the file and its figures
};

// inputs: as above; points: any mix of plain and coded points (plain ks need
// not be sorted or distinct). Returns one result per point, in order.
// Throws Error(usage) for a plain k outside 1..r or a missing basis.
std::vector<PatchSweepResult> run_patch_sweep(const PatchSweepInputs& inputs, const std::vector<PatchSweepPoint>& points);

}  // namespace pcasweep
