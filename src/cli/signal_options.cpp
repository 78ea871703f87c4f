#include "cli/signal_options.hpp"

#include <cmath>
#include <iostream>

#include "core/error.hpp"
#include "pipeline/image_study.hpp"  // parse_k_list
#include "pipeline/spectrum_study.hpp"
#include "pipeline/sweep_study.hpp"
#include "present/signal_outputs.hpp"
#include "present/sweep_tables.hpp"

namespace pcasweep::cli {

void add_signal_options(CLI::App& sub, SignalOptionText& text) {
  if (!sub.get_option_no_throw("--layout")) {
    text.declared_layout = true;
    sub.add_option("--layout", text.layout,
                   "How the input is cut into observations; 'windows' reads it as a recording "
                   "(default: chosen by extension, .wav .flac .ogg .aiff .csv .raw … are recordings)");
  }
  sub.add_option("--window", text.window, "Recordings: frames per window (default 64)");
  sub.add_option("--hop", text.hop,
                 "Recordings: frames between window starts, 1..window (default: the window, no overlap)");
  sub.add_option("--taper", text.taper,
                 "Recordings: analysis/synthesis window: rectangular, sqrt-hann, or auto (default: "
                 "rectangular without overlap, sqrt-hann with overlap; see docs/signals.md)")
      ->check(CLI::IsMember({"auto", "rectangular", "sqrt-hann"}));
  sub.add_option("--channels", text.channels,
                 "Recordings: joint (a window of all channels is one observation, default) or separate "
                 "(each channel's windows are observations sharing one basis)")
      ->check(CLI::IsMember({"joint", "separate"}));
  sub.add_option("--columns", text.columns,
                 "CSV: columns to read as channels, by header name or 1-based index, comma-separated "
                 "(default: all)")
      ->delimiter(',');
  sub.add_option("--rate", text.rate, "CSV and raw: sample rate in Hz (default: 1, time axis in frames)");
  sub.add_option("--raw", text.raw, "Read the input as headerless little-endian samples: int16 or float32")
      ->check(CLI::IsMember({"int16", "float32"}));
  sub.add_option("--raw-channels", text.raw_channels, "Raw: interleaved channels per frame (default 1)");
  sub.add_option("--max-frames", text.max_frames,
                 "Recordings: longest read, in frames (samples per channel; default 268435456 = 2^28, about 93 "
                 "minutes at 48 kHz). Checked from the header before anything is allocated, with whether an "
                 "uncompressed file is large enough for the frames it declares")
      ->check(CLI::PositiveNumber);
}

bool signal_input_requested(const CLI::App& sub, const SignalOptionText& text, const std::string& input) {
  std::string layout = text.layout;
  if (!text.declared_layout) {
    const CLI::Option* option = sub.get_option_no_throw("--layout");
    if (option && option->count() > 0) layout = option->as<std::string>();
  }
  if (!text.raw.empty()) return true;
  return is_signal_input(input, layout);
}

namespace {
// The value of `name` on `app` if declared and given on the command line, else `fallback`.
template <typename T>
T option_value(const CLI::App* app, const std::string& name, T fallback) {
  if (!app) return fallback;
  const CLI::Option* option = app->get_option_no_throw(name);
  if (!option || option->count() == 0) return fallback;
  return option->as<T>();
}
}  // namespace

SignalStudySettings signal_settings(const SignalOptionText& text, const CLI::App* app) {
  SignalStudySettings s;
  s.solver.choice = parse_solver_choice(option_value<std::string>(app, "--solver", "auto"));
  s.solver.rank = option_value<Eigen::Index>(app, "--rank", 0);
  s.solver.oversample = option_value<int>(app, "--oversample", s.solver.oversample);
  s.solver.power_iterations = option_value<int>(app, "--power-iters", s.solver.power_iterations);
  s.solver.seed = option_value<std::uint64_t>(app, "--seed", s.solver.seed);
  s.solver.precision = parse_precision(option_value<std::string>(app, "--precision", "double"));
  if (text.window < 1) throw usage_error("--window must be at least 1 frame, not " + std::to_string(text.window));
  if (text.hop == 0) {
    throw usage_error("--hop must be at least 1 frame (the step from one window's start to the next), not 0");
  }
  if (text.hop < -1 || (text.hop != -1 && text.hop < 1)) {
    throw usage_error("--hop must be at least 1 frame, not " + std::to_string(text.hop));
  }
  if (text.hop > text.window) {
    throw usage_error("--hop " + std::to_string(text.hop) + " is longer than --window " +
                      std::to_string(text.window) + ": frames between windows would be skipped");
  }
  s.windows.window = text.window;
  s.windows.hop = text.hop == -1 ? 0 : text.hop;
  s.windows.taper = parse_taper(text.taper);
  s.windows.channels = parse_channel_mode(text.channels);
  s.read.columns = text.columns;
  if (text.rate < 0 || !std::isfinite(text.rate)) throw usage_error("--rate must be a positive number of Hz");
  s.read.rate = text.rate;
  s.read.raw_type = text.raw;
  if (text.raw_channels < 1) throw usage_error("--raw-channels must be at least 1");
  s.read.raw_channels = text.raw_channels;
  s.read.max_frames = text.max_frames;
  return s;
}

nlohmann::json signal_settings_json(const SignalStudySettings& s) {
  const char* solver = s.solver.choice == SolverChoice::exact        ? "exact"
                       : s.solver.choice == SolverChoice::randomized ? "randomized"
                                                                     : "auto";
  nlohmann::json j = {{"layout", "windows"},
                      {"solver", {{"choice", solver},
                                  {"rank", s.solver.rank},
                                  {"oversample", s.solver.oversample},
                                  {"power_iterations", s.solver.power_iterations},
                                  {"seed", s.solver.seed},
                                  {"precision", text_of(s.solver.precision)}}},
                      {"window", s.windows.window},
                      {"hop", s.windows.hop ? s.windows.hop : s.windows.window},
                      {"taper", s.windows.taper == Taper::automatic     ? "auto"
                                : s.windows.taper == Taper::rectangular ? "rectangular"
                                                                        : "sqrt-hann"},
                      {"channels", s.windows.channels == ChannelMode::joint ? "joint" : "separate"}};
  if (!s.read.columns.empty()) j["columns"] = s.read.columns;
  if (s.read.rate > 0) j["rate_hz"] = s.read.rate;
  if (!s.read.raw_type.empty()) {
    j["raw"] = s.read.raw_type;
    j["raw_channels"] = s.read.raw_channels;
  }
  return j;
}

std::string describe_analysis(const SignalAnalysis& a) {
  const Signal& s = a.signal;
  std::string rate = s.sample_rate_given ? format_real(s.sample_rate, 8) + " Hz" : "rate not given (1 Hz assumed)";
  return a.input + ": " + describe_format(s) + ", " + describe_sample_type(s.sample_type) + ", " +
         std::to_string(s.channels()) + " channel(s), " + std::to_string(s.frames()) + " frames, " + rate + "; " +
         a.layout->describe() + "; N = " + std::to_string(a.X.rows()) + ", d = " + std::to_string(a.X.cols());
}

int run_signal_sweep(const std::string& input, const std::string& out, const std::string& ks_text, bool quiet,
                     const SignalStudySettings& settings) {
  const std::vector<int> ks = ks_text.empty() ? std::vector<int>{} : parse_k_list(ks_text);
  SignalFolderRecordings recordings(out);
  const SignalSweepStudy study = study_signal_sweep(input, settings, ks, &recordings);
  write_signal_sweep_tables(study.analysis, study.rows, signal_settings_json(settings), recordings.folder());
  if (quiet) return 0;
  std::cout << describe_analysis(study.analysis) << "\n" << render_console(signal_sweep_table(study.rows, {}, false), 4);
  for (const auto& r : study.rows)
    if (r.clipped_samples > 0)
      std::cout << "k = " << r.k << ": " << r.clipped_samples << " sample(s) clipped to the "
                << describe_sample_type(study.analysis.signal.sample_type) << " range\n";
  for (const auto& rule : study.rules)
    std::cout << "rule " << rule.label << ": k = " << (rule.k < 0 ? std::string("n/a") : std::to_string(rule.k))
              << (rule.lower_bound ? " (at least)" : "") << "\n";
  std::cout << "(snr_db and prd_percent use the plain energy; prd_mean_removed_percent removes each channel's "
               "mean; all on the stored values)\n"
            << "wrote " << out << "/\n";
  return 0;
}

int run_signal_spectrum(const std::string& input, int top, const SignalStudySettings& settings) {
  const SignalAnalysis a = analyze_signal(input, settings);
  Table table = spectrum_table(a.basis);
  if (top > 0 && std::size_t(top) < table.rows.size()) table.rows.resize(std::size_t(top));
  const TraceCheck check = check_trace(a.basis);
  const double sum = check.sum, trace = check.trace, rel = check.relative_difference;
  std::cout << describe_analysis(a) << "; solver: " << a.solve_report.solver << " (" << a.solve_report.reason << ")\n"
            << "eigenvalues are variances of the sample covariance (divide by N-1), in sample units squared\n"
            << render_console(table, 6) << "total variance (trace of the covariance) = " << format_real(trace)
            << "\nsum of eigenvalues                      = " << format_real(sum)
            << "\nrelative difference = " << format_real(rel, 3)
            << (rel <= 1e-9 ? "  (agree: the eigenvalues share out the total variance)"
                            : a.basis.complete() ? "  (DISAGREE beyond 1e-9: the solve lost accuracy)"
                                                 : "  (only the leading components were computed)")
            << "\n";
  return rel <= 1e-9 || !a.basis.complete() ? 0 : 1;
}

}  // namespace pcasweep::cli
