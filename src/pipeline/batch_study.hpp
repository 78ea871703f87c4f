// pcasweep/pipeline/batch_study.hpp — a whole batch study as one call: sweep, figures, pictures.
//
// Contract: study_batch() runs the batch (pipeline/batch.hpp), computes its
// figures across files (pipeline/batch_figures.hpp) and, when
// settings.write_report is set and some file was swept, the report's
// pictures (pipeline/batch_visuals.hpp). It writes nothing: the outputs are
// present/batch_outputs.hpp's. Throws what run_batch throws.
#pragma once

#include "pipeline/batch.hpp"
#include "pipeline/batch_figures.hpp"
#include "pipeline/batch_visuals.hpp"

namespace pcasweep {

struct BatchStudy {
  BatchResult result;
  BatchFigures figures;
  BatchVisuals visuals;  // empty without a report
};

// inputs: the files collect_inputs() found; progress as run_batch's.
// Returns the typed study.
BatchStudy study_batch(const CollectedInputs& inputs, const BatchSettings& settings,
                       const BatchProgressFn& progress = {});

}  // namespace pcasweep
