#include "pipeline/campaign/table_builder.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>

#include <fmt/format.h>

namespace stallscope::campaign {

namespace {
constexpr double kEmpty = std::numeric_limits<double>::quiet_NaN();
}

TableBuilder::Col& TableBuilder::column(const std::string& name, const std::string& units, bool text) {
  auto [it, fresh] = index_.emplace(name, cols_.size());
  if (fresh) cols_.push_back({name, units, text, {}, {}});
  Col& c = cols_[it->second];
  // Pad to the current row; the cell being set is the last one.
  c.numbers.resize(c.text ? 0 : rows_, kEmpty);
  c.texts.resize(c.text ? rows_ : 0);
  return c;
}

void TableBuilder::declare(const std::string& name, const std::string& units, bool text) {
  column(name, units, text);
}

void TableBuilder::set(const std::string& name, const std::string& units, double value) {
  if (rows_ == 0) throw std::logic_error("TableBuilder: set before new_row");
  Col& c = column(name, units, false);
  if (c.text) c.texts.back() = std::isfinite(value) ? fmt::format("{:.10g}", value) : "";
  else c.numbers.back() = value;
}

void TableBuilder::set(const std::string& name, const std::string& text) {
  if (rows_ == 0) throw std::logic_error("TableBuilder: set before new_row");
  Col& c = column(name, "", true);
  if (c.text) c.texts.back() = text;  // a text set into a numeric column stays empty there
}

void TableBuilder::set_row_of(const Table& table, std::size_t r, const std::string& prefix) {
  for (const auto& col : table.columns) {
    const std::string name = prefix + col.name;
    if (const auto* d = std::get_if<std::vector<double>>(&col.data)) set(name, col.units, (*d)[r]);
    else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&col.data))
      set(name, col.units, static_cast<double>((*i)[r]));
    else set(name, std::get<std::vector<std::string>>(col.data)[r]);
  }
}

Table TableBuilder::table() const {
  Table t;
  for (const auto& c : cols_) {
    if (c.text) {
      auto texts = c.texts;
      texts.resize(rows_);
      t.add({c.name, "", std::move(texts)});
    } else {
      auto numbers = c.numbers;
      numbers.resize(rows_, kEmpty);
      t.add({c.name, c.units, std::move(numbers)});
    }
  }
  return t;
}

}  // namespace stallscope::campaign
