#include "pipeline/batch_study.hpp"

namespace pcasweep {

BatchStudy study_batch(const CollectedInputs& inputs, const BatchSettings& settings, const BatchProgressFn& progress) {
  BatchStudy study;
  study.result = run_batch(inputs, settings, progress);
  study.figures = batch_figures(study.result, settings.target);
  if (settings.write_report && !swept_files(study.result).empty())
    study.visuals = prepare_batch_visuals(study.result, study.figures, settings);
  return study;
}

}  // namespace pcasweep
