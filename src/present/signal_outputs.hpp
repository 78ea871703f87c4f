// pcasweep/present/signal_outputs.hpp — a recording sweep's files.
//
// Contract: writes what a sweep of pipeline/signal_study.hpp produces into one
// OutputFolder, every file atomically: <stem>.k<K>.<ext> in the input's format
// and sample type, <stem>.k<K>.excerpt.svg (original, reconstruction and
// residual over a short stretch), spectrum.csv, sweep.csv and summary.json.
// Computes nothing but which frames the plots show.
#pragma once

#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/signal_study.hpp"
#include "present/output_folder.hpp"

namespace pcasweep {

// The frames a plot shows: `length` frames (≤ T) centred on the frame that
// strays furthest from its channel mean in units of that channel's standard
// deviation (an impact, on the demo log). Returns the first frame.
Eigen::Index excerpt_start(const Signal& signal, Eigen::Index length);

// The reconstructions into a folder (pipeline's SignalSweepOutput): open()
// creates the folder (Error(data) when it cannot) and picks the plots' stretch:
// 4 windows, but at least 1000 and at most 4000 frames.
class SignalFolderRecordings : public SignalSweepOutput {
 public:
  explicit SignalFolderRecordings(std::string dir) : dir_(std::move(dir)) {}
  void open(const SignalAnalysis& analysis) override;
  void recording(const SignalSweepRow& row, const Eigen::MatrixXd& stored) override;
  // The folder; valid after open(). Throws Error(usage) before.
  const OutputFolder& folder() const;

 private:
  std::string dir_;
  const SignalAnalysis* analysis_ = nullptr;
  std::optional<OutputFolder> folder_;
  Eigen::Index start_ = 0, length_ = 0;
};

// spectrum.csv, sweep.csv and summary.json (signal_sweep_summary with settings) into `out`. Throws Error(data).
void write_signal_sweep_tables(const SignalAnalysis& analysis, const std::vector<SignalSweepRow>& rows,
                               const nlohmann::json& settings, const OutputFolder& out);

// Runs sweep_signal_ks and writes into `out_dir` (created once the k's are
// valid) what SignalFolderRecordings and write_signal_sweep_tables write.
// Returns the rows. Throws Error.
std::vector<SignalSweepRow> write_signal_sweep(const SignalAnalysis& analysis, const std::vector<int>& ks,
                                               const std::string& out_dir, const nlohmann::json& settings);

}  // namespace pcasweep
