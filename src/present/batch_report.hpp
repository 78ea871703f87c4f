// pcasweep/present/batch_report.hpp — report.html of a batch, from its typed results.
//
// Contract: batch_report() lays out a finished BatchStudy
// (pipeline/batch_study.hpp) as a report/html.hpp HtmlReport: the settings,
// the recommendation with the failing files, the spectrum of the first
// sampled file's basis (or the shared one), quality and size against k
// (SVG charts, report/svg.hpp), failures and skipped inputs, the sampled
// files' previews and 1:1 crops, the live viewers and the first components.
// The pictures come from study.visuals (pipeline/batch_visuals.hpp): nothing
// is read or solved here. Throws nothing of its own.
#pragma once

#include "pipeline/batch_study.hpp"
#include "report/html.hpp"

namespace pcasweep {

// study: a finished batch with its visuals; settings: those it ran with.
// Returns the report, ready for render_report_html().
HtmlReport batch_report(const BatchStudy& study, const BatchSettings& settings);

}  // namespace pcasweep
