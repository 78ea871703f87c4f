// pcasweep/pipeline/sweep_study.hpp — the whole sweep of one image (or one set
// of images) as one call, shared by `sweep` and `demo`.
//
// Contract: study_image_sweep reads and validates every input and every k
// before anything leaves, then runs, in order: analyze (read → observe →
// solve), the rules for k (when asked), the rate–distortion study (when asked
// and the input is one image cut into patches), and the sweep itself, whose
// images go to a SweepImageOutput the caller supplies (present/sweep_outputs.hpp).
// It returns typed results and writes no file itself.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "pipeline/codec_study.hpp"
#include "pipeline/image_study.hpp"
#include "pipeline/k_choice.hpp"
#include "pipeline/signal_study.hpp"

namespace pcasweep {

struct SweepStudySettings {
  ImageStudySettings image;
  std::vector<int> ks;                     // empty: default_ks_for(analysis)
  std::optional<KChoiceSettings> k_rules;  // unset: no rules for k
  bool rate_distortion = false;            // the RD study (one image, patches only)
  RdSettings rd;
  SweepCoding coding;                      // codes each k (one image, patches only)
  SweepOutput output;
};

struct SweepStudy {
  ImageAnalysis analysis;
  std::vector<int> ks;            // the k's swept, ascending
  std::optional<KChoice> choice;  // when k_rules was set
  std::optional<RdStudy> rd;      // when the RD study ran
  std::vector<SweepRow> rows;     // one per k
  bool codable = false;           // one image cut into patches: the codec and the RD study apply
  bool coded = false;             // the rows were measured on decoded files (coding enabled and codable)
};

// paths: one image for the patches layout, two or more for whole and bands
// (pipeline/image_set.hpp). images: where the reconstructions go (not owned;
// null: nowhere). Returns the study. Throws Error(usage) for a bad k or
// layout before images->open(), Error(data) for unreadable inputs.
SweepStudy study_image_sweep(const std::vector<std::string>& paths, const SweepStudySettings& settings,
                             SweepImageOutput* images);

// The sweep of one recording: analyze_signal, then sweep_signal_ks over `ks`
// (empty: default_ks(r)) with each reconstruction handed to `recordings` (not
// owned; may be null), and the spectrum rules for k at `keep_fractions`.
struct SignalSweepStudy {
  SignalAnalysis analysis;
  std::vector<int> ks;
  std::vector<SignalSweepRow> rows;
  std::vector<KSuggestion> rules;
};
SignalSweepStudy study_signal_sweep(const std::string& path, const SignalStudySettings& settings,
                                    const std::vector<int>& ks, SignalSweepOutput* recordings,
                                    const std::vector<double>& keep_fractions = {0.90, 0.95, 0.99, 0.999});

}  // namespace pcasweep
