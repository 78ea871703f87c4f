// pcasweep/present/batch_outputs.hpp — every file a batch study writes.
//
// Contract: write_batch_outputs() renders a finished BatchStudy
// (pipeline/batch_study.hpp) into `out_dir` through an OutputFolder
// (present/output_folder.hpp: created if missing, each file written
// atomically): batch.csv, aggregate.csv, failing_files.csv, failures.csv
// (present/batch_tables.hpp), report.html when settings.write_report and a
// file was swept (present/batch_report.hpp), and summary.json (schema:
// docs/batch.md). It reads and solves nothing.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "pipeline/batch_study.hpp"

namespace pcasweep {

// study: a finished batch; settings: those it ran with. Returns summary.json's content.
nlohmann::json batch_summary_json(const BatchStudy& study, const BatchSettings& settings);

// Writes the files above into out_dir. Returns the summary JSON written.
// Throws Error(data) when the folder or a file cannot be written.
nlohmann::json write_batch_outputs(const BatchStudy& study, const BatchSettings& settings, const std::string& out_dir);

}  // namespace pcasweep
