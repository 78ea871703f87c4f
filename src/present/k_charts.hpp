// pcasweep/present/k_charts.hpp — the spectrum charts with each rule's k marked.
//
// Contract: builds chart specifications (report/svg.hpp) from a Basis and a
// KChoice (pipeline/k_choice.hpp) and writes them as scree.svg and
// cumulative.svg. Reads numbers, never computes new ones beyond those the
// charts show (the broken-stick expectation, the Gavish–Donoho threshold and
// the cumulative proportions come from measure/choose_k.hpp).
#pragma once

#include <string>

#include "pipeline/k_choice.hpp"
#include "present/output_folder.hpp"
#include "report/svg.hpp"

namespace pcasweep {

// Scree chart: eigenvalue vs component (r points) with each rule's k marked on the curve.
// log_scale: logarithmic y (exact zeros drawn at a floor, said in the note). source: the input's path.
ChartSpec scree_chart(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source);

// Cumulative proportion of variance vs k (0..r), with a line at each keep fraction.
ChartSpec cumulative_chart(const Basis& basis, const KChoice& choice, const std::string& source);

// Writes scree.svg and cumulative.svg into `out`, atomically. Throws Error(data).
void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const OutputFolder& out);

// The same into out_dir, created if missing (OutputFolder). Throws Error(data).
void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const std::string& out_dir);

}  // namespace pcasweep
