// pcasweep/pipeline/signal_study.hpp — wires the stages for one recording:
// read -> window -> solve -> reconstruct -> fold -> requantise -> measure,
// and lays the numbers out as tables and plots for the report stage.
//
// Contract: nothing here does numerical work of its own beyond choosing
// which frames a plot shows; it calls the stages in order. Every validation
// (file, window, hop, k list) happens before any output is written, so a bad
// input leaves no files behind. Metrics are measured on the stored values
// (rounded and clipped to the input's sample type), i.e. on what is written.
#pragma once

#include <functional>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "io/signal.hpp"
#include "measure/signal_metrics.hpp"
#include "observe/windows.hpp"
#include "report/table.hpp"
#include "solve/basis.hpp"
#include "solve/solver.hpp"

namespace pcasweep {

struct SignalStudySettings {
  SignalReadOptions read;
  WindowOptions windows;
  SolverSettings solver;
};

struct SignalAnalysis {
  std::string input;                    // path as given
  Signal signal;                        // the recording analysed, T×C
  std::unique_ptr<WindowLayout> layout;
  Eigen::MatrixXd X;                    // observations, N×d
  Basis basis;
  SolveReport solve_report;             // how `basis` was solved
};

// Reads `path`, cuts it into windows and solves. Throws Error.
SignalAnalysis analyze_signal(const std::string& path, const SignalStudySettings& settings);

// The same for a recording already in memory; `name` labels messages. Throws Error
// (usage: window/hop do not fit; data: fewer than two observations).
SignalAnalysis analyze_recording(const std::string& name, Signal signal, const WindowOptions& windows,
                                 const SolverSettings& solver);

struct SignalSweepRow {
  int k = 0;
  SignalQuality quality;           // measured on the stored (requantised) values
  double energy_retained = 0.0;    // cumulative proportion of variance at k
  std::int64_t stored_values = 0;  // k·d + N·k + d (numbers kept, not bytes)
  double ratio = 0.0;              // stored_values / (frames·channels)
  std::size_t clipped_samples = 0; // pushed back into the sample type's range
};

// For each k (ascending, 1..rank): reconstruct, fold, requantise, measure.
// `on_recording(row, stored)` (optional) receives each finished row and the
// stored values it was measured on, T×C.
using RecordingSink = std::function<void(const SignalSweepRow& row, const Eigen::MatrixXd& stored)>;
std::vector<SignalSweepRow> sweep_signal_ks(const SignalAnalysis& analysis, const std::vector<int>& ks,
                                            const RecordingSink& on_recording = {});

// Columns k, rmse, snr_db, prd_percent, prd_mean_removed_percent,
// max_abs_error, energy_retained, stored_values, ratio, clipped_samples, then
// for recordings of more than one channel (when `per_channel`) each of the
// five figures per channel: rmse_<ch>, snr_db_<ch>, prd_percent_<ch>,
// prd_mean_removed_percent_<ch>, max_abs_error_<ch>.
Table signal_sweep_table(const std::vector<SignalSweepRow>& rows, const std::vector<std::string>& channel_names,
                         bool per_channel = true);

// Everything about one sweep, with the settings used.
nlohmann::json signal_sweep_summary(const SignalAnalysis& analysis, const std::vector<SignalSweepRow>& rows,
                                    const nlohmann::json& settings);

// The frames a plot shows: `length` frames (≤ T) centred on the frame that
// strays furthest from its channel mean in units of that channel's standard
// deviation (an impact, on the demo log). Returns the first frame.
Eigen::Index excerpt_start(const Signal& signal, Eigen::Index length);

// Runs sweep_signal_ks and writes into `out_dir` (created if missing):
// <stem>.k<K>.<ext> in the input's format and sample type, <stem>.k<K>.excerpt.svg,
// spectrum.csv, sweep.csv and summary.json, each atomically. Returns the rows.
std::vector<SignalSweepRow> write_signal_sweep(const SignalAnalysis& analysis, const std::vector<int>& ks,
                                               const std::string& out_dir, const nlohmann::json& settings);

// True when `path` should go down the signal path: a signal extension
// (.wav .flac .csv .raw …) or `layout` == "windows".
bool is_signal_input(const std::string& path, const std::string& layout);

}  // namespace pcasweep
