#include "pipeline/spectrum_study.hpp"

#include <cmath>

#include "pipeline/image_set.hpp"

namespace pcasweep {

TraceCheck check_trace(const Basis& basis) {
  TraceCheck c;
  c.sum = basis.eigenvalues.sum();
  c.trace = basis.total_variance;
  c.relative_difference = c.trace > 0 ? std::abs(c.sum - c.trace) / c.trace : std::abs(c.sum - c.trace);
  return c;
}

SpectrumStudy study_spectrum(const std::vector<std::string>& paths, const ImageStudySettings& settings, int top,
                             const KChoiceSettings& k_rules) {
  SpectrumStudy s;
  s.analysis = analyze_image_files(paths, settings, top > 0 ? std::vector<int>{top} : std::vector<int>{});
  s.trace = check_trace(s.analysis.basis);
  s.choice = choose_k(s.analysis, k_rules);
  return s;
}

}  // namespace pcasweep
