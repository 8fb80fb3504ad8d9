#pragma once
// The typed values a run store holds. Every numeric value carries its units
// (SI; angles in degrees; coefficients "1"), because the archive must.
#include <Eigen/Core>
#include <cstdint>
#include <map>
#include <string>
#include <variant>
#include <vector>

namespace stallscope {

// Attributes travel with a value into the archive (units, conventions, notes).
using AttributeValue = std::variant<double, std::int64_t, std::string>;
using Attributes = std::map<std::string, AttributeValue>;

struct Scalar {
  double value = 0.0;
  std::string units;
};

struct Text {
  std::string value;
};

// A 1-D sequence: a time base, one load coefficient against time, bin centres.
struct Series {
  Eigen::VectorXd values;
  std::string units;
};

// Samples x channels (or frames x bins); column names optional.
struct Matrix {
  Eigen::MatrixXd values;
  std::string units;
  std::vector<std::string> columns;
};

// A field stack: frames x ny x nx single-precision values, row-major per frame.
struct FieldStack {
  std::size_t frames = 0, ny = 0, nx = 0;
  std::vector<float> values;
  std::string units;
  float& at(std::size_t f, std::size_t j, std::size_t i) { return values[(f * ny + j) * nx + i]; }
  float at(std::size_t f, std::size_t j, std::size_t i) const { return values[(f * ny + j) * nx + i]; }
};

// A column of a table: numbers (with units), integers or text.
struct Column {
  std::string name;
  std::string units;  // empty for text columns
  std::variant<std::vector<double>, std::vector<std::int64_t>, std::vector<std::string>> data;
  std::size_t size() const;
};

struct Table {
  std::vector<Column> columns;
  std::size_t rows() const { return columns.empty() ? 0 : columns.front().size(); }
  const Column* find(std::string_view name) const;
  // Adds a column; throws std::logic_error if its length differs from the others.
  Table& add(Column c);
  const std::vector<double>& numbers(std::string_view name) const;
  const std::vector<std::int64_t>& integers(std::string_view name) const;
  const std::vector<std::string>& texts(std::string_view name) const;
};

using Value = std::variant<Scalar, Text, Series, Matrix, FieldStack, Table>;

std::string_view value_kind(const Value& v);

}  // namespace stallscope
