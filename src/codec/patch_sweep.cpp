#include "codec/patch_sweep.hpp"

#include <omp.h>

#include <algorithm>
#include <exception>
#include <map>
#include <mutex>

#include "core/error.hpp"
#include "observe/patch_blocks.hpp"
#include "observe/patch_folder.hpp"

namespace pcasweep {

namespace {

struct PointState {
  const PatchSweepPoint* spec = nullptr;
  std::unique_ptr<PatchFolder> folder;
  std::unique_ptr<PatchEncoder> encoder;
  std::unique_ptr<QualityAccumulator> quality;
  std::unique_ptr<SsimAccumulator> ssim;
  std::vector<std::uint16_t> written;  // the band's completed rows
  int y0 = 0, rows = 0;                // which rows `written` holds
  std::size_t clipped = 0;
  RowBlock reconstruction;             // coded points: the band's X̂
};

// Folds `xhat` (patch rows [py0, py1)) and takes the completed rows, rounded and clipped.
void fold_band(PointState& p, int py0, int py1, const RowBlock& xhat, const Image& image) {
  p.folder->add(py0, py1, xhat);
  p.y0 = p.folder->next_row();
  p.rows = p.folder->ready_rows();
  p.written.resize(std::size_t(p.rows) * image.width * image.channels);
  if (p.rows > 0) p.folder->take_quantized(p.written.data(), p.rows, image.max_value(), &p.clipped);
}

// Measures the rows fold_band() left and hands them to the sinks.
void measure_band(PointState& p, const Image& image) {
  if (p.rows == 0) return;
  const std::uint16_t* original = image.samples.data() + std::size_t(p.y0) * image.width * image.channels;
  p.quality->add(original, p.written.data(), p.written.size());
  if (p.ssim) p.ssim->add_rows(original, p.written.data(), p.rows);
  for (RowSink* sink : p.spec->sinks) sink->add(original, p.written.data(), p.y0, p.rows);
}

// Runs f(i) for i in [0, n), in parallel when n > 1 (one thread per point at a
// time; with a single point its own code may use the cores instead).
// Exceptions are carried out of the parallel region and the first rethrown.
template <class F>
void for_each_point(std::size_t n, F&& f) {
  std::exception_ptr failure;
  std::mutex mutex;
#pragma omp parallel for schedule(dynamic, 1) if (n > 1)
  for (std::ptrdiff_t i = 0; i < std::ptrdiff_t(n); ++i) {
    try {
      f(std::size_t(i));
    } catch (...) {
      std::lock_guard<std::mutex> lock(mutex);
      if (!failure) failure = std::current_exception();
    }
  }
  if (failure) std::rethrow_exception(failure);
}

// After the last band: each point's figures, its coded file, and its sinks finished.
std::vector<PatchSweepResult> finish_points(std::vector<PointState>& state, const Image& image) {
  std::vector<PatchSweepResult> results(state.size());
  for_each_point(state.size(), [&](std::size_t i) {
    PointState& s = state[i];
    PatchSweepResult& r = results[i];
    r.quality = s.quality->result();
    if (s.ssim) r.ssim = s.ssim->result();
    else {
      r.ssim.ssim = std::numeric_limits<double>::quiet_NaN();
      r.ssim.channel_ssim.assign(std::size_t(image.channels), std::numeric_limits<double>::quiet_NaN());
    }
    r.clipped = s.clipped;
    if (s.encoder) r.encoded = s.encoder->finish();
    for (RowSink* sink : s.spec->sinks) sink->finish();
  });
  return results;
}

}  // namespace

std::vector<PatchSweepResult> run_patch_sweep(const PatchSweepInputs& in, const std::vector<PatchSweepPoint>& points) {
  if (!in.image || !in.layout) throw usage_error("internal: patch sweep without an image or layout");
  const Image& image = *in.image;
  const PatchLayout& layout = *in.layout;
  // Plain ks, ascending, each with the points that use it.
  std::map<int, std::vector<std::size_t>> plain;
  std::vector<bool> projection_used(in.decoder_bases.size(), false);
  for (std::size_t i = 0; i < points.size(); ++i) {
    const PatchSweepPoint& p = points[i];
    if (p.plan) {
      if (p.decoder_basis < 0 || std::size_t(p.decoder_basis) >= in.decoder_bases.size() || !in.decoder_bases[std::size_t(p.decoder_basis)])
        throw usage_error("internal: coded point without its decoder basis");
      projection_used[std::size_t(p.decoder_basis)] = true;
    } else {
      if (!in.basis) throw usage_error("internal: plain point without a basis");
      if (p.k < 1 || p.k > in.basis->rank())
        throw usage_error("--k: k = " + std::to_string(p.k) + " is outside 1.." + std::to_string(in.basis->rank()));
      plain[p.k].push_back(i);
    }
  }
  std::vector<PointState> state(points.size());
  for (std::size_t i = 0; i < points.size(); ++i) {
    PointState& s = state[i];
    s.spec = &points[i];
    s.folder = std::make_unique<PatchFolder>(layout);
    s.quality = std::make_unique<QualityAccumulator>(image.channels, image.bit_depth);
    if (points[i].ssim)
      s.ssim = std::make_unique<SsimAccumulator>(image.width, image.height, image.channels, image.max_value(),
                                                 in.ssim_precision, points[i].on_ssim_map_row);
    if (points[i].plan) s.encoder = std::make_unique<PatchEncoder>(*points[i].plan, layout, in.codec);
  }
  const int r_plain = plain.empty() ? 0 : plain.rbegin()->first;
  const Eigen::MatrixXd V = r_plain > 0 ? Eigen::MatrixXd(in.basis->components.leftCols(r_plain)) : Eigen::MatrixXd();
  const Eigen::RowVectorXd shift = r_plain > 0 ? Eigen::RowVectorXd(in.basis->mean.transpose() * V) : Eigen::RowVectorXd();

  const PatchBlocks blocks(layout, image);
  RowBlock band, coefficients, xhat;
  std::vector<RowBlock> projected(in.decoder_bases.size());
  for (Eigen::Index b = 0; b < blocks.block_count(); ++b) {
    const int py0 = blocks.first_patch_row(b), py1 = blocks.end_patch_row(b);
    blocks.fill(b, band);
    if (r_plain > 0) {
      // C = X·V − 1·(μᵀV), then X̂ grows over the ascending ks (reconstruct/'s arithmetic).
      coefficients.noalias() = band * V;
      coefficients.rowwise() -= shift;
      xhat.resize(band.rows(), band.cols());
      xhat.rowwise() = in.basis->mean.transpose();
      int done = 0;
      for (const auto& [k, users] : plain) {
        xhat.noalias() += coefficients.middleCols(done, k - done) * V.middleCols(done, k - done).transpose();
        done = k;
        for (std::size_t i : users) fold_band(state[i], py0, py1, xhat, image);
      }
    }
    for (std::size_t j = 0; j < projected.size(); ++j)
      if (projection_used[j]) project_band(*in.decoder_bases[j], band, projected[j]);
    for_each_point(points.size(), [&](std::size_t i) {
      PointState& s = state[i];
      if (s.encoder) {
        s.encoder->add_band(py0, py1, projected[std::size_t(s.spec->decoder_basis)], &s.reconstruction);
        fold_band(s, py0, py1, s.reconstruction, image);
      }
      measure_band(s, image);
    });
  }
  return finish_points(state, image);
}

}  // namespace pcasweep
