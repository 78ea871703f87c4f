// pcasweep/pipeline/image_set.hpp — several image files through one layout,
// the solver's account of itself, and the components as pictures.
//
// Contract: analyze_image_files reads every file, validates the whole set
// (layout, sizes, observation count, k against min(N, d)) before solving,
// and sets the truncated solver's rank from the k's asked for. Nothing here
// computes numbers of its own: it wires io -> observe -> solve and lays the
// basis's figures out for the console and summary.json.
#pragma once

#include <nlohmann/json.hpp>
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

// The solver's figures as JSON: name, reason, rank, and for the randomized
// solver sample size, oversampling, passes, seed, convergence, the captured
// subspace residual (with its rounding floor) and the estimated distance from
// optimal; variance_beyond_rank for every solver.
nlohmann::json solver_json(const Basis& basis);

// The same as console lines (each ending in "\n").
std::string solver_lines(const Basis& basis);

// Leading components (at most `limit`) of a basis whose layout observations
// are images (layout.observation_shape() non-empty), each scaled
// symmetrically around zero: sample = round(mid + (mid − ½)·v / max|v|),
// mid = 127.5, so mid-gray is 0 and the largest |entry| reaches 0 or 255
// (8-bit). Alpha channels are dropped (2 -> 1, 4 -> 3 channels). Each image
// is enlarged `scale`× by nearest neighbour. Returns an empty vector when the
// observations are not images.
std::vector<Image> component_images(const Basis& basis, const Layout& layout, int limit, int scale);

// Writes component_images() as <out_dir>/components/component_<i>.png
// (i from 1, zero-padded to 2 digits), enlarged by the smallest whole factor
// that makes the longer side at least 64 pixels, at most 8× (8×8 patches:
// 8×, 25×25 faces: 3×, large pictures: 1×). Returns the number written
// (0 for layouts whose observations are not images, such as bands).
int write_component_images(const ImageAnalysis& analysis, const std::string& out_dir, int limit = 16);

}  // namespace pcasweep
