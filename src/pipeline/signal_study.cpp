#include "pipeline/signal_study.hpp"

#include <algorithm>
#include <cmath>

#include "core/error.hpp"
#include "measure/choose_k.hpp"
#include "pipeline/image_study.hpp"  // check_ks
#include "reconstruct/reconstruct.hpp"

namespace pcasweep {

SignalAnalysis analyze_signal(const std::string& path, const SignalStudySettings& settings) {
  return analyze_recording(path, read_signal(path, settings.read), settings.windows, settings.solver);
}

SignalAnalysis analyze_recording(const std::string& name, Signal signal, const WindowOptions& windows,
                                 const SolverSettings& solver) {
  SignalAnalysis a;
  a.input = name;
  a.signal = std::move(signal);
  a.layout = std::make_unique<WindowLayout>(a.signal.frames(), a.signal.channels(), windows, name);
  if (a.layout->observation_count() < 2) {
    throw usage_error(name + ": only one window fits the recording (" + std::to_string(a.signal.frames()) +
                      " frames); use a shorter --window or --hop");
  }
  a.X = a.layout->observe(a.signal.samples);
  Solution solved = solve(a.X, solver);
  a.basis = std::move(solved.basis);
  a.solve_report = std::move(solved.report);
  return a;
}

std::vector<SignalSweepRow> sweep_signal_ks(const SignalAnalysis& a, const std::vector<int>& ks,
                                            const RecordingSink& on_recording) {
  check_ks(ks, a.basis.rank());
  const Eigen::VectorXd cumulative = cumulative_proportions(a.basis);
  const std::int64_t n = a.X.rows(), d = a.X.cols();
  const double raw = double(a.signal.samples.size());
  ReconstructionSweep sweep(a.basis, a.X);
  std::vector<SignalSweepRow> rows;
  for (int k : ks) {
    const Eigen::MatrixXd folded = a.layout->fold(sweep.advance_to(k));
    SignalSweepRow row;
    row.k = k;
    const Eigen::MatrixXd stored = conform_to_sample_type(folded, a.signal, &row.clipped_samples);
    row.quality = compare_signals(a.signal.samples, stored);
    row.energy_retained = cumulative(k - 1);
    row.stored_values = std::int64_t(k) * d + n * k + d;
    row.ratio = double(row.stored_values) / raw;
    if (on_recording) on_recording(row, stored);
    rows.push_back(std::move(row));
  }
  return rows;
}

bool is_signal_input(const std::string& path, const std::string& layout) {
  return layout == "windows" || ((layout.empty() || layout == "auto") && has_signal_extension(path));
}

}  // namespace pcasweep
