#include "calib/lines/lines_file.hpp"

#include <charconv>
#include <cmath>
#include <fmt/format.h>
#include <fstream>
#include <numbers>
#include <sstream>
#include <stdexcept>
#include <toml++/toml.h>

#include "pipeline/errors.hpp"

namespace stallscope::calib {

namespace {

constexpr double kMaxPhaseDeg = 1e6;

std::string read_text(const std::filesystem::path& path, const char* what) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), std::string(what) + " not found or not readable");
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string at(const std::filesystem::path& path, const toml::node* n, const std::string& key) {
  std::string s = path.string();
  if (n && n->source().begin.line > 0) s += ":" + std::to_string(n->source().begin.line);
  return s + ": " + key;
}

double positive(const toml::table& t, const char* key, const std::filesystem::path& path, const std::string& where,
                bool allow_zero) {
  const toml::node* n = t.get(key);
  std::optional<double> v;
  if (n) {
    if (auto d = n->value_exact<double>()) v = *d;
    else if (auto i = n->value_exact<std::int64_t>()) v = static_cast<double>(*i);
  }
  if (!v || !std::isfinite(*v) || *v < 0 || (!allow_zero && *v == 0))
    throw InputError(at(path, n ? n : &t, where + "." + key),
                     std::string("expected a number ") + (allow_zero ? ">= 0" : "> 0"));
  return *v;
}

}  // namespace

std::string LinesFile::where(const std::string& name) const {
  auto it = lines.find(name);
  return source + (it != lines.end() && it->second.line > 0 ? ":" + std::to_string(it->second.line) : "") +
         ": lines." + name;
}

LinesFile read_lines_file(const std::filesystem::path& path) {
  return parse_lines_file(read_text(path, "lines file"), path);
}

LinesFile parse_lines_file(const std::string& text, const std::filesystem::path& path) {
  toml::table t;
  try {
    t = toml::parse(text, path.string());
  } catch (const toml::parse_error& e) {
    throw InputError(path.string() + ":" + std::to_string(e.source().begin.line) + ":" +
                         std::to_string(e.source().begin.column),
                     "not valid TOML: " + std::string(e.description()));
  }
  LinesFile f;
  f.source = path.string();
  for (const auto& [k, n] : t)
    if (k.str() != "lines") throw InputError(at(path, &n, std::string(k.str())), "unknown key (expected [lines.NAME])");
  const toml::table* lines = t["lines"].as_table();
  if (!lines || lines->empty()) throw InputError(path.string(), "expected at least one [lines.NAME] table");
  for (const auto& [k, n] : *lines) {
    const std::string name(k.str()), key = "lines." + name;
    const toml::table* line = n.as_table();
    if (!line) throw InputError(at(path, &n, key), "expected a table");
    LineDefinition d;
    d.line = static_cast<int>(n.source().begin.line);
    for (const auto& [lk, ln] : *line)
      if (lk.str() != "segments" && lk.str() != "measured")
        throw InputError(at(path, &ln, key + "." + std::string(lk.str())), "unknown key (expected segments or measured)");
    const toml::node* seg = line->get("segments");
    const toml::node* measured = line->get("measured");
    if ((seg != nullptr) == (measured != nullptr))
      throw InputError(at(path, &n, key), "give exactly one of segments = [...] and measured = \"file.csv\"");
    if (seg) {
      const toml::array* a = seg->as_array();
      if (!a || a->empty()) throw InputError(at(path, seg, key + ".segments"), "expected an array of segment tables");
      for (std::size_t i = 0; i < a->size(); ++i) {
        const toml::table* s = (*a)[i].as_table();
        const std::string sk = key + ".segments[" + std::to_string(i) + "]";
        if (!s) throw InputError(at(path, seg, sk), "expected {length_m = ..., diameter_m = ..., volume_m3 = ...}");
        for (const auto& [sk2, sn] : *s)
          if (sk2.str() != "length_m" && sk2.str() != "diameter_m" && sk2.str() != "volume_m3")
            throw InputError(at(path, &sn, sk + "." + std::string(sk2.str())),
                             "unknown key (expected length_m, diameter_m, volume_m3)");
        TubeSegment ts;
        ts.length = positive(*s, "length_m", path, sk, false);
        ts.radius = 0.5 * positive(*s, "diameter_m", path, sk, false);
        ts.end_volume = s->get("volume_m3") ? positive(*s, "volume_m3", path, sk, true) : 0.0;
        d.segments.push_back(ts);
      }
    } else {
      auto p = measured->value_exact<std::string>();
      if (!p || p->empty()) throw InputError(at(path, measured, key + ".measured"), "expected a CSV file name");
      std::filesystem::path mp(*p);
      d.measured = mp.is_absolute() ? mp : (path.parent_path() / mp).lexically_normal();
    }
    f.lines.emplace(name, std::move(d));
  }
  return f;
}

std::complex<double> MeasuredResponse::at(double f) const {
  if (frequency_hz.empty() || f > frequency_hz.back() * (1 + 1e-12))
    throw std::invalid_argument("frequency above the measured response");
  // Segment [f0, f1] holding f, starting from (0, gain 1, phase 0).
  double f0 = 0, g0 = 1, p0 = 0;
  for (std::size_t i = 0; i < frequency_hz.size(); ++i) {
    const double f1 = frequency_hz[i], g1 = gain[i], p1 = phase_deg[i];
    if (f <= f1) {
      const double w = f1 > f0 ? (f - f0) / (f1 - f0) : 1.0;
      const double g = g0 + w * (g1 - g0), ph = (p0 + w * (p1 - p0)) * std::numbers::pi / 180.0;
      return std::polar(g, ph);
    }
    f0 = f1, g0 = g1, p0 = p1;
  }
  return std::polar(gain.back(), phase_deg.back() * std::numbers::pi / 180.0);
}

MeasuredResponse read_measured_response(const std::filesystem::path& path) {
  return parse_measured_response(read_text(path, "measured line response"), path.string());
}

namespace {
constexpr const char* kHeader = "frequency_hz,gain,phase_deg";
constexpr const char* kScatterHeader = "frequency_hz,gain,phase_deg,gain_std,phase_std_deg";
}  // namespace

MeasuredResponse MeasuredResponse::perturbed(const std::function<double(std::size_t)>& normal) const {
  MeasuredResponse r = *this;
  for (std::size_t k = 0; k < r.gain_std.size(); ++k) {
    // Two draws per row, told apart by the index: 2k for the gain, 2k + 1 for the phase.
    r.gain[k] = std::max(gain[k] + gain_std[k] * normal(2 * k), 1e-3 * gain[k]);
    r.phase_deg[k] = phase_deg[k] + phase_std_deg[k] * normal(2 * k + 1);
  }
  return r;
}

MeasuredResponse parse_measured_response(const std::string& text, const std::string& source) {
  MeasuredResponse r;
  std::istringstream in(text);
  std::string line;
  int row = 0;
  bool header = false;
  int fields = 3;
  double unwrap = 0.0, previous = 0.0;
  while (std::getline(in, line)) {
    ++row;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line.front() == '#') continue;
    const std::string where = source + ":" + std::to_string(row);
    std::string compact;
    for (char c : line)
      if (c != ' ' && c != '\t') compact += c;
    if (!header) {
      if (compact == kScatterHeader) fields = 5;
      else if (compact != kHeader)
        throw InputError(where, std::string("expected the header '") + kHeader + "' or '" + kScatterHeader + "'");
      header = true;
      continue;
    }
    double v[5];
    std::size_t start = 0;
    for (int i = 0; i < fields; ++i) {
      const std::size_t comma = compact.find(',', start);
      if ((i < fields - 1) == (comma == std::string::npos))
        throw InputError(where, "expected " + std::to_string(fields) + " fields");
      const std::string field = compact.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
      auto [p, ec] = std::from_chars(field.data(), field.data() + field.size(), v[i]);
      if (ec != std::errc() || p != field.data() + field.size() || !std::isfinite(v[i]))
        throw InputError(where, "expected a finite number, found '" + field + "'");
      start = comma + 1;
    }
    if (v[0] < 0 || (!r.frequency_hz.empty() && v[0] <= r.frequency_hz.back()))
      throw InputError(where, "frequency_hz must be >= 0 and increasing");
    if (!(v[1] > 0)) throw InputError(where, "gain must be > 0");
    if (fields == 5 && (v[3] < 0 || v[4] < 0)) throw InputError(where, "gain_std and phase_std_deg must be >= 0");
    // A long line lags some thousands of degrees at kHz; a million is a broken file.
    if (std::abs(v[2]) > kMaxPhaseDeg)
      throw InputError(where, fmt::format("phase_deg must be within +-{:g} degrees, found '{}'", kMaxPhaseDeg, v[2]));
    // Unwrap the phase so interpolation never jumps across +-180 degrees: whole
    // turns in one step, so the work does not grow with the size of the jump.
    double ph = v[2] + unwrap;
    if (!r.phase_deg.empty()) {
      const double turns = std::ceil((ph - previous - 180.0) / 360.0);
      ph -= 360.0 * turns, unwrap -= 360.0 * turns;
    }
    previous = ph;
    r.frequency_hz.push_back(v[0]);
    r.gain.push_back(v[1]);
    r.phase_deg.push_back(ph);
    if (fields == 5) r.gain_std.push_back(v[3]), r.phase_std_deg.push_back(v[4]);
  }
  if (r.frequency_hz.empty()) throw InputError(source, std::string("expected the header '") + kHeader + "' and rows");
  return r;
}

}  // namespace stallscope::calib
