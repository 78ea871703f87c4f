// pcasweep/measure/near_zero.hpp — what very small eigenvalues say about the data.
//
// Contract: reads a Basis (eigenvalues, components d×r, variable variances,
// N) and the names of its d variables; computes nothing from files.
//   exact zero      eigenvalue < 1e-12 × the largest: some fixed linear
//                   combination of the variables never varies.
//   below the floor eigenvalue < the quantisation noise floor, 1/12 in
//                   sample units² for integer samples (the variance of a
//                   uniform rounding error): indistinguishable from rounding.
// It names the variables behind exact zeros three ways: variables that never
// change (constant), groups that are exact copies of one another up to scale
// and offset (|correlation| = 1 within 1e-9; needs the complete spectrum),
// and the variables carrying weight in the zero components' span (Σ over zero
// components of the squared loading > 0.01). Findings are plain sentences.
// With N − 1 < d at least d − N + 1 eigenvalues are zero for any data: the
// report says so instead of blaming the variables.
#pragma once

#include <string>
#include <vector>

#include "solve/basis.hpp"

namespace pcasweep {

struct NearZeroReport {
  double largest_eigenvalue = 0.0;
  double zero_threshold = 0.0;           // 1e-12 × largest
  double noise_floor = 0.0;              // 1/12 for integer samples, 0 otherwise
  std::vector<int> exact_zero;           // 1-based component numbers
  std::vector<int> below_floor;          // 1-based, below the floor but not exact zeros
  int forced_zeros = 0;                  // max(0, d − (N − 1)): zeros any N×d data would have
  std::vector<std::string> constant_variables;            // names
  std::vector<std::vector<std::string>> copy_groups;      // each: names that copy one another
  std::vector<std::string> involved_variables;            // names with weight in the zero span
  std::vector<std::string> findings;     // plain-words sentences, most important first
  // True when the data themselves show exact redundancy (zeros not forced by N ≤ d).
  bool redundancy_found() const { return int(exact_zero.size()) > forced_zeros; }
};

// basis: d variables, r components (r < d: only the computed ones are checked,
// and the report says so). names: d variable names ("r0c0:red", ...).
// integer_samples: true for images and integer PCM (sets the 1/12 floor).
NearZeroReport diagnose_near_zero(const Basis& basis, const std::vector<std::string>& names,
                                  bool integer_samples);

}  // namespace pcasweep
