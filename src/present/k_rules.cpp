#include "present/k_rules.hpp"

namespace pcasweep {

namespace {
std::string k_cell(const KSuggestion& r) {
  if (r.k < 0) return "-";
  return (r.lower_bound ? ">= " : "") + std::to_string(r.k);
}
}  // namespace

Table rules_table(const std::vector<KSuggestion>& rules) {
  Table t;
  t.columns = {"rule", "k", "meaning"};
  for (const auto& r : rules)
    t.add_row({r.label, k_cell(r), r.meaning + (r.note.empty() ? "" : " [" + r.note + "]")});
  return t;
}

nlohmann::json k_choice_json(const KChoice& c) {
  nlohmann::json j;
  j["rules"] = nlohmann::json::array();
  for (const auto& r : c.rules) {
    j["rules"].push_back({{"rule", r.rule},
                          {"label", r.label},
                          {"k", r.k < 0 ? nlohmann::json(nullptr) : nlohmann::json(r.k)},
                          {"at_least", r.lower_bound},
                          {"meaning", r.meaning},
                          {"note", r.note}});
  }
  j["agreement"] = c.agreement;
  const NearZeroReport& nz = c.near_zero;
  j["near_zero"] = {{"largest_eigenvalue", nz.largest_eigenvalue},
                    {"zero_threshold", nz.zero_threshold},
                    {"noise_floor", nz.noise_floor},
                    {"exact_zero_components", nz.exact_zero},
                    {"below_noise_floor_components", nz.below_floor},
                    {"zeros_forced_by_few_observations", nz.forced_zeros},
                    {"redundancy_found", nz.redundancy_found()},
                    {"constant_variables", nz.constant_variables},
                    {"copy_groups", nz.copy_groups},
                    {"involved_variables", nz.involved_variables},
                    {"findings", nz.findings}};
  if (!c.target_search.suggestion.rule.empty()) {
    nlohmann::json ev = nlohmann::json::array();
    for (const auto& q : c.target_search.evaluated)
      ev.push_back({{"k", q.k}, {"psnr_db", json_real(q.psnr_db)}, {"ssim", json_real(q.ssim)}});
    j["quality_search"] = {{"bracket", {c.target_search.bracket_low, c.target_search.bracket_high}},
                           {"reconstructions", ev}};
  }
  return j;
}

std::string render_k_choice(const KChoice& c) {
  std::string out = "How many components? Each rule's answer:\n" + render_console(rules_table(c.rules), 4);
  out += c.agreement + "\n";
  if (c.near_zero.findings.empty()) {
    out += "Near-zero eigenvalues: none (no exact zeros, none below the rounding noise floor 1/12).\n";
  } else {
    out += "Near-zero eigenvalues:\n";
    for (const auto& f : c.near_zero.findings) out += "  - " + f + "\n";
  }
  return out;
}

}  // namespace pcasweep
