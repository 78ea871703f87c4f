// pcasweep/present/batch_tables.hpp — a batch's typed results as tables and lines of text.
//
// Contract: pure rendering of pipeline/batch.hpp and pipeline/batch_figures.hpp
// values into report/table.hpp Tables (CSV, console, JSON) and sentences; no
// number is computed here beyond rounding for display. Throws nothing.
#pragma once

#include <string>

#include "pipeline/batch.hpp"
#include "pipeline/batch_figures.hpp"
#include "report/table.hpp"

namespace pcasweep {

// batch.csv: one row per swept file and k, a leading `file` column (and
// `subset`, training or held_out, for a shared basis); the other columns
// are the union of the files' sweep_table() columns (pipeline/image_study.hpp),
// in the order they first appear; a column a file lacks is empty.
Table batch_table(const BatchResult& result);

// aggregate.csv: per subset and k: subset, k, files, psnr_db min/p5/median/mean,
// the same for ssim when figures.has_ssim, stored_values_total,
// raw_samples_total, stored_ratio, bytes_total and bits_per_pixel_mean when
// figures.has_bytes, files_meeting_target, share_meeting_target.
Table aggregate_table(const BatchFigures& figures);

// failing_files.csv: rank, file, psnr_db, ssim of the files below the target
// at the recommended k, worst first (no rows when nothing is recommended).
Table failing_table(const BatchFigures& figures);

// failures.csv: file, reason of every input that failed.
Table failures_table(const BatchResult& result);

// file, reason of every input skipped (not an image).
Table skipped_table(const BatchResult& result);

// "PSNR >= 40.0 dB" and, when set, " and SSIM >= 0.950".
std::string target_text(const CoverageTarget& target);

// One line for the console: "5 of 5 file(s) swept (0 failed, 0 skipped) in
// 3.1 s; recommended k = 8: 5 of 5 files (100%) reach PSNR >= 40.0 dB, ...".
std::string batch_summary_line(const BatchResult& result, const BatchFigures& figures, const CoverageTarget& target);

}  // namespace pcasweep
