// pcasweep/pipeline/image_set.hpp — several image files through one layout.
// (The solver's account of itself: present/sweep_tables.hpp; the components
// as pictures: present/component_images.hpp.)
//
// Contract: analyze_image_files reads every file, validates the whole set
// (layout, sizes, observation count, k against min(N, d)) before solving,
// and sets the truncated solver's rank from the k's asked for. Nothing here
// computes numbers of its own: it wires io -> observe -> solve.
#pragma once

#include <string>
#include <vector>

#include "io/image.hpp"
#include "pipeline/image_study.hpp"

namespace pcasweep {

// paths: one image for "patches", two or more for "whole" and "bands".
// ks: the k values the caller will reconstruct at (may be empty). When
// settings.solver.rank is 0 and ks is not empty, the truncated solver's rank
// is max(ks). Returns the analysis. Throws Error(usage) for a wrong file
// count, a k above min(N, d) or above --rank; Error(data) for unreadable or
// mismatched files (naming the odd one out).
ImageAnalysis analyze_image_files(const std::vector<std::string>& paths, const ImageStudySettings& settings,
                                  const std::vector<int>& ks = {});

// Throws Error(usage) unless every k is in 1..min(N, d) and 1..basis.rank();
// the message says which limit was hit and what to do.
void check_ks_against(const std::vector<int>& ks, const ImageAnalysis& analysis);

// Default k list for an analysis: 1, 2, 4, … below the computed rank r, then r
// (r = d for the exact solver, capped at min(N, d)).
std::vector<int> default_ks_for(const ImageAnalysis& analysis);

}  // namespace pcasweep
