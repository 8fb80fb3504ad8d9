#include "pipeline/values.hpp"

#include <stdexcept>

namespace stallscope {

std::size_t Column::size() const {
  return std::visit([](const auto& v) { return v.size(); }, data);
}

const Column* Table::find(std::string_view name) const {
  for (const auto& c : columns)
    if (c.name == name) return &c;
  return nullptr;
}

Table& Table::add(Column c) {
  if (!columns.empty() && c.size() != rows())
    throw std::logic_error("table column '" + c.name + "' has " + std::to_string(c.size()) +
                           " rows, the table has " + std::to_string(rows()));
  columns.push_back(std::move(c));
  return *this;
}

namespace {
template <typename T>
const std::vector<T>& column_as(const Table& t, std::string_view name) {
  const Column* c = t.find(name);
  if (!c) throw std::logic_error("table has no column '" + std::string(name) + "'");
  const auto* v = std::get_if<std::vector<T>>(&c->data);
  if (!v) throw std::logic_error("table column '" + std::string(name) + "' has another type");
  return *v;
}
}  // namespace

const std::vector<double>& Table::numbers(std::string_view name) const { return column_as<double>(*this, name); }
const std::vector<std::int64_t>& Table::integers(std::string_view name) const {
  return column_as<std::int64_t>(*this, name);
}
const std::vector<std::string>& Table::texts(std::string_view name) const {
  return column_as<std::string>(*this, name);
}

std::string_view value_kind(const Value& v) {
  struct Kind {
    std::string_view operator()(const Scalar&) const { return "scalar"; }
    std::string_view operator()(const Text&) const { return "text"; }
    std::string_view operator()(const Series&) const { return "series"; }
    std::string_view operator()(const Matrix&) const { return "matrix"; }
    std::string_view operator()(const FieldStack&) const { return "field stack"; }
    std::string_view operator()(const Table&) const { return "table"; }
  };
  return std::visit(Kind{}, v);
}

}  // namespace stallscope
