#include "present/signal_outputs.hpp"

#include <algorithm>
#include <cmath>

#include "core/error.hpp"
#include "core/format.hpp"
#include "pipeline/image_study.hpp"  // check_ks, output_stem
#include "present/sweep_tables.hpp"
#include "report/excerpt_plot.hpp"

namespace pcasweep {

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

void SignalFolderRecordings::open(const SignalAnalysis& a) {
  analysis_ = &a;
  folder_.emplace(dir_);
  length_ = std::min<Eigen::Index>(a.signal.frames(), std::clamp<Eigen::Index>(4 * a.layout->options().window, 1000, 4000));
  start_ = excerpt_start(a.signal, length_);
}

const OutputFolder& SignalFolderRecordings::folder() const {
  if (!folder_) throw usage_error("internal: the sweep's output folder is used before open()");
  return *folder_;
}

void SignalFolderRecordings::recording(const SignalSweepRow& row, const Eigen::MatrixXd& stored) {
  const SignalAnalysis& a = *analysis_;
  const std::string name = output_stem(a.input) + ".k" + std::to_string(row.k);
  write_signal(folder().path(name + signal_extension(a.signal, a.input)), stored, a.signal);
  folder().write(name + ".excerpt.svg", render_excerpt_svg(excerpt_plot(a, row, stored, start_, length_)));
}

void write_signal_sweep_tables(const SignalAnalysis& a, const std::vector<SignalSweepRow>& rows,
                               const nlohmann::json& settings, const OutputFolder& out) {
  out.write("spectrum.csv", render_csv(spectrum_table(a.basis)));
  out.write("sweep.csv", render_csv(signal_sweep_table(rows, a.signal.channel_names)));
  out.write("summary.json", signal_sweep_summary(a, rows, settings).dump(2) + "\n");
}

std::vector<SignalSweepRow> write_signal_sweep(const SignalAnalysis& a, const std::vector<int>& ks,
                                               const std::string& out_dir, const nlohmann::json& settings) {
  check_ks(ks, a.basis.rank());
  SignalFolderRecordings recordings(out_dir);
  recordings.open(a);
  const auto rows = sweep_signal_ks(a, ks, [&](const SignalSweepRow& row, const Eigen::MatrixXd& stored) {
    recordings.recording(row, stored);
  });
  write_signal_sweep_tables(a, rows, settings, recordings.folder());
  return rows;
}

}  // namespace pcasweep
