#include "measure/near_zero.hpp"
#include "core/format.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <set>
#include <sstream>

namespace pcasweep {

namespace {

// "r0c0:red" -> ("r0c0", "red"); a name without ':' has no channel.
std::pair<std::string, std::string> split_name(const std::string& name) {
  const auto colon = name.rfind(':');
  if (colon == std::string::npos) return {name, ""};
  return {name.substr(0, colon), name.substr(colon + 1)};
}

std::string list_names(const std::vector<std::string>& names, std::size_t max_shown = 6) {
  std::string s;
  for (std::size_t i = 0; i < names.size() && i < max_shown; ++i) s += (i ? ", " : "") + names[i];
  if (names.size() > max_shown) s += " and " + std::to_string(names.size() - max_shown) + " more";
  return s;
}

std::string fmt(double v, int digits = 3) { return format_real(v, digits); }

struct UnionFind {
  std::vector<int> parent;
  explicit UnionFind(int n) : parent(std::size_t(n)) { std::iota(parent.begin(), parent.end(), 0); }
  int find(int i) {
    while (parent[std::size_t(i)] != i) i = parent[std::size_t(i)] = parent[std::size_t(parent[std::size_t(i)])];
    return i;
  }
  void join(int a, int b) { parent[std::size_t(find(a))] = find(b); }
};

// Channels (by name) that are constant at every cell where they occur.
std::vector<std::string> whole_constant_channels(const std::vector<std::string>& names,
                                                 const std::vector<bool>& constant) {
  std::map<std::string, std::pair<int, int>> count;  // channel -> (constant, total)
  for (std::size_t j = 0; j < names.size(); ++j) {
    const auto [cell, ch] = split_name(names[j]);
    if (ch.empty()) continue;
    auto& c = count[ch];
    c.second++;
    if (constant[j]) c.first++;
  }
  std::vector<std::string> out;
  for (const auto& [ch, c] : count)
    if (c.first == c.second && c.second > 0) out.push_back(ch);
  return out;
}

// Names variable j: its given name, or "variable j+1" when names do not match d.
struct VariableNames {
  const std::vector<std::string>& names;
  Eigen::Index d;
  std::string operator()(Eigen::Index j) const {
    return names.size() == std::size_t(d) ? names[std::size_t(j)] : "variable " + std::to_string(j + 1);
  }
};

// Sorts the computed eigenvalues into exact zeros and those below the noise floor.
void classify_eigenvalues(const Basis& basis, bool integer_samples, NearZeroReport& rep) {
  const Eigen::Index d = basis.dimension(), r = basis.rank(), n = basis.observation_count;
  rep.largest_eigenvalue = basis.eigenvalues(0);
  rep.zero_threshold = 1e-12 * rep.largest_eigenvalue;
  rep.noise_floor = integer_samples ? 1.0 / 12.0 : 0.0;
  rep.forced_zeros = int(std::max<Eigen::Index>(0, d - (n - 1)));
  for (Eigen::Index i = 0; i < r; ++i) {
    const double ev = basis.eigenvalues(i);
    if (ev <= rep.zero_threshold) rep.exact_zero.push_back(int(i + 1));
    else if (ev < rep.noise_floor) rep.below_floor.push_back(int(i + 1));
  }
}

// Constant variables: their own variance is (relatively) zero. Fills
// rep.constant_variables; returns the flag per variable (size d) and sets
// max_var to the largest variable variance (0 when the variances are unknown).
std::vector<bool> find_constant_variables(const Basis& basis, const VariableNames& name_of, NearZeroReport& rep,
                                          double& max_var) {
  const Eigen::Index d = basis.dimension();
  std::vector<bool> constant(std::size_t(d), false);
  max_var = 0.0;
  if (basis.variable_variances.size() != d) return constant;
  max_var = basis.variable_variances.maxCoeff();
  for (Eigen::Index j = 0; j < d; ++j)
    if (basis.variable_variances(j) <= 1e-12 * max_var) {
      constant[std::size_t(j)] = true;
      rep.constant_variables.push_back(name_of(j));
    }
  return constant;
}

// Exact copies: rebuilds the covariance V·Λ·Vᵀ (complete spectrum only, d ≤
// 4096) and groups non-constant variables with |correlation| = 1 to 1e-9.
void find_copy_groups(const Basis& basis, const std::vector<bool>& constant, double max_var,
                      const VariableNames& name_of, NearZeroReport& rep) {
  const Eigen::Index d = basis.dimension();
  if (!basis.complete() || d > 4096 || max_var <= 0.0) return;
  const Eigen::MatrixXd& V = basis.components;
  const Eigen::MatrixXd C = V * basis.eigenvalues.asDiagonal() * V.transpose();
  UnionFind uf(static_cast<int>(d));
  std::vector<bool> in_pair(std::size_t(d), false);
  for (Eigen::Index i = 0; i < d; ++i) {
    if (constant[std::size_t(i)]) continue;
    for (Eigen::Index j = i + 1; j < d; ++j) {
      if (constant[std::size_t(j)]) continue;
      const double denom = std::sqrt(C(i, i) * C(j, j));
      if (denom > 0 && std::abs(C(i, j)) >= (1.0 - 1e-9) * denom) {
        uf.join(int(i), int(j));
        in_pair[std::size_t(i)] = in_pair[std::size_t(j)] = true;
      }
    }
  }
  std::map<int, std::vector<std::string>> groups;
  for (Eigen::Index j = 0; j < d; ++j)
    if (in_pair[std::size_t(j)]) groups[uf.find(int(j))].push_back(name_of(j));
  for (auto& [root, g] : groups) rep.copy_groups.push_back(std::move(g));
}

// Variables with weight (Σ of squared loadings > 0.01) in the span of the exact-zero components.
void find_involved_variables(const Basis& basis, const VariableNames& name_of, NearZeroReport& rep) {
  if (rep.exact_zero.empty()) return;
  for (Eigen::Index j = 0; j < basis.dimension(); ++j) {
    double w = 0.0;
    for (int c : rep.exact_zero) w += basis.components(j, c - 1) * basis.components(j, c - 1);
    if (w > 0.01) rep.involved_variables.push_back(name_of(j));
  }
}

// The sentence on constant channels (every cell) or constant variables; empty when none.
std::string constant_finding(const NearZeroReport& rep, const std::vector<std::string>& names,
                             const std::vector<bool>& constant) {
  const auto whole = whole_constant_channels(names, constant);
  if (!whole.empty()) {
    std::string what = whole.size() == 1 ? "Channel " + whole[0] + " is" : "Channels " + list_names(whole) + " are";
    std::string why = std::find(whole.begin(), whole.end(), "alpha") != whole.end()
                          ? " (a fully opaque or otherwise constant alpha channel carries no information; "
                            "--drop-alpha removes it)"
                          : "";
    return what + " constant everywhere" + why + ".";
  }
  if (!rep.constant_variables.empty())
    return "Constant variables (never change): " + list_names(rep.constant_variables) + ".";
  return "";
}

// The sentence on copy groups: one channel-level statement when the groups
// pair the same channels at every cell (a gray image stored as colour), else
// a count with an example.
std::string copy_groups_finding(const NearZeroReport& rep, const std::vector<std::string>& names) {
  std::map<std::string, int> channel_sets;  // "blue, green, red" -> cells
  for (const auto& g : rep.copy_groups) {
    std::set<std::string> chs, cl;
    for (const auto& nm : g) {
      const auto [cell, ch] = split_name(nm);
      chs.insert(ch);
      cl.insert(cell);
    }
    if (cl.size() == 1 && chs.size() == g.size() && !chs.begin()->empty()) {
      std::string key;
      for (const auto& c : chs) key += (key.empty() ? "" : ", ") + c;
      channel_sets[key]++;
    }
  }
  std::set<std::string> all_cells;
  for (const auto& nm : names) all_cells.insert(split_name(nm).first);
  const std::size_t cells = all_cells.size();
  if (channel_sets.size() == 1 && std::size_t(channel_sets.begin()->second) == cells &&
      channel_sets.begin()->second == int(rep.copy_groups.size())) {
    const std::string& key = channel_sets.begin()->first;
    std::string s = "Channels " + key + " are exact copies of one another (up to scale and offset) at every pixel";
    if (key.find("red") != std::string::npos && key.find("green") != std::string::npos &&
        key.find("blue") != std::string::npos)
      s += ": this is a grayscale image stored as colour; one channel would carry the same information";
    return s + ".";
  }
  return std::to_string(rep.copy_groups.size()) +
         " group(s) of variables are exact copies of one another (up to scale and offset), e.g. " +
         list_names(rep.copy_groups.front(), 4) +
         " (a channel duplicated, or a sensor recorded twice in other units).";
}

// Neither constants nor copies: a fixed linear combination (e.g. a channel
// that is the sum of others). The sentence shows the first zero component's loading.
std::string linear_relation_finding(const Basis& basis, const VariableNames& name_of, const NearZeroReport& rep) {
  const int c = rep.exact_zero.front() - 1;
  std::vector<Eigen::Index> order(static_cast<std::size_t>(basis.dimension()));
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](Eigen::Index a, Eigen::Index b) {
    return std::abs(basis.components(a, c)) > std::abs(basis.components(b, c));
  });
  std::string combo;
  for (std::size_t t = 0; t < order.size() && t < 4; ++t) {
    const double v = basis.components(order[t], c);
    if (std::abs(v) < 0.05) break;
    combo += (t == 0 ? (v < 0 ? "-" : "") : (v < 0 ? " - " : " + ")) + fmt(std::abs(v), 2) + "*" + name_of(order[t]);
  }
  std::set<std::string> chs;
  for (const auto& nm : rep.involved_variables) chs.insert(split_name(nm).second);
  std::vector<std::string> chv;
  for (const auto& ch : chs)
    if (!ch.empty()) chv.push_back(ch);
  return "The variables obey fixed linear relations (for example a channel that is the sum or "
         "a blend of others), involving " +
         (chv.empty() ? list_names(rep.involved_variables) : "channels " + list_names(chv)) + ". Component " +
         std::to_string(c + 1) + " reads " + combo + " = constant.";
}

// The findings about exact zeros that the data themselves cause (not forced by N ≤ d).
void redundancy_findings(const Basis& basis, const std::vector<std::string>& names, const std::vector<bool>& constant,
                         const VariableNames& name_of, NearZeroReport& rep) {
  rep.findings.push_back(std::to_string(rep.exact_zero.size()) +
                         " component(s) have an exactly zero eigenvalue (below 1e-12 of the "
                         "largest, " + fmt(rep.largest_eigenvalue, 4) + "): along them the data never vary, "
                         "because some variables are exact copies or fixed combinations of others. Dropping "
                         "these components costs nothing: the reconstruction does not change.");
  const std::string constants = constant_finding(rep, names, constant);
  if (!constants.empty()) rep.findings.push_back(constants);
  if (!rep.copy_groups.empty()) rep.findings.push_back(copy_groups_finding(rep, names));
  if (rep.constant_variables.empty() && rep.copy_groups.empty() && !rep.involved_variables.empty())
    rep.findings.push_back(linear_relation_finding(basis, name_of, rep));
}

}  // namespace

NearZeroReport diagnose_near_zero(const Basis& basis, const std::vector<std::string>& names, bool integer_samples) {
  NearZeroReport rep;
  const Eigen::Index d = basis.dimension(), r = basis.rank(), n = basis.observation_count;
  if (r == 0) return rep;
  const VariableNames name_of{names, d};
  classify_eigenvalues(basis, integer_samples, rep);
  double max_var = 0.0;
  const std::vector<bool> constant = find_constant_variables(basis, name_of, rep, max_var);
  find_copy_groups(basis, constant, max_var, name_of, rep);
  find_involved_variables(basis, name_of, rep);

  if (rep.forced_zeros > 0)
    rep.findings.push_back("Only N = " + std::to_string(n) + " observations for d = " + std::to_string(d) +
                           " variables: N observations span at most N - 1 directions, so at least " +
                           std::to_string(rep.forced_zeros) +
                           " eigenvalues are zero whatever the data. Those zeros say nothing about the variables.");
  if (int(rep.exact_zero.size()) > rep.forced_zeros) redundancy_findings(basis, names, constant, name_of, rep);
  if (!rep.below_floor.empty())
    rep.findings.push_back(std::to_string(rep.below_floor.size()) +
                           " further component(s) have eigenvalues below the rounding noise of integer samples "
                           "(1/12 of a level squared): they hold at most quantisation noise or near-copies, and "
                           "dropping all of them together changes the mean squared error by less than rounding "
                           "to integers already does.");
  if (!basis.complete())
    rep.findings.push_back("Only " + std::to_string(r) + " of " + std::to_string(d) +
                           " eigenvalues were computed: near-zero components beyond them were not checked "
                           "(constant variables above are found from the variable variances, which are exact).");
  return rep;
}

}  // namespace pcasweep
