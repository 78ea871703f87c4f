#include "report/table.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <stdexcept>

namespace pcasweep {

void Table::add_row(std::vector<Cell> row) {
  if (row.size() != columns.size()) throw std::logic_error("table row has the wrong number of cells");
  rows.push_back(std::move(row));
}

namespace {

std::string csv_cell(const Cell& cell) {
  struct Visitor {
    std::string operator()(std::monostate) const { return ""; }
    std::string operator()(std::int64_t v) const { return std::to_string(v); }
    std::string operator()(double v) const { return format_real(v); }
    std::string operator()(const std::string& s) const {
      if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
      std::string out = "\"";
      for (char ch : s) {
        if (ch == '"') out += '"';
        out += ch;
      }
      return out + "\"";
    }
  };
  return std::visit(Visitor{}, cell);
}

std::string console_cell(const Cell& cell, int decimals) {
  if (const double* v = std::get_if<double>(&cell)) {
    if (!std::isfinite(*v)) return format_real(*v);
    const double a = std::abs(*v);
    char buffer[64];
    if (a != 0.0 && (a < std::pow(10.0, -decimals) || a >= 1e9)) {
      std::snprintf(buffer, sizeof buffer, "%.*e", std::max(1, decimals - 1), *v);
    } else {
      std::snprintf(buffer, sizeof buffer, "%.*f", decimals, *v);
    }
    return buffer;
  }
  return csv_cell(cell);
}

}  // namespace

std::string render_csv(const Table& table) {
  std::string out;
  for (std::size_t i = 0; i < table.columns.size(); ++i) out += (i ? "," : "") + csv_cell(table.columns[i]);
  out += "\n";
  for (const auto& row : table.rows) {
    for (std::size_t i = 0; i < row.size(); ++i) out += (i ? "," : "") + csv_cell(row[i]);
    out += "\n";
  }
  return out;
}

std::string render_console(const Table& table, int decimals) {
  const std::size_t n = table.columns.size();
  // A column with no value in any row (say, bytes when nothing was coded)
  // only widens the terminal table; CSV and JSON keep it.
  std::vector<bool> shown(n, table.rows.empty());
  for (const auto& row : table.rows)
    for (std::size_t i = 0; i < n; ++i)
      if (!std::holds_alternative<std::monostate>(row[i])) shown[i] = true;
  std::vector<std::vector<std::string>> text;
  std::vector<std::size_t> width(n);
  std::vector<bool> text_column(n, false);
  for (std::size_t i = 0; i < n; ++i) width[i] = table.columns[i].size();
  for (const auto& row : table.rows) {
    std::vector<std::string> line;
    for (std::size_t i = 0; i < n; ++i) {
      line.push_back(console_cell(row[i], decimals));
      width[i] = std::max(width[i], line.back().size());
      if (std::holds_alternative<std::string>(row[i])) text_column[i] = true;
    }
    text.push_back(std::move(line));
  }
  auto pad = [](const std::string& s, std::size_t w, bool left) {
    const std::string fill(w > s.size() ? w - s.size() : 0, ' ');
    return left ? s + fill : fill + s;
  };
  auto render_line = [&](const std::vector<std::string>& cells) {
    std::string line;
    for (std::size_t i = 0; i < n; ++i) {
      if (!shown[i]) continue;
      line += (line.empty() ? "" : "  ") + pad(cells[i], width[i], text_column[i]);
    }
    return line + "\n";
  };
  std::string out = render_line(table.columns);
  for (const auto& line : text) out += render_line(line);
  return out;
}

nlohmann::json json_real(double value) {
  if (!std::isfinite(value)) return nullptr;
  return value;
}

nlohmann::json to_json(const Table& table) {
  nlohmann::json rows = nlohmann::json::array();
  for (const auto& row : table.rows) {
    nlohmann::json object = nlohmann::json::object();
    for (std::size_t i = 0; i < row.size(); ++i) {
      const Cell& cell = row[i];
      if (std::holds_alternative<std::monostate>(cell)) object[table.columns[i]] = nullptr;
      else if (auto* v = std::get_if<std::int64_t>(&cell)) object[table.columns[i]] = *v;
      else if (auto* d = std::get_if<double>(&cell)) object[table.columns[i]] = json_real(*d);
      else object[table.columns[i]] = std::get<std::string>(cell);
    }
    rows.push_back(std::move(object));
  }
  return rows;
}

}  // namespace pcasweep
