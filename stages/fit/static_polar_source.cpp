#include "stages/fit/static_polar_source.hpp"

#include <fstream>
#include <sstream>

#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"

namespace stallscope::fit {

std::optional<StaticPolarPoints> polar_from_store(const RunStore& s, const std::string& source) {
  StaticPolarPoints p;
  if (s.contains("static_polar/points")) {
    const Table& t = s.get<Table>("static_polar/points");
    const bool has_direction = t.find("direction") != nullptr;
    for (std::size_t r = 0; r < t.rows(); ++r)
      if (!has_direction || t.texts("direction")[r] != "down") {
        p.alpha_deg.push_back(t.numbers("alpha_deg")[r]);
        p.cn.push_back(t.numbers("cn")[r]);
      }
    p.source = source + " static_polar/points" + (has_direction ? " (up sweep)" : "");
    return p;
  }
  if (s.contains("fit/static_polar")) {
    const Table& t = s.get<Table>("fit/static_polar");
    p.alpha_deg = t.numbers("alpha_deg");
    p.cn = t.numbers("cn");
    const auto& a = s.entry("fit/static_polar").attributes;
    const auto it = a.find("source");
    p.source = source + " fit/static_polar" +
               (it != a.end() && std::holds_alternative<std::string>(it->second)
                    ? " (first from " + std::get<std::string>(it->second) + ")"
                    : "");
    return p;
  }
  return std::nullopt;
}

StaticPolarPoints polar_from_archive(const std::filesystem::path& archive, const std::string& where) {
  const RunStore store = read_archive(archive);
  auto p = polar_from_store(store, archive.filename().string());
  if (!p)
    throw InputError(where, archive.string() + " holds no /static_polar/points or /fit/static_polar (is it the archive "
                                               "of a reduced static run?)");
  return *p;
}

StaticPolarPoints polar_from_csv(const std::filesystem::path& csv, const std::string& where) {
  std::ifstream in(csv);
  if (!in) throw InputError(where, "cannot read " + csv.string());
  std::string line;
  int number = 0, alpha_col = -1, cn_col = -1, direction_col = -1;
  StaticPolarPoints p;
  p.source = csv.filename().string();
  auto split = [](const std::string& l) {
    std::vector<std::string> cells;
    std::stringstream ss(l);
    std::string c;
    while (std::getline(ss, c, ',')) {
      const auto a = c.find_first_not_of(" \t\r"), b = c.find_last_not_of(" \t\r");
      cells.push_back(a == std::string::npos ? "" : c.substr(a, b - a + 1));
    }
    return cells;
  };
  bool header = true;
  while (std::getline(in, line)) {
    ++number;
    if (line.empty() || line[0] == '#' || line.find_first_not_of(" \t\r") == std::string::npos) continue;
    const auto cells = split(line);
    const std::string at = csv.string() + ":" + std::to_string(number);
    if (header) {
      for (std::size_t i = 0; i < cells.size(); ++i) {
        if (cells[i] == "alpha_deg") alpha_col = static_cast<int>(i);
        if (cells[i] == "cn") cn_col = static_cast<int>(i);
        if (cells[i] == "direction") direction_col = static_cast<int>(i);
      }
      if (alpha_col < 0 || cn_col < 0) throw InputError(at, "expected a header row with columns alpha_deg and cn");
      header = false;
      continue;
    }
    const auto need = static_cast<std::size_t>(std::max(alpha_col, cn_col));
    if (cells.size() <= need) throw InputError(at, "expected a value in columns alpha_deg and cn");
    if (direction_col >= 0 && static_cast<std::size_t>(direction_col) < cells.size() && cells[direction_col] == "down")
      continue;
    try {
      std::size_t used_a = 0, used_c = 0;
      const double a = std::stod(cells[alpha_col], &used_a), c = std::stod(cells[cn_col], &used_c);
      if (used_a != cells[alpha_col].size() || used_c != cells[cn_col].size()) throw std::invalid_argument("trailing");
      p.alpha_deg.push_back(a);
      p.cn.push_back(c);
    } catch (const std::exception&) {
      throw InputError(at, "expected numbers for alpha_deg and cn, got '" + cells[alpha_col] + "', '" +
                               cells[cn_col] + "'");
    }
  }
  if (header) throw InputError(csv.string(), "is empty: expected a header row with columns alpha_deg and cn");
  return p;
}

StaticPolarPoints read_static_polar(const std::filesystem::path& file, const std::string& where) {
  return file.extension() == ".h5" ? polar_from_archive(file, where) : polar_from_csv(file, where);
}

}  // namespace stallscope::fit
