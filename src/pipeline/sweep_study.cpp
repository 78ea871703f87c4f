#include "pipeline/sweep_study.hpp"

#include "pipeline/image_set.hpp"
#include "pipeline/signal_study.hpp"

namespace pcasweep {

SweepStudy study_image_sweep(const std::vector<std::string>& paths, const SweepStudySettings& settings,
                             SweepImageOutput* images) {
  SweepStudy s;
  s.analysis = analyze_image_files(paths, settings.image, settings.ks);
  s.ks = settings.ks.empty() ? default_ks_for(s.analysis) : settings.ks;
  check_ks_against(s.ks, s.analysis);
  if (settings.k_rules) s.choice = choose_k(s.analysis, *settings.k_rules);
  s.codable = s.analysis.sources.size() == 1 && s.analysis.patches() != nullptr;
  s.coded = s.codable && settings.coding.enabled;
  if (s.codable && settings.rate_distortion) s.rd = rate_distortion(s.analysis, settings.rd);
  s.rows = sweep_into(s.analysis, s.ks, settings.coding, settings.output, images);
  return s;
}

SignalSweepStudy study_signal_sweep(const std::string& path, const SignalStudySettings& settings,
                                    const std::vector<int>& ks, SignalSweepOutput* recordings,
                                    const std::vector<double>& keep_fractions) {
  SignalSweepStudy s;
  s.analysis = analyze_signal(path, settings);
  s.ks = ks.empty() ? default_ks(s.analysis.basis.rank()) : ks;
  check_ks(s.ks, s.analysis.basis.rank());
  if (recordings) recordings->open(s.analysis);
  s.rows = sweep_signal_ks(s.analysis, s.ks, [&](const SignalSweepRow& row, const Eigen::MatrixXd& stored) {
    if (recordings) recordings->recording(row, stored);
  });
  s.rules = spectrum_rules(s.analysis.basis, keep_fractions);
  return s;
}

}  // namespace pcasweep
