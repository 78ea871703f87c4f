// pcasweep/pipeline/batch_visuals.hpp — the pictures report.html shows of a batch.
//
// Contract: prepare_batch_visuals() is the batch's second, explicit pass over
// a sample of its files: each sampled file is read and solved again (its own
// basis, or projected on the shared one), one file at a time with the linear
// algebra on one thread, and pipeline/file_visuals.hpp makes its previews,
// 1:1 crops and (for the first settings.live_viewers files) the slider's
// data. The first sampled file also gives the spectrum: its basis (or the
// shared one) and the rules for k (pipeline/k_choice.hpp). Returns
// typed values only; present/batch_report.hpp renders them. A sampled file
// that can no longer be read is left out of the pictures.
// The sample: at most settings.report_sample of the swept files, evenly
// spaced through the batch, plus the worst file at the recommended k.
// Each file is shown at the recommended k (the largest swept k when none
// is recommended), or at its own largest k if smaller.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/batch.hpp"
#include "pipeline/batch_figures.hpp"
#include "pipeline/file_visuals.hpp"
#include "pipeline/k_choice.hpp"

namespace pcasweep {

// One sampled file, analysed again.
struct SampledFile {
  std::string path;
  bool training = false;          // shared basis: in the training subset
  int k = 0;                      // the k shown: min(shown k, the file's rank)
  bool meets_target = false;      // the sweep's figures at k meet the target
  FileVisuals visuals;            // previews, crops, and the slider's data when with_viewer
  bool with_viewer = false;
  std::vector<int> viewer_ks;     // the file's swept ks (when with_viewer)
  PatchOptions patch;             // the patch geometry the file was cut with
  int width = 0, height = 0, channels = 0, bit_depth = 0;  // of the image
};

// The basis of the first sampled file (or the shared basis) and what it says about k.
struct SpectrumVisuals {
  std::string file;               // the file whose basis it is (per-file basis)
  Basis basis;
  std::optional<KChoice> choice;  // the rules for k; empty when they failed
  std::string choice_error;       // why, when choice is empty
  PatchOptions patch;             // the patch geometry of the basis's components
  int channels = 0;               // of the image the patches were cut from
};

struct BatchVisuals {
  int show_k = 1;                 // the k the sample is shown at
  bool recommended = false;       // show_k is the recommended k (else the largest swept)
  std::size_t sampled = 0;        // files chosen for the sample (some may be left out)
  VisualSettings settings;        // preview and crop sizes used
  std::vector<SampledFile> files; // in batch order
  std::optional<SpectrumVisuals> spectrum;
};

// result, figures: a finished batch and its figures; settings: the batch's
// (report_sample, live_viewers, ks, image settings, the target). Returns the
// pictures (empty when no file was swept). Throws Error only for a bug in
// the caller's figures (a k outside a file's rank).
BatchVisuals prepare_batch_visuals(const BatchResult& result, const BatchFigures& figures,
                                   const BatchSettings& settings);

}  // namespace pcasweep
