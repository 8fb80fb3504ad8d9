#pragma once
// Plain CSV for model-fitting scripts: a header row of column names (units in
// the names), RFC 4180 quoting, NaN written as an empty field.
#include <filesystem>
#include <ostream>

#include "pipeline/values.hpp"

namespace stallscope {

void write_csv(std::ostream& out, const Table& table);
// Writes to path + ".partial" and renames on success.
void write_csv_file(const std::filesystem::path& path, const Table& table);

}  // namespace stallscope
