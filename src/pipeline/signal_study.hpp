// pcasweep/pipeline/signal_study.hpp — wires the stages for one recording:
// read -> window -> solve -> reconstruct -> fold -> requantise -> measure,
// and returns the rows (SignalSweepRow). Tables, plots and files are
// present/'s (present/signal_outputs.hpp).
//
// Contract: nothing here does numerical work of its own; it calls the
// stages in order. Every validation (file, window, hop, k list) happens before any output is written, so a bad
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

// Where a recording sweep's reconstructions go as they are made; the
// presentation stage implements it (present/signal_outputs.hpp). open() comes
// once every k is valid, before the first recording(row, stored T×C).
class SignalSweepOutput {
 public:
  virtual ~SignalSweepOutput() = default;
  virtual void open(const SignalAnalysis& analysis) = 0;
  virtual void recording(const SignalSweepRow& row, const Eigen::MatrixXd& stored) = 0;
};

// True when `path` should go down the signal path: a signal extension
// (.wav .flac .csv .raw …) or `layout` == "windows".
bool is_signal_input(const std::string& path, const std::string& layout);

}  // namespace pcasweep
