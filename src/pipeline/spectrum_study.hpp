// pcasweep/pipeline/spectrum_study.hpp — the spectrum of one image (or one set
// of images) with every rule for k, as one call for `spectrum`.
//
// Contract: reads, observes and solves as the sweep does (pipeline/image_set.hpp),
// then runs the rules for k (pipeline/k_choice.hpp) and checks that the computed
// eigenvalues share out the total variance. Returns typed results; writes nothing.
#pragma once

#include <string>
#include <vector>

#include "pipeline/image_study.hpp"
#include "pipeline/k_choice.hpp"

namespace pcasweep {

// Σλ against the trace of the covariance (computed apart from the eigenvalues).
struct TraceCheck {
  double sum = 0.0;                  // Σ of the r computed eigenvalues
  double trace = 0.0;                // total variance
  double relative_difference = 0.0;  // |sum − trace| / trace (absolute when the trace is 0)
  bool agrees() const { return relative_difference <= 1e-9; }
};
TraceCheck check_trace(const Basis& basis);

struct SpectrumStudy {
  ImageAnalysis analysis;
  KChoice choice;
  TraceCheck trace;
};

// paths: as for analyze_image_files; top > 0 is also the truncated solver's rank
// when --rank is not given. Throws Error as analyze_image_files and choose_k do.
SpectrumStudy study_spectrum(const std::vector<std::string>& paths, const ImageStudySettings& settings, int top,
                             const KChoiceSettings& k_rules);

}  // namespace pcasweep
