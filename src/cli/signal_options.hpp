// pcasweep/cli/signal_options.hpp — options for recordings, and the signal
// side of `sweep` and `spectrum`.
//
// Contract: add_signal_options() declares the window and reader options on a
// subcommand (after the image options, so a --layout the image side already
// declares is reused rather than declared twice). signal_input_requested()
// says whether the positional input goes down the signal path (a signal
// extension, or --layout windows). The run_* functions validate everything
// before writing anything and return the exit code; they throw Error.
#pragma once

#include <CLI/CLI.hpp>
#include <memory>
#include <string>

#include "pipeline/signal_study.hpp"

namespace pcasweep::cli {

struct SignalOptionText {
  int window = 64;
  int hop = -1;                    // -1: not given (= window)
  std::string taper = "auto";
  std::string channels = "joint";
  std::vector<std::string> columns;
  double rate = 0.0;
  std::string raw;                 // "", "int16", "float32"
  int raw_channels = 1;
  std::uint64_t max_frames = kDefaultMaxFrames;  // --max-frames (io/sound_checks.hpp)
  std::string layout;              // only used when this file declared --layout
  bool declared_layout = false;
};

// Declares --window, --hop, --taper, --channels, --columns, --rate, --raw,
// --raw-channels, --max-frames and (if absent) --layout on `sub`.
void add_signal_options(CLI::App& sub, SignalOptionText& text);

// True when `input` should be read as a recording.
bool signal_input_requested(const CLI::App& sub, const SignalOptionText& text, const std::string& input);

// Turns the option text into settings. Throws Error(usage) (hop 0, window < 1, …).
// The solver settings come from the options --solver, --rank, --oversample,
// --power-iters, --seed and --precision of `app` when it declares them (the image options
// do), else the solver defaults.
SignalStudySettings signal_settings(const SignalOptionText& text, const CLI::App* app = nullptr);

// The settings as JSON, for summary.json.
nlohmann::json signal_settings_json(const SignalStudySettings& settings);

// `pcasweep sweep RECORDING --out DIR`: writes reconstructions, plots, tables.
int run_signal_sweep(const std::string& input, const std::string& out, const std::string& ks, bool quiet,
                     const SignalStudySettings& settings);

// `pcasweep spectrum RECORDING`: eigenvalues and the trace check. `top` 0 = all.
int run_signal_spectrum(const std::string& input, int top, const SignalStudySettings& settings);

// One line about a recording and its layout, for the console.
std::string describe_analysis(const SignalAnalysis& analysis);

}  // namespace pcasweep::cli
