#include "pipeline/batch_visuals.hpp"

#include <algorithm>
#include <cmath>

#include "core/error.hpp"
#include "pipeline/batch_detail.hpp"

namespace pcasweep {

using namespace detail;

namespace {

// n files, at most max_count of them evenly spaced, plus the first of `must`
// (replacing the last pick when the sample is full). Returns indices, ascending.
std::vector<std::size_t> choose_sample(std::size_t n, int max_count, const std::vector<std::size_t>& must) {
  std::vector<std::size_t> pick;
  if (max_count <= 0 || n == 0) return pick;
  const std::size_t m = std::min<std::size_t>(n, std::size_t(max_count));
  for (std::size_t i = 0; i < m; ++i) pick.push_back(i * n / m);
  for (std::size_t w : must) {
    if (std::find(pick.begin(), pick.end(), w) != pick.end()) continue;
    if (pick.size() < m) pick.push_back(w);
    else pick.back() = w;
    break;  // the worst failing file only
  }
  std::sort(pick.begin(), pick.end());
  pick.erase(std::unique(pick.begin(), pick.end()), pick.end());
  return pick;
}

// The file read and solved again as the sweep did it. Throws Error.
ImageAnalysis reanalyse(const FileResult& f, const BatchResult& r, const BatchSettings& s) {
  if (r.shared) return observe_on_shared(f.path, s.image, *r.shared);
  return analyze_image(f.path, s.image);
}

SampledFile sample_file(const FileResult& f, const ImageAnalysis& a, int show_k, bool with_viewer,
                        const BatchSettings& s, const VisualSettings& vs) {
  SampledFile out;
  out.path = f.path;
  out.training = f.training;
  out.k = std::min<int>(show_k, int(a.basis.rank()));
  out.meets_target = meets_target(quality_at(f, out.k), s.target);
  out.with_viewer = with_viewer;
  if (with_viewer) out.viewer_ks = file_ks(s.ks, a.basis.rank());
  out.visuals = file_visuals(a, out.k, out.viewer_ks, vs);
  out.patch = a.patches()->options();
  const Image& image = a.image();
  out.width = image.width;
  out.height = image.height;
  out.channels = image.channels;
  out.bit_depth = image.bit_depth;
  return out;
}

SpectrumVisuals spectrum_of(const ImageAnalysis& a, const std::string& file) {
  SpectrumVisuals out;
  out.file = file;
  out.basis = a.basis;
  out.patch = a.patches()->options();
  try {
    out.choice = choose_k(a, KChoiceSettings{});
  } catch (const Error& e) {
    out.choice_error = e.what();
  }
  out.channels = a.image().channels;
  return out;
}

}  // namespace

BatchVisuals prepare_batch_visuals(const BatchResult& r, const BatchFigures& figures, const BatchSettings& s) {
  BatchVisuals out;
  const Recommendation& rec = figures.recommendation;
  out.recommended = rec.found;
  out.show_k = rec.found ? rec.k : (figures.ks.empty() ? 1 : figures.ks.back());
  const auto swept = swept_files(r);
  std::vector<std::size_t> must;
  if (rec.found && !rec.failing.empty()) must.push_back(rec.failing.front());
  const std::vector<std::size_t> sample = choose_sample(swept.size(), s.report_sample, must);
  out.sampled = sample.size();
  // One file at a time, on one thread (see run_batch: OpenMP's small parallel
  // regions cost more than they gain here).
  const SerialLinearAlgebra serial(true);
  int viewers = 0;
  for (std::size_t i : sample) {
    const FileResult& f = *swept[i];
    ImageAnalysis a;
    try {
      a = reanalyse(f, r, s);
    } catch (const Error&) {
      continue;  // the file changed since the sweep; leave it out of the pictures
    }
    if (!a.patches()) continue;
    const bool with_viewer = viewers < s.live_viewers;
    viewers += with_viewer ? 1 : 0;
    out.files.push_back(sample_file(f, a, out.show_k, with_viewer, s, out.settings));
    if (!out.spectrum) out.spectrum = spectrum_of(a, f.path);
  }
  return out;
}

}  // namespace pcasweep
