#include "present/sweep_tables.hpp"

#include <cmath>
#include <sstream>

#include "core/format.hpp"
#include "measure/choose_k.hpp"
#include "present/tool_json.hpp"
#include "solve/blas_runtime.hpp"

namespace pcasweep {

Table spectrum_table(const Basis& basis) {
  Table t;
  t.columns = {"component", "eigenvalue", "proportion", "cumulative"};
  const Eigen::VectorXd p = proportions(basis), c = cumulative_proportions(basis);
  for (Eigen::Index i = 0; i < basis.rank(); ++i) t.add_row({std::int64_t(i + 1), basis.eigenvalues(i), p(i), c(i)});
  return t;
}

Table sweep_table(const std::vector<SweepRow>& rows, const std::vector<std::string>& channel_names) {
  Table t;
  t.columns = {"k", "mse", "rmse", "psnr_db", "ssim", "max_abs_error", "relative_error", "energy_retained",
               "stored_values_estimate", "ratio_estimate", "bytes", "coded_components", "bits_per_pixel",
               "compression_ratio", "ratio_to_png"};
  const bool per_channel = channel_names.size() > 1;
  if (per_channel)
    for (const auto& name : channel_names) t.columns.push_back("psnr_db_" + name);
  for (const auto& r : rows) {
    std::vector<Cell> cells = {std::int64_t(r.k), r.quality.mse, r.quality.rmse, r.quality.psnr_db, r.ssim,
                               r.quality.max_abs_error, r.quality.relative_error, r.energy_retained,
                               r.stored_values, r.ratio};
    if (r.bytes >= 0) {
      cells.insert(cells.end(), {Cell{r.bytes}, Cell{std::int64_t(r.coded_components)}, Cell{r.bits_per_pixel},
                                 Cell{r.compression_ratio}, Cell{r.ratio_to_png}});
    } else {
      cells.insert(cells.end(), 5, Cell{});
    }
    if (per_channel)
      for (double v : r.quality.channel_psnr_db) cells.push_back(v);
    t.add_row(std::move(cells));
  }
  return t;
}

nlohmann::json sweep_summary(const ImageAnalysis& a, const std::vector<SweepRow>& rows,
                             const nlohmann::json& settings) {
  nlohmann::json j;
  j["tool"] = tool_json();
  const Image& first = a.image();
  j["input"] = {{"files", a.inputs},
                {"width", first.width},
                {"height", first.height},
                {"channels", first.channels},
                {"channel_names", first.channel_names},
                {"bit_depth", first.bit_depth},
                {"alpha", a.alpha_dropped ? "dropped (--drop-alpha)"
                                          : (first.channels == 2 || first.channels == 4 ? "kept as a channel"
                                                                                       : "none")}};
  j["settings"] = settings;
  j["layout"] = {{"name", a.layout->name()},
                 {"description", a.layout->describe()},
                 {"observations", a.observations()},
                 {"dimension", a.dimension()}};
  const Eigen::VectorXd ev = a.basis.eigenvalues;
  j["solver"] = solver_json(a.basis, a.solve_report);
  j["spectrum"] = {{"total_variance", a.basis.total_variance},
                   {"sum_of_eigenvalues", ev.sum()},
                   {"rows", to_json(spectrum_table(a.basis))}};
  j["sweep"] = to_json(sweep_table(rows, first.channel_names));
  j["size_estimate_note"] =
      "stored_values = k*d + N*k + d counts numbers kept (basis, coefficients, mean), not bytes; "
      "ratio = stored_values / raw samples. It is an estimate, not the size of a file.";
  return j;
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
  j["tool"] = tool_json();
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

namespace {
nlohmann::json finite_or_null(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); }
}  // namespace

nlohmann::json solver_json(const Basis& b, const SolveReport& r) {
  nlohmann::json j = {{"name", r.solver},
                      {"reason", r.reason},
                      {"rank", b.rank()},
                      {"variance_beyond_rank", variance_beyond_rank(b)},
                      {"proportion_beyond_rank",
                       b.total_variance > 0 ? variance_beyond_rank(b) / b.total_variance : 0.0}};
  if (r.solver == "randomized") {
    j["sample_size"] = r.sample_size;
    j["oversample"] = r.oversample;
    j["scheme"] = r.scheme;
    j["passes"] = r.passes;
    if (r.scheme == "block Krylov") j["krylov_width"] = r.krylov_width;
    else j["power_iterations"] = (r.passes - 2) / 2;
    j["seed"] = r.seed;
    j["precision"] = r.precision;
    j["converged"] = r.converged;
    j["last_relative_change"] = finite_or_null(r.last_relative_change);
    j["subspace_residual"] = r.subspace_residual;
    j["subspace_residual_at_rounding_floor"] = r.subspace_residual <= r.residual_floor;
    j["residual_rounding_floor"] = r.residual_floor;
    j["optimality_gap_estimate"] = finite_or_null(r.optimality_gap_estimate);
    j["notes"] =
        "subspace_residual: variance (sample units^2, /(N-1)) outside the sampled subspace of sample_size "
        "vectors, exact up to rounding: trace - sum of its captured eigenvalues, clamped at the rounding floor. "
        "optimality_gap_estimate: estimated relative excess of the rank-r Frobenius error over the optimal "
        "rank-r error (0 = optimal), extrapolated from the last passes; null when it cannot be estimated. "
        "last_relative_change: largest move of a leading eigenvalue at the last step, relative to it.";
  }
  j["blas"] = blas_json(blas_info());  // which kernels ran the products (solve/blas_runtime.hpp)
  return j;
}

std::string solver_lines(const Basis& b, const SolveReport& r) {
  std::ostringstream o;
  o << "solver: " << r.solver << " (" << r.reason << "); " << b.rank() << " of " << b.dimension()
    << " components computed\n";
  o << blas_line(blas_info());
  if (r.solver == "randomized") {
    o << "randomized, " << r.scheme << ": " << r.sample_size << " test vectors (" << r.oversample
      << " oversampling), " << r.passes << " products with the data ("
      << (r.scheme == "block Krylov" ? "Krylov space of " + std::to_string(r.krylov_width) + " vectors"
                                     : std::to_string((r.passes - 2) / 2) + " power iterations")
      << "), seed " << r.seed << ", " << r.precision << "-precision products, " << (r.converged ? "converged" : "stopped at the pass cap before converging")
      << " (last move " << format_real(r.last_relative_change, 2) << " of an eigenvalue)\n";
    o << "variance outside the sampled subspace = "
      << (r.subspace_residual <= r.residual_floor ? "<= " + format_real(r.residual_floor, 3) + " (rounding floor)"
                                                  : format_real(r.subspace_residual, 6))
      << "; rank-" << b.rank() << " error above optimal: "
      << (std::isfinite(r.optimality_gap_estimate) ? "about " + format_real(100.0 * r.optimality_gap_estimate, 2) + " %"
                                                   : std::string("unknown (too few passes to estimate)"))
      << "\n";
  }
  if (!b.complete()) {
    const double beyond = variance_beyond_rank(b);
    o << "variance beyond the computed rank " << b.rank() << " = " << format_real(beyond, 6) << " ("
      << format_real(b.total_variance > 0 ? 100.0 * beyond / b.total_variance : 0.0, 4)
      << " % of the total; proportions use the exact trace)\n";
  }
  return o.str();
}

}  // namespace pcasweep
