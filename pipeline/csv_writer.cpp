#include "pipeline/csv_writer.hpp"

#include <cmath>
#include <fstream>

#include <fmt/format.h>

#include "pipeline/errors.hpp"

namespace stallscope {

static std::string quoted(const std::string& s) {
  if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
  std::string q = "\"";
  for (char c : s) q += c == '"' ? std::string("\"\"") : std::string(1, c);
  return q + "\"";
}

void write_csv(std::ostream& out, const Table& table) {
  for (std::size_t c = 0; c < table.columns.size(); ++c) out << (c ? "," : "") << quoted(table.columns[c].name);
  out << "\n";
  for (std::size_t r = 0; r < table.rows(); ++r) {
    for (std::size_t c = 0; c < table.columns.size(); ++c) {
      if (c) out << ",";
      const auto& data = table.columns[c].data;
      if (const auto* d = std::get_if<std::vector<double>>(&data)) {
        if (std::isfinite((*d)[r])) out << fmt::format("{:.10g}", (*d)[r]);
      } else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&data)) {
        out << (*i)[r];
      } else {
        out << quoted(std::get<std::vector<std::string>>(data)[r]);
      }
    }
    out << "\n";
  }
}

void write_csv_file(const std::filesystem::path& path, const Table& table) {
  auto partial = path;
  partial += ".partial";
  {
    std::ofstream out(partial, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError(partial.string(), "cannot be written");
    write_csv(out, table);
    out.flush();
    if (!out) {
      std::error_code ec;
      std::filesystem::remove(partial, ec);
      throw InputError(partial.string(), "write failed (disk full?)");
    }
  }
  std::filesystem::rename(partial, path);
}

}  // namespace stallscope
