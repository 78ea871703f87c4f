// pcasweep/report/table.hpp — one table, three renderings (CSV, console, JSON).
//
// Contract: a Table is named columns and rows of cells; a cell is empty
// (null), an integer, a real or text. Reals render with up to 10 significant
// digits in CSV and JSON-compatible form; +∞ renders as "inf" in CSV and the
// console and as null in JSON (JSON has no infinity), NaN as "nan" / null.
// The report stage never computes numbers: it only lays them out.
#pragma once

#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <variant>
#include <vector>

#include "core/format.hpp"  // format_real: reals in CSV cells

namespace pcasweep {

using Cell = std::variant<std::monostate, std::int64_t, double, std::string>;

struct Table {
  std::vector<std::string> columns;
  std::vector<std::vector<Cell>> rows;

  // Appends a row; it must have one cell per column (checked).
  void add_row(std::vector<Cell> row);
};

// RFC 4180 CSV: header line, one line per row, "\n" line ends, text quoted when needed.
std::string render_csv(const Table& table);

// Aligned text for a terminal: numbers right-aligned, reals with `decimals` places;
// columns empty in every row are left out (CSV and JSON keep them).
std::string render_console(const Table& table, int decimals = 4);

// JSON array with one object per row, keys = column names.
nlohmann::json to_json(const Table& table);

// A real as JSON: a number, or null when not finite.
nlohmann::json json_real(double value);

}  // namespace pcasweep
