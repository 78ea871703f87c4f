// pcasweep/measure/choose_k.hpp — published rules for how many components to keep.
//
// Contract: every rule reads only the spectrum in a Basis (eigenvalues of the
// sample covariance, r of them, decreasing; total_variance, the exact trace;
// dimension d; observation count N) and returns a KSuggestion: the k it
// suggests and one line saying what that k means. When a truncated solver
// computed only r < d eigenvalues, a rule either still answers exactly (it
// needs only the trace: variance, Kaiser–Guttman, broken-stick), answers
// "at least r" (lower_bound), or says it needs the full spectrum (k = -1)
// — never a guess presented as an answer.
//   keep-variance  smallest k with cumulative proportion ≥ f
//   Kneedle        Satopää, Albrecht, Irwin & Raghavan (2011), offline form:
//                  elbow of eigenvalue vs component number
//   Kaiser–Guttman eigenvalues above the mean eigenvalue (trace / d)
//   broken-stick   Frontier (1976), Jackson (1993): leading components whose
//                  proportion exceeds b_k = (1/p)·Σ_{i=k..p} 1/i
//   Gavish–Donoho  optimal hard threshold for unknown noise (IEEE Trans. Inf.
//                  Theory 60(8), 2014): σ_i > ω(β)·median σ
// The quality-target rule needs reconstructions, so it lives in pipeline/;
// this file gives it the Eckart–Young figure it brackets with.
#pragma once

#include <Eigen/Dense>
#include <string>
#include <vector>

#include "solve/basis.hpp"

namespace pcasweep {

struct KSuggestion {
  std::string rule;           // identifier for JSON: "variance_95", "kneedle", "kaiser_guttman", ...
  std::string label;          // short name for people: "95% variance", "Kneedle elbow", ...
  int k = -1;                 // suggested number of components; -1 when the rule cannot answer
  bool lower_bound = false;   // true: the answer is "at least k" (more than the computed r would be needed)
  std::string meaning;        // one line: what keeping k components means under this rule
  std::string note;           // caveat or reason for k = -1 (empty if none)
};

// --- the rules -------------------------------------------------------------

// fraction in (0, 1]: smallest k with cumulative proportion ≥ fraction.
// Exact with r < d (proportions use the exact trace); lower_bound if not reached within r.
KSuggestion rule_keep_variance(const Basis& basis, double fraction);

// Kneedle elbow of `values` (decreasing, size r) against 1..r.
// Normalises both axes to [0, 1]; for a decreasing convex scree the
// difference curve is D_i = (1 − ŷ_i) − x̂_i, the height of the curve below
// the chord from the first to the last point; the elbow is argmax D.
// Returns the 1-based component number of the elbow, or 0 when there is none
// (fewer than 3 values, a flat curve, or max D ≤ 0: straight or concave).
int kneedle_elbow(const Eigen::VectorXd& values);
KSuggestion rule_kneedle(const Basis& basis);

// Kaiser–Guttman: count of eigenvalues above trace/d (for covariance PCA).
KSuggestion rule_kaiser_guttman(const Basis& basis);

// Broken-stick expectations b_1..b_p, b_k = (1/p)·Σ_{i=k..p} 1/i. Size p.
std::vector<double> broken_stick_expectations(int p);
// Leading components while proportion_k > b_k (p = d), stopping at the first failure.
KSuggestion rule_broken_stick(const Basis& basis);

// Gavish–Donoho approximation ω(β) ≈ 0.56β³ − 0.95β² + 1.82β + 1.43, β in (0, 1].
double gavish_donoho_omega(double beta);
// The rule on a basis: σ_i = √((N−1)·λ_i). Needs the median singular value,
// so it answers with r < d only when r covers the middle of the spectrum.
KSuggestion rule_gavish_donoho(const Basis& basis);
// The Gavish–Donoho threshold expressed as an eigenvalue, (ω(β)·median σ)²/(N−1),
// for drawing on a scree; NaN when the rule cannot answer.
double gavish_donoho_threshold_eigenvalue(const Basis& basis);

// All spectrum rules in display order: one keep-variance rule per fraction
// (e.g. {0.90, 0.95, 0.99, 0.999}), Kneedle, Kaiser–Guttman, broken-stick, Gavish–Donoho.
std::vector<KSuggestion> spectrum_rules(const Basis& basis, const std::vector<double>& keep_fractions);

// Parses "90,95,99,99.9" (percent) into fractions {0.9, ...}. Throws Error(usage)
// unless each value is a number in (0, 100].
std::vector<double> parse_percent_list(const std::string& text, const std::string& option);

// One paragraph in plain words: which rules agree (same k), where they
// disagree (the spread, lowest and highest), and which could not answer.
std::string rules_agreement(const std::vector<KSuggestion>& rules);

// Eckart–Young: mean squared error per entry of X (N×d) of the unrounded
// rank-k reconstruction, (N−1)·Σ_{i>k} λ_i / (N·d), with Σ_{i>k} λ_i taken as
// trace − Σ_{i≤k} λ_i (exact even for r < d). k in [0, r].
double eckart_young_mse(const Basis& basis, int k);

}  // namespace pcasweep
