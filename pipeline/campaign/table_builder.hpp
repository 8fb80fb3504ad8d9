#pragma once
// A table built row by row for the campaign summary: a column appears when it
// is first set, and a cell never set stays empty (NaN or ""), so runs whose
// tables have different columns still stack into one.
#include <map>
#include <string>
#include <vector>

#include "pipeline/values.hpp"

namespace stallscope::campaign {

class TableBuilder {
 public:
  // A column that is there (in this order) even if no row sets it.
  void declare(const std::string& name, const std::string& units, bool text);
  void new_row() { ++rows_; }
  void set(const std::string& name, const std::string& units, double value);
  void set(const std::string& name, const std::string& text);
  // Every column of row r of `table`, numbers as numbers, integers as numbers.
  void set_row_of(const Table& table, std::size_t r, const std::string& prefix = "");
  std::size_t rows() const { return rows_; }
  Table table() const;

 private:
  struct Col {
    std::string name, units;
    bool text = false;
    std::vector<double> numbers;
    std::vector<std::string> texts;
  };
  Col& column(const std::string& name, const std::string& units, bool text);
  std::vector<Col> cols_;
  std::map<std::string, std::size_t> index_;
  std::size_t rows_ = 0;
};

}  // namespace stallscope::campaign
