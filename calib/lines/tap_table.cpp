#include "calib/lines/tap_table.hpp"

#include <charconv>
#include <cmath>
#include <fstream>
#include <set>
#include <sstream>

#include "pipeline/errors.hpp"

namespace stallscope::calib {

namespace {

constexpr const char* kHeader =
    "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status";

std::vector<std::string> split(const std::string& line) {
  std::vector<std::string> out;
  std::stringstream in(line);
  std::string f;
  while (std::getline(in, f, ',')) {
    while (!f.empty() && (f.back() == ' ' || f.back() == '\r' || f.back() == '\t')) f.pop_back();
    std::size_t b = 0;
    while (b < f.size() && (f[b] == ' ' || f[b] == '\t')) ++b;
    out.push_back(f.substr(b));
  }
  if (!line.empty() && line.back() == ',') out.emplace_back();
  return out;
}

double parse_number(const std::string& f, const std::string& where, const std::string& column, bool allow_empty) {
  if (f.empty()) {
    if (allow_empty) return std::nan("");
    throw InputError(where, "column '" + column + "' is empty; expected a number");
  }
  double v = 0;
  auto [p, ec] = std::from_chars(f.data(), f.data() + f.size(), v);
  if (ec != std::errc() || p != f.data() + f.size() || !std::isfinite(v))
    throw InputError(where, "column '" + column + "': expected a finite number, found '" + f + "'");
  return v;
}

}  // namespace

std::string_view status_name(TapStatus s) {
  return s == TapStatus::kOk ? "ok" : s == TapStatus::kDead ? "dead" : "suspect";
}

std::string_view surface_name(theory::Surface s) { return s == theory::Surface::kUpper ? "upper" : "lower"; }

std::string TapTable::where(std::size_t i) const {
  return source + ":" + std::to_string(taps[i].row) + ": tap " + taps[i].name;
}

int TapTable::index(const std::string& tap_name) const {
  for (std::size_t i = 0; i < taps.size(); ++i)
    if (taps[i].name == tap_name) return static_cast<int>(i);
  return -1;
}

TapTable read_tap_table(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "tap table not found or not readable");
  std::ostringstream text;
  text << in.rdbuf();
  return parse_tap_table(text.str(), path.string());
}

TapTable parse_tap_table(const std::string& text, const std::string& source) {
  TapTable t;
  t.source = source;
  std::istringstream in(text);
  std::string line;
  int row = 0;
  bool header = false;
  std::set<std::string> names, channels;
  while (std::getline(in, line)) {
    ++row;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line.front() == '#') continue;
    const std::string where = source + ":" + std::to_string(row);
    if (!header) {
      std::string compact;
      for (char c : line)
        if (c != ' ' && c != '\t') compact += c;
      if (compact != kHeader) throw InputError(where, std::string("expected the tap table header '") + kHeader + "'");
      header = true;
      continue;
    }
    auto f = split(line);
    if (f.size() != 11)
      throw InputError(where, "expected 11 fields, found " + std::to_string(f.size()));
    Tap tap;
    tap.row = row;
    tap.name = f[0];
    tap.channel = f[1];
    if (tap.name.empty()) throw InputError(where, "column 'tap' is empty");
    if (tap.channel.empty()) throw InputError(where, "tap " + tap.name + ": column 'channel' is empty");
    if (!names.insert(tap.name).second) throw InputError(where, "tap '" + tap.name + "' appears twice");
    if (!channels.insert(tap.channel).second)
      throw InputError(where, "channel '" + tap.channel + "' is given to two taps");
    tap.x_over_c = parse_number(f[2], where, "x_over_c", false);
    if (tap.x_over_c < 0.0 || tap.x_over_c > 1.0)
      throw InputError(where, "tap " + tap.name + ": x_over_c = " + f[2] + " is outside [0, 1]");
    tap.y_over_c = parse_number(f[3], where, "y_over_c", true);
    if (std::isfinite(tap.y_over_c) && std::abs(tap.y_over_c) > 0.5)
      throw InputError(where, "tap " + tap.name + ": y_over_c = " + f[3] + " is outside [-0.5, 0.5]");
    if (f[4] == "upper") tap.surface = theory::Surface::kUpper;
    else if (f[4] == "lower") tap.surface = theory::Surface::kLower;
    else throw InputError(where, "tap " + tap.name + ": surface must be 'upper' or 'lower', found '" + f[4] + "'");
    tap.tube_length_m = parse_number(f[5], where, "tube_length_m", true);
    tap.tube_diameter_m = parse_number(f[6], where, "tube_diameter_m", true);
    tap.volume_m3 = parse_number(f[7], where, "volume_m3", true);
    for (auto [v, col] : {std::pair{tap.tube_length_m, "tube_length_m"}, std::pair{tap.tube_diameter_m, "tube_diameter_m"},
                          std::pair{tap.volume_m3, "volume_m3"}})
      if (v < 0) throw InputError(where, "tap " + tap.name + ": " + col + " must be >= 0");
    if (std::isfinite(tap.tube_diameter_m) && tap.tube_diameter_m == 0.0 && tap.tube_length_m > 0)
      throw InputError(where, "tap " + tap.name + ": tube_diameter_m must be > 0 for a tube of non-zero length");
    tap.time_offset_s = f[8].empty() ? 0.0 : parse_number(f[8], where, "time_offset_s", false);
    if (std::abs(tap.time_offset_s) > 1.0)
      throw InputError(where, "tap " + tap.name + ": time_offset_s = " + f[8] + " s is not a sampling skew (|offset| > 1 s)");
    tap.line = f[9];
    if (f[10] == "ok") tap.status = TapStatus::kOk;
    else if (f[10] == "dead") tap.status = TapStatus::kDead;
    else if (f[10] == "suspect") tap.status = TapStatus::kSuspect;
    else throw InputError(where, "tap " + tap.name + ": status must be 'ok', 'dead' or 'suspect', found '" + f[10] + "'");
    t.taps.push_back(std::move(tap));
  }
  if (!header) throw InputError(source, std::string("empty tap table; expected the header '") + kHeader + "'");
  int upper = 0, lower = 0;
  for (const auto& tap : t.taps) (tap.surface == theory::Surface::kUpper ? upper : lower)++;
  if (upper < 2 || lower < 2)
    throw InputError(source, "expected at least 2 taps on each surface, found " + std::to_string(upper) + " upper and " +
                                 std::to_string(lower) + " lower");
  return t;
}

void fill_naca4_ordinates(TapTable& table, const theory::Naca4Section& section) {
  for (auto& tap : table.taps) {
    if (std::isfinite(tap.y_over_c)) continue;
    auto surface_at = [&](double x) {
      return tap.surface == theory::Surface::kUpper ? theory::naca4_upper_surface(section, x)
                                                     : theory::naca4_lower_surface(section, x);
    };
    // x_surface(station) is monotonic on [0, 1] for 4-digit sections: bisect for the tap's x.
    double lo = 0.0, hi = 1.0;
    for (int i = 0; i < 80; ++i) {
      const double mid = 0.5 * (lo + hi);
      (surface_at(mid).x < tap.x_over_c ? lo : hi) = mid;
    }
    tap.y_over_c = surface_at(0.5 * (lo + hi)).y;
  }
}

Table to_store_table(const TapTable& t) {
  std::vector<std::string> name, channel, surface, line, status;
  std::vector<double> x, y, len, dia, vol, off;
  std::vector<std::int64_t> row;
  for (const auto& tap : t.taps) {
    name.push_back(tap.name);
    channel.push_back(tap.channel);
    x.push_back(tap.x_over_c);
    y.push_back(tap.y_over_c);
    surface.emplace_back(surface_name(tap.surface));
    len.push_back(tap.tube_length_m);
    dia.push_back(tap.tube_diameter_m);
    vol.push_back(tap.volume_m3);
    off.push_back(tap.time_offset_s);
    line.push_back(tap.line);
    status.emplace_back(status_name(tap.status));
    row.push_back(tap.row);
  }
  Table out;
  out.add({"tap", "", name})
      .add({"channel", "", channel})
      .add({"x_over_c", "1", x})
      .add({"y_over_c", "1", y})
      .add({"surface", "", surface})
      .add({"tube_length_m", "m", len})
      .add({"tube_diameter_m", "m", dia})
      .add({"volume_m3", "m^3", vol})
      .add({"time_offset_s", "s", off})
      .add({"line", "", line})
      .add({"status", "", status})
      .add({"row", "", row});
  return out;
}

TapTable from_store_table(const Table& table, const std::string& source) {
  TapTable t;
  t.source = source;
  const auto& name = table.texts("tap");
  for (std::size_t i = 0; i < name.size(); ++i) {
    Tap tap;
    tap.name = name[i];
    tap.channel = table.texts("channel")[i];
    tap.x_over_c = table.numbers("x_over_c")[i];
    tap.y_over_c = table.numbers("y_over_c")[i];
    tap.surface = table.texts("surface")[i] == "upper" ? theory::Surface::kUpper : theory::Surface::kLower;
    tap.tube_length_m = table.numbers("tube_length_m")[i];
    tap.tube_diameter_m = table.numbers("tube_diameter_m")[i];
    tap.volume_m3 = table.numbers("volume_m3")[i];
    tap.time_offset_s = table.numbers("time_offset_s")[i];
    tap.line = table.texts("line")[i];
    const std::string& s = table.texts("status")[i];
    tap.status = s == "ok" ? TapStatus::kOk : s == "dead" ? TapStatus::kDead : TapStatus::kSuspect;
    tap.row = static_cast<int>(table.integers("row")[i]);
    t.taps.push_back(std::move(tap));
  }
  return t;
}

}  // namespace stallscope::calib
