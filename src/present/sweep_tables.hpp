// pcasweep/present/sweep_tables.hpp — a sweep's typed results as tables, JSON and console lines.
//
// Contract: lays out what pipeline/ computed (Basis, SolveReport, SweepRow,
// SignalSweepRow) without computing anything beyond the ratios the columns
// name: spectrum and sweep tables (report/table.hpp renders them as CSV,
// console or JSON), the summaries written as summary.json, and the solver's
// account of itself for summary.json and the console. Throws nothing of its own.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "pipeline/image_study.hpp"
#include "pipeline/signal_study.hpp"
#include "report/table.hpp"

namespace pcasweep {

// Columns component, eigenvalue, proportion, cumulative; one row per computed component (r rows).
Table spectrum_table(const Basis& basis);

// Columns k, mse, rmse, psnr_db, ssim, max_abs_error, relative_error, energy_retained,
// stored_values_estimate, ratio_estimate (numbers kept, not bytes), bytes, coded_components,
// bits_per_pixel, compression_ratio, ratio_to_png (empty when the sweep did not encode),
// then psnr_db_<channel> for images with more than one channel. One row per SweepRow.
Table sweep_table(const std::vector<SweepRow>& rows, const std::vector<std::string>& channel_names);

// Everything about one image sweep, with the settings used (summary.json without its extra keys).
nlohmann::json sweep_summary(const ImageAnalysis& analysis, const std::vector<SweepRow>& rows,
                             const nlohmann::json& settings);

// Columns k, rmse, snr_db, prd_percent, prd_mean_removed_percent,
// max_abs_error, energy_retained, stored_values, ratio, clipped_samples, then
// for recordings of more than one channel (when `per_channel`) each of the
// five figures per channel: rmse_<ch>, snr_db_<ch>, prd_percent_<ch>,
// prd_mean_removed_percent_<ch>, max_abs_error_<ch>.
Table signal_sweep_table(const std::vector<SignalSweepRow>& rows, const std::vector<std::string>& channel_names,
                         bool per_channel = true);

// Everything about one recording's sweep, with the settings used (its summary.json).
nlohmann::json signal_sweep_summary(const SignalAnalysis& analysis, const std::vector<SignalSweepRow>& rows,
                                    const nlohmann::json& settings);

// The solver's figures as JSON: name, reason, rank, and for the randomized
// solver sample size, oversampling, passes, seed, convergence, the captured
// subspace residual (with its rounding floor) and the estimated distance from
// optimal; variance_beyond_rank for every solver. basis: what `report` describes.
nlohmann::json solver_json(const Basis& basis, const SolveReport& report);

// The same as console lines (each ending in "\n").
std::string solver_lines(const Basis& basis, const SolveReport& report);

}  // namespace pcasweep
