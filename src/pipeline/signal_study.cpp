#include "pipeline/signal_study.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "measure/choose_k.hpp"
#include "pipeline/image_study.hpp"  // check_ks, spectrum_table, output_stem
#include "reconstruct/reconstruct.hpp"
#include "report/excerpt_plot.hpp"

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

Table signal_sweep_table(const std::vector<SignalSweepRow>& rows, const std::vector<std::string>& channel_names,
                         bool per_channel) {
  Table t;
  t.columns = {"k",   "rmse",          "snr_db",          "prd_percent",   "prd_mean_removed_percent",
               "max_abs_error", "energy_retained", "stored_values", "ratio", "clipped_samples"};
  per_channel = per_channel && channel_names.size() > 1;
  if (per_channel)
    for (const auto& name : channel_names)
      for (const char* figure : {"rmse_", "snr_db_", "prd_percent_", "prd_mean_removed_percent_", "max_abs_error_"})
        t.columns.push_back(figure + name);
  for (const auto& r : rows) {
    const auto& o = r.quality.overall;
    std::vector<Cell> cells = {std::int64_t(r.k), o.rmse,        o.snr_db,          o.prd_percent,
                               o.prd_mean_removed_percent,   o.max_abs_error, r.energy_retained,
                               r.stored_values,              r.ratio,         std::int64_t(r.clipped_samples)};
    if (per_channel)
      for (const auto& c : r.quality.channel)
        for (double v : {c.rmse, c.snr_db, c.prd_percent, c.prd_mean_removed_percent, c.max_abs_error})
          cells.push_back(v);
    t.add_row(std::move(cells));
  }
  return t;
}

nlohmann::json signal_sweep_summary(const SignalAnalysis& a, const std::vector<SignalSweepRow>& rows,
                                    const nlohmann::json& settings) {
  nlohmann::json j;
  j["tool"] = {{"name", "pcasweep"}, {"version", PCASWEEP_VERSION}};
  const Signal& s = a.signal;
  j["input"] = {{"files", {a.input}},
                {"kind", "signal"},
                {"format", describe_format(s)},
                {"sample_type", describe_sample_type(s.sample_type)},
                {"sample_rate_hz", s.sample_rate},
                {"sample_rate_given", s.sample_rate_given},
                {"frames", s.frames()},
                {"channels", s.channels()},
                {"channel_names", s.channel_names},
                {"duration_seconds", s.duration_seconds()}};
  j["settings"] = settings;
  const WindowLayout& l = *a.layout;
  j["layout"] = {{"name", l.name()},
                 {"description", l.describe()},
                 {"window", l.options().window},
                 {"hop", l.options().hop},
                 {"taper", l.options().taper == Taper::rectangular ? "rectangular" : "sqrt-hann"},
                 {"channels", l.options().channels == ChannelMode::joint ? "joint" : "separate"},
                 {"windows", l.windows()},
                 {"padding", "mirror reflection, cropped after folding"},
                 {"front_padding_frames", l.front_padding()},
                 {"back_padding_frames", l.back_padding()},
                 {"observations", a.X.rows()},
                 {"dimension", a.X.cols()}};
  j["solver"] = {{"name", a.solve_report.solver}, {"reason", a.solve_report.reason}};
  j["spectrum"] = {{"total_variance", a.basis.total_variance},
                   {"sum_of_eigenvalues", a.basis.eigenvalues.sum()},
                   {"rows", to_json(spectrum_table(a.basis))}};
  j["sweep"] = to_json(signal_sweep_table(rows, s.channel_names));
  // The spectrum rules for k (measure/choose_k.hpp), as for images.
  const auto rules = spectrum_rules(a.basis, {0.90, 0.95, 0.99, 0.999});
  nlohmann::json rule_rows = nlohmann::json::array();
  for (const auto& r : rules)
    rule_rows.push_back({{"rule", r.rule}, {"label", r.label}, {"k", r.k}, {"lower_bound", r.lower_bound},
                         {"meaning", r.meaning}, {"note", r.note}});
  j["k_rules"] = {{"rules", rule_rows}, {"agreement", rules_agreement(rules)}};
  j["metric_definitions"] = {
      {"snr_db", "10*log10(sum x^2 / sum (x - xhat)^2)"},
      {"prd_percent", "plain PRD: 100*sqrt(sum (x - xhat)^2 / sum x^2)"},
      {"prd_mean_removed_percent", "mean-removed PRD: 100*sqrt(sum (x - xhat)^2 / sum (x - mean x)^2)"},
      {"computed_on", "the stored values: rounded and clipped to the input's sample type"}};
  j["size_estimate_note"] =
      "stored_values = k*d + N*k + d counts numbers kept (basis, coefficients, mean), not bytes; "
      "ratio = stored_values / (frames*channels). It is an estimate, not the size of a file.";
  return j;
}

Eigen::Index excerpt_start(const Signal& signal, Eigen::Index length) {
  const Eigen::Index frames = signal.frames();
  length = std::clamp<Eigen::Index>(length, 1, frames);
  Eigen::Index peak = 0;
  double best = -1.0;
  for (int c = 0; c < signal.channels(); ++c) {
    const auto col = signal.samples.col(c);
    const double mean = col.mean();
    const double sd = std::sqrt((col.array() - mean).square().sum() / double(frames));
    if (!(sd > 0.0)) continue;
    for (Eigen::Index t = 0; t < frames; ++t) {
      const double z = std::abs(col(t) - mean) / sd;
      if (z > best) {
        best = z;
        peak = t;
      }
    }
  }
  return std::clamp<Eigen::Index>(peak - length / 2, 0, frames - length);
}

namespace {

ExcerptPlot excerpt_plot(const SignalAnalysis& a, const SignalSweepRow& row, const Eigen::MatrixXd& stored,
                         Eigen::Index start, Eigen::Index length) {
  const Signal& s = a.signal;
  ExcerptPlot p;
  p.title = output_stem(a.input) + ": k = " + std::to_string(row.k) + " of " + std::to_string(a.X.cols()) +
            " components";
  p.subtitle = a.layout->describe() + "; excerpt around the largest excursion\nSNR " + format_real(row.quality.overall.snr_db, 4) + " dB, PRD " +
               format_real(row.quality.overall.prd_percent, 4) + " %, mean-removed PRD " +
               format_real(row.quality.overall.prd_mean_removed_percent, 4) + " %, max |error| " +
               format_real(row.quality.overall.max_abs_error, 6) + "; energy retained " +
               format_real(row.energy_retained, 6);
  p.x_label = s.sample_rate_given ? "time (s)" : "frame";
  p.y_label = "sample value (" + describe_sample_type(s.sample_type) + ")";
  for (Eigen::Index t = start; t < start + length; ++t)
    p.x.push_back(s.sample_rate_given ? double(t) / s.sample_rate : double(t));
  for (int c = 0; c < s.channels(); ++c) {
    ExcerptChannel ch;
    ch.name = c < int(s.channel_names.size()) ? s.channel_names[c] : "ch" + std::to_string(c + 1);
    for (Eigen::Index t = start; t < start + length; ++t) {
      ch.original.push_back(s.samples(t, c));
      ch.reconstruction.push_back(stored(t, c));
      ch.residual.push_back(s.samples(t, c) - stored(t, c));
    }
    p.channels.push_back(std::move(ch));
  }
  return p;
}

}  // namespace

std::vector<SignalSweepRow> write_signal_sweep(const SignalAnalysis& a, const std::vector<int>& ks,
                                               const std::string& out_dir, const nlohmann::json& settings) {
  check_ks(ks, a.basis.rank());
  std::error_code ec;
  std::filesystem::create_directories(out_dir, ec);
  if (ec) throw data_error(out_dir + ": cannot create output folder: " + ec.message());
  const auto path_in = [&](const std::string& name) { return (std::filesystem::path(out_dir) / name).string(); };
  const std::string stem = output_stem(a.input);
  const std::string ext = signal_extension(a.signal, a.input);
  // A short stretch for the plots: 4 windows, but at least 1000 and at most 4000 frames.
  const Eigen::Index length =
      std::min<Eigen::Index>(a.signal.frames(), std::clamp<Eigen::Index>(4 * a.layout->options().window, 1000, 4000));
  const Eigen::Index start = excerpt_start(a.signal, length);
  auto rows = sweep_signal_ks(a, ks, [&](const SignalSweepRow& row, const Eigen::MatrixXd& stored) {
    const std::string name = stem + ".k" + std::to_string(row.k);
    write_signal(path_in(name + ext), stored, a.signal);
    write_file_atomic(path_in(name + ".excerpt.svg"),
                      render_excerpt_svg(excerpt_plot(a, row, stored, start, length)));
  });
  write_file_atomic(path_in("spectrum.csv"), render_csv(spectrum_table(a.basis)));
  write_file_atomic(path_in("sweep.csv"), render_csv(signal_sweep_table(rows, a.signal.channel_names)));
  write_file_atomic(path_in("summary.json"), signal_sweep_summary(a, rows, settings).dump(2) + "\n");
  return rows;
}

bool is_signal_input(const std::string& path, const std::string& layout) {
  return layout == "windows" || ((layout.empty() || layout == "auto") && has_signal_extension(path));
}

}  // namespace pcasweep
