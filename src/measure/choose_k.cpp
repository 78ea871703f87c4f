#include "measure/choose_k.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <limits>
#include <map>
#include <sstream>

#include "core/format.hpp"
#include "core/error.hpp"

namespace pcasweep {

namespace {

std::string fmt(double v, int digits = 3) { return format_real(v, digits); }

std::string percent_text(double fraction) { return format_percent(fraction, 4); }

// Only the randomized solver returns r < d eigenvalues (the exact one gives all d).
std::string truncated_note(const Basis& b) {
  return "only " + std::to_string(b.rank()) + " of " + std::to_string(b.dimension()) +
         " eigenvalues were computed (randomized solver)";
}

}  // namespace

KSuggestion rule_keep_variance(const Basis& basis, double fraction) {
  KSuggestion s;
  const std::string pct = percent_text(fraction);
  s.rule = "variance_" + fmt(fraction * 100.0, 6);
  s.label = pct + " variance";
  const Eigen::VectorXd c = cumulative_proportions(basis);
  // Round-off guard: a cumulative proportion within 1e-12 of the goal counts as reaching it.
  for (Eigen::Index i = 0; i < c.size(); ++i) {
    if (c(i) >= fraction - 1e-12) {
      s.k = int(i + 1);
      s.meaning = "the first " + std::to_string(s.k) + " components hold " + percent_text(c(i)) +
                  " of the variance (goal " + pct + ")";
      return s;
    }
  }
  if (!basis.complete() && basis.rank() > 0) {
    s.k = int(basis.rank());
    s.lower_bound = true;
    s.meaning = "more than the " + std::to_string(basis.rank()) + " computed components: they hold only " +
                percent_text(c(c.size() - 1)) + " of the variance (goal " + pct + ")";
    s.note = truncated_note(basis) + "; compute more to locate it";
    return s;
  }
  s.note = "no variance to share out (constant data)";
  s.meaning = "the data have no variance";
  return s;
}

int kneedle_elbow(const Eigen::VectorXd& values) {
  const Eigen::Index r = values.size();
  if (r < 3) return 0;
  const double hi = values.maxCoeff(), lo = values.minCoeff();
  if (!(hi > lo)) return 0;
  // Offline Kneedle (Satopää et al. 2011): scale x = 1..r and y to the unit
  // square; a scree is decreasing and convex, so the knee is where the curve
  // lies farthest below the chord from (0, 1) to (1, 0): D = (1 − ŷ) − x̂.
  // (This is the paper's difference curve after flipping the decreasing
  // convex shape into the increasing concave one it is defined for.)
  int best = 0;
  double best_d = 0.0;
  for (Eigen::Index i = 0; i < r; ++i) {
    const double x = double(i) / double(r - 1);
    const double y = (values(i) - lo) / (hi - lo);
    const double d = (1.0 - y) - x;
    if (d > best_d + 1e-15) {
      best_d = d;
      best = int(i + 1);
    }
  }
  return best;
}

KSuggestion rule_kneedle(const Basis& basis) {
  KSuggestion s;
  s.rule = "kneedle";
  s.label = "Kneedle elbow";
  const int k = kneedle_elbow(basis.eigenvalues);
  if (k == 0) {
    s.meaning = "no elbow: the scree is too short, flat, straight or concave";
    s.note = "Kneedle needs at least 3 components and a convex drop";
    return s;
  }
  s.k = k;
  s.meaning = "the scree bends most sharply at component " + std::to_string(k) +
              ": after it each component adds little";
  if (!basis.complete()) s.note = "elbow of the " + std::to_string(basis.rank()) + " computed eigenvalues; " +
                                  truncated_note(basis) + ", and the full scree could bend elsewhere";
  return s;
}

KSuggestion rule_kaiser_guttman(const Basis& basis) {
  KSuggestion s;
  s.rule = "kaiser_guttman";
  s.label = "Kaiser-Guttman";
  const double d = double(basis.dimension());
  const double mean = d > 0 ? basis.total_variance / d : 0.0;
  int k = 0;
  for (Eigen::Index i = 0; i < basis.rank(); ++i)
    if (basis.eigenvalues(i) > mean) ++k;
  s.k = k;
  s.meaning = std::to_string(k) + " components carry more than an average variable's variance (" + fmt(mean, 4) +
              ")";
  if (!basis.complete() && k == basis.rank()) {
    s.lower_bound = true;
    s.note = truncated_note(basis) + " and all of them exceed the mean: the rule keeps at least that many";
  }
  if (k == 0) s.meaning = "no component beats the mean eigenvalue (constant data)";
  return s;
}

std::vector<double> broken_stick_expectations(int p) {
  std::vector<double> b(std::size_t(std::max(p, 0)), 0.0);
  double tail = 0.0;
  for (int k = p; k >= 1; --k) {
    tail += 1.0 / double(k);
    b[std::size_t(k - 1)] = tail / double(p);
  }
  return b;
}

KSuggestion rule_broken_stick(const Basis& basis) {
  KSuggestion s;
  s.rule = "broken_stick";
  s.label = "broken-stick";
  const std::vector<double> b = broken_stick_expectations(int(basis.dimension()));
  const Eigen::VectorXd p = proportions(basis);
  int k = 0;
  while (k < p.size() && p(k) > b[std::size_t(k)]) ++k;
  s.k = k;
  if (k == 0) {
    s.meaning = "even the first component is no larger than a stick broken at random would give (" +
                percent_text(b.empty() ? 0.0 : b[0]) + ")";
  } else {
    s.meaning = "the first " + std::to_string(k) +
                " components each hold more than a randomly broken stick's piece of the same rank";
  }
  if (!basis.complete() && k == basis.rank()) {
    s.lower_bound = true;
    s.note = truncated_note(basis) + " and all of them beat the stick: at least that many";
  }
  return s;
}

double gavish_donoho_omega(double beta) {
  return 0.56 * beta * beta * beta - 0.95 * beta * beta + 1.82 * beta + 1.43;
}

namespace {

// σ_i = √((N−1)·λ_i), the i-th singular value of the centred N×d data, for
// i < min(N, d). The centred matrix has rank ≤ N − 1, so σ_i = 0 for i ≥ N − 1
// even when the solver stopped at r; NaN where it is unknown (r ≤ i < N − 1).
double centred_singular_value(const Basis& basis, Eigen::Index i) {
  if (i < basis.rank()) return std::sqrt(double(basis.observation_count - 1) * std::max(0.0, basis.eigenvalues(i)));
  return i >= basis.observation_count - 1 ? 0.0 : std::numeric_limits<double>::quiet_NaN();
}

// The noise threshold of Gavish & Donoho for an unknown noise level:
// τ = ω(β)·median σ, β = min(N, d)/max(N, d). median is NaN when the middle of
// the spectrum is unknown; estimable is false when the median is zero (or
// negligible against σ_1), i.e. the noise level cannot be estimated.
struct GavishDonohoThreshold {
  double beta = 0.0, omega = 0.0, median = 0.0, tau = 0.0;
  bool estimable = false;
};

// basis: N ≥ 2 observations, d ≥ 1. Returns the threshold's parts.
GavishDonohoThreshold gavish_donoho_threshold(const Basis& basis) {
  const Eigen::Index n = basis.observation_count, d = basis.dimension(), m = std::min(n, d);
  GavishDonohoThreshold t;
  t.beta = double(m) / double(std::max(n, d));
  t.omega = gavish_donoho_omega(t.beta);
  t.median = 0.5 * (centred_singular_value(basis, (m - 1) / 2) + centred_singular_value(basis, m / 2));
  t.tau = t.omega * t.median;
  t.estimable = t.median > 1e-12 * centred_singular_value(basis, 0);  // false for NaN too
  return t;
}

}  // namespace

KSuggestion rule_gavish_donoho(const Basis& basis) {
  KSuggestion s;
  s.rule = "gavish_donoho";
  s.label = "Gavish-Donoho";
  const Eigen::Index n = basis.observation_count, d = basis.dimension(), r = basis.rank();
  const Eigen::Index m = std::min(n, d);
  if (n < 2 || m < 1) {
    s.meaning = "needs at least 2 observations";
    return s;
  }
  const GavishDonohoThreshold t = gavish_donoho_threshold(basis);
  if (std::isnan(t.median)) {
    s.meaning = "needs the full spectrum: the median singular value is unknown";
    s.note = truncated_note(basis) + "; the median is at component " + std::to_string(m / 2 + 1) +
             " of " + std::to_string(m) + " (use --solver exact)";
    return s;
  }
  if (!t.estimable) {
    s.meaning = "does not apply: over half the singular values are zero, so the noise level cannot be estimated";
    s.note = "see the near-zero eigenvalue diagnosis";
    return s;
  }
  int k = 0;
  for (Eigen::Index i = 0; i < std::min(r, m); ++i)
    if (centred_singular_value(basis, i) > t.tau) ++k;
  s.k = k;
  s.meaning = std::to_string(k) + " singular values stand above the noise threshold " + fmt(t.omega, 4) +
              " x median (beta = " + fmt(t.beta, 3) + ")";
  if (k == std::min(r, m) && r < m) {
    s.lower_bound = true;
    s.note = truncated_note(basis) + " and all of them pass: at least that many";
  }
  return s;
}

double gavish_donoho_threshold_eigenvalue(const Basis& basis) {
  const Eigen::Index n = basis.observation_count, m = std::min(n, basis.dimension());
  if (n < 2 || m < 1 || basis.rank() < 1) return std::numeric_limits<double>::quiet_NaN();
  const GavishDonohoThreshold t = gavish_donoho_threshold(basis);
  if (!t.estimable) return std::numeric_limits<double>::quiet_NaN();
  return t.tau * t.tau / double(n - 1);
}

std::vector<KSuggestion> spectrum_rules(const Basis& basis, const std::vector<double>& keep_fractions) {
  std::vector<KSuggestion> rules;
  for (double f : keep_fractions) rules.push_back(rule_keep_variance(basis, f));
  rules.push_back(rule_kneedle(basis));
  rules.push_back(rule_kaiser_guttman(basis));
  rules.push_back(rule_broken_stick(basis));
  rules.push_back(rule_gavish_donoho(basis));
  return rules;
}

std::vector<double> parse_percent_list(const std::string& text, const std::string& option) {
  std::vector<double> out;
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = text.find(',', start);
    const std::string part = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    char* end = nullptr;
    const double v = part.empty() ? 0.0 : std::strtod(part.c_str(), &end);
    if (part.empty() || end != part.c_str() + part.size() || !(v > 0.0) || v > 100.0) {
      throw usage_error(option + " takes percentages in (0, 100] separated by commas, like 90,95,99,99.9, not '" +
                        text + "'");
    }
    out.push_back(v / 100.0);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  std::sort(out.begin(), out.end());
  out.erase(std::unique(out.begin(), out.end()), out.end());
  return out;
}

namespace {
std::string join_names(const std::vector<std::string>& names) {
  std::string s;
  for (std::size_t i = 0; i < names.size(); ++i) {
    if (i > 0) s += (i + 1 == names.size()) ? " and " : ", ";
    s += names[i];
  }
  return s;
}
}  // namespace

std::string rules_agreement(const std::vector<KSuggestion>& rules) {
  std::map<std::pair<int, bool>, std::vector<std::string>> groups;  // (k, lower_bound) -> labels
  std::vector<std::string> silent;
  int answered = 0;
  for (const auto& r : rules) {
    if (r.k < 0) {
      silent.push_back(r.label);
      continue;
    }
    groups[{r.k, r.lower_bound}].push_back(r.label);
    ++answered;
  }
  std::string out;
  if (answered == 0) {
    out = "No rule could suggest a k.";
  } else if (groups.size() == 1) {
    const auto& [key, names] = *groups.begin();
    out = answered == 1 ? "Only " + names.front() + " answered: k = " + std::to_string(key.first) + "."
                        : "All " + std::to_string(answered) + " rules that answered agree: k = " +
                              (key.second ? "at least " : "") + std::to_string(key.first) + ".";
  } else {
    std::vector<std::string> agree, alone;
    for (const auto& [key, names] : groups) {
      const std::string kt = (key.second ? "at least " : "") + std::to_string(key.first);
      if (names.size() > 1) agree.push_back(join_names(names) + " agree on k = " + kt);
      else alone.push_back(names.front() + " " + kt);
    }
    if (!agree.empty()) out += "Agreement: " + join_names(agree) + ". ";
    else out += "No two rules agree. ";
    const auto& low = *groups.begin();
    const auto& high = *groups.rbegin();
    out += "Disagreement: the suggestions run from k = " + std::to_string(low.first.first) + " (" +
           join_names(low.second) + ") to k = " + (high.first.second ? "at least " : "") +
           std::to_string(high.first.first) + " (" + join_names(high.second) + ")";
    if (!alone.empty()) out += "; on their own: " + join_names(alone);
    out += ". The elbow, Kaiser-Guttman, broken-stick and Gavish-Donoho rules look for where structure gives way "
           "to noise; the variance and quality rules ask how much detail survives, so they usually ask for more.";
  }
  if (!silent.empty()) out += " " + join_names(silent) + " could not answer (see its note).";
  return out;
}

double eckart_young_mse(const Basis& basis, int k) {
  if (k < 0 || k > basis.rank()) throw usage_error("eckart_young_mse: k = " + std::to_string(k) + " outside 0..r");
  const double n = double(basis.observation_count), d = double(basis.dimension());
  const double kept = k > 0 ? basis.eigenvalues.head(k).sum() : 0.0;
  const double discarded = std::max(0.0, basis.total_variance - kept);
  return n > 0 && d > 0 ? (n - 1.0) * discarded / (n * d) : 0.0;
}

}  // namespace pcasweep
