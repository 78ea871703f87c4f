// pcasweep/present/tool_json.hpp — the "tool" object every summary.json starts with.
//
// Contract: returns {"name": "pcasweep", "version": PCASWEEP_VERSION}; a
// command that names itself adds "command". Throws nothing.
#pragma once

#include <nlohmann/json.hpp>

namespace pcasweep {

inline nlohmann::json tool_json() { return {{"name", "pcasweep"}, {"version", PCASWEEP_VERSION}}; }

}  // namespace pcasweep
