// pcasweep/present/k_rules.hpp — the rules for k as a table, JSON and text.
//
// Contract: lays out a KChoice (pipeline/k_choice.hpp) without computing
// anything: the rules table (rule, k, meaning), the "choose_k" part of
// summary.json (also rules.json) and the console text.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "pipeline/k_choice.hpp"
#include "report/table.hpp"

namespace pcasweep {

// Columns rule, k, meaning (k printed as "12", ">= 40" or "-"; a note, if any, follows the meaning).
Table rules_table(const std::vector<KSuggestion>& rules);

// {"rules": [...], "agreement": "...", "near_zero": {...}, "quality_search": {...}}
// (quality_search only when a quality target was searched).
nlohmann::json k_choice_json(const KChoice& choice);

// Text for a terminal: the rules table, the agreement paragraph, and the near-zero findings.
std::string render_k_choice(const KChoice& choice);

}  // namespace pcasweep
