#include "calib/transducers/calibration_file.hpp"

#include <cmath>
#include <cstdio>
#include <stdexcept>
#include <fmt/format.h>
#include <fstream>
#include <sstream>
#include <toml++/toml.h>

#include "pipeline/errors.hpp"

namespace stallscope::calib {

namespace {

struct KindWord {
  CalibrationKind kind;
  std::string_view word;
};
constexpr KindWord kKinds[] = {{CalibrationKind::kPressureTransducers, "pressure_transducers"},
                               {CalibrationKind::kAngleEncoder, "angle_encoder"},
                               {CalibrationKind::kReferencePressure, "reference_pressure"},
                               {CalibrationKind::kTemperature, "temperature"}};

std::string at(const std::filesystem::path& path, const toml::node* node, const std::string& key) {
  std::string s = path.string();
  if (node && node->source().begin.line > 0) s += ":" + std::to_string(node->source().begin.line);
  return key.empty() ? s : s + ": " + key;
}

double number_of(const toml::node& n, const std::filesystem::path& path, const std::string& key) {
  if (auto d = n.value_exact<double>()) return *d;
  if (auto i = n.value_exact<std::int64_t>()) return static_cast<double>(*i);
  throw InputError(at(path, &n, key), "expected a number");
}

}  // namespace

std::string_view kind_name(CalibrationKind kind) {
  for (const auto& k : kKinds)
    if (k.kind == kind) return k.word;
  return "?";
}

double ChannelCalibration::evaluate(double v) const {
  double p = 0.0;
  for (auto it = coefficients.rbegin(); it != coefficients.rend(); ++it) p = p * v + *it;
  return p;
}

Eigen::VectorXd ChannelCalibration::evaluate(Eigen::Ref<const Eigen::VectorXd> v) const {
  // Horner's rule, as the scalar form, from the leading coefficient (a pass saved).
  Eigen::VectorXd p = Eigen::VectorXd::Constant(v.size(), coefficients.empty() ? 0.0 : coefficients.back());
  for (std::size_t k = coefficients.size(); k-- > 1;) p.array() = p.array() * v.array() + coefficients[k - 1];
  return p;
}

double ChannelCalibration::temperature_factor(double temperature_c) const {
  return 1.0 / (1.0 + temperature_coefficient_per_k * (temperature_c - reference_temperature_c));
}

std::string CalibrationFile::where(const std::string& channel) const {
  auto it = channels.find(channel);
  std::string s = source.string();
  if (it != channels.end() && it->second.line > 0) s += ":" + std::to_string(it->second.line);
  return s + ": channels." + channel;
}

CalibrationFile read_calibration_file(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "calibration file not found or not readable");
  std::ostringstream text;
  text << in.rdbuf();
  return parse_calibration(text.str(), path);
}

CalibrationFile parse_calibration(const std::string& text, const std::filesystem::path& path) {
  toml::table t;
  try {
    t = toml::parse(text, path.string());
  } catch (const toml::parse_error& e) {
    throw InputError(path.string() + ":" + std::to_string(e.source().begin.line) + ":" +
                         std::to_string(e.source().begin.column),
                     "not valid TOML: " + std::string(e.description()));
  }
  CalibrationFile f;
  f.source = path;
  for (const auto& [k, n] : t) {
    const std::string key(k.str());
    if (key != "id" && key != "date" && key != "kind" && key != "channels")
      throw InputError(at(path, &n, key), "unknown key (expected id, date, kind, [channels.<name>])");
  }
  const toml::node* id = t.get("id");
  if (!id || !id->value_exact<std::string>() || id->value_exact<std::string>()->empty())
    throw InputError(at(path, id, "id"), "expected a non-empty string id naming this calibration");
  f.id = *id->value_exact<std::string>();
  const toml::node* date = t.get("date");
  if (!date || !date->is_date())
    throw InputError(at(path, date, "date"), "expected a TOML date such as 2026-11-20");
  const toml::date d = *date->value_exact<toml::date>();
  f.date = fmt::format("{:04}-{:02}-{:02}", d.year, static_cast<int>(d.month), static_cast<int>(d.day));
  const toml::node* kind = t.get("kind");
  std::string kind_word = kind && kind->value_exact<std::string>() ? *kind->value_exact<std::string>() : "";
  bool known = false;
  for (const auto& k : kKinds)
    if (k.word == kind_word) f.kind = k.kind, known = true;
  if (!known)
    throw InputError(at(path, kind, "kind"),
                     "expected one of 'pressure_transducers', 'angle_encoder', 'reference_pressure', 'temperature'");
  const toml::table* channels = t["channels"].as_table();
  if (!channels || channels->empty())
    throw InputError(at(path, t.get("channels"), "channels"), "expected at least one [channels.<daq channel>] table");
  for (const auto& [k, n] : *channels) {
    const std::string name(k.str());
    const std::string key = "channels." + name;
    const toml::table* c = n.as_table();
    if (!c) throw InputError(at(path, &n, key), "expected a table [" + key + "]");
    ChannelCalibration cal;
    cal.line = static_cast<int>(n.source().begin.line);
    for (const auto& [ck, cn] : *c) {
      const std::string field(ck.str());
      const std::string fkey = key + "." + field;
      if (field == "coefficients") {
        const toml::array* a = cn.as_array();
        if (!a || a->empty()) throw InputError(at(path, &cn, fkey), "expected an array of numbers [c0, c1, ...]");
        for (const auto& e : *a) cal.coefficients.push_back(number_of(e, path, fkey));
      } else if (field == "temperature_coefficient_per_k") {
        cal.temperature_coefficient_per_k = number_of(cn, path, fkey);
      } else if (field == "reference_temperature_c") {
        cal.reference_temperature_c = number_of(cn, path, fkey);
      } else if (field == "residual_pa" || field == "residual") {
        cal.residual = number_of(cn, path, fkey);
        if (cal.residual < 0) throw InputError(at(path, &cn, fkey), "expected an rms residual >= 0");
      } else {
        throw InputError(at(path, &cn, fkey),
                         "unknown key (expected coefficients, temperature_coefficient_per_k, "
                         "reference_temperature_c, residual_pa)");
      }
    }
    if (cal.coefficients.empty()) throw InputError(at(path, &n, key), "required key 'coefficients' is missing");
    for (double v : cal.coefficients)
      if (!std::isfinite(v)) throw InputError(at(path, &n, key + ".coefficients"), "coefficients must be finite");
    if (cal.coefficients.size() < 2 || cal.coefficients[1] == 0.0)
      throw InputError(at(path, &n, key + ".coefficients"), "expected a non-zero sensitivity c1");
    f.channels.emplace(name, std::move(cal));
  }
  return f;
}

// Built as a TOML++ table and printed by its formatter, so an id or a channel
// name holding quotes, backslashes, dots or spaces is escaped or quoted, and
// every double is written with enough digits to read back exactly.
std::string format_calibration(const CalibrationFile& f) {
  int year = 0, month = 0, day = 0;
  if (std::sscanf(f.date.c_str(), "%4d-%2d-%2d", &year, &month, &day) != 3)
    throw std::logic_error("calibration date '" + f.date + "' is not yyyy-mm-dd");
  toml::table channels;
  for (const auto& [name, c] : f.channels) {
    toml::array coefficients;
    for (double v : c.coefficients) coefficients.push_back(v);
    toml::table t{{"coefficients", std::move(coefficients)}};
    if (c.temperature_coefficient_per_k != 0.0) {
      t.insert("temperature_coefficient_per_k", c.temperature_coefficient_per_k);
      t.insert("reference_temperature_c", c.reference_temperature_c);
    }
    if (c.residual >= 0) t.insert("residual_pa", c.residual);
    channels.insert(name, std::move(t));
  }
  const toml::table file{{"id", f.id},
                         {"date", toml::date{year, month, day}},
                         {"kind", std::string(kind_name(f.kind))},
                         {"channels", std::move(channels)}};
  std::ostringstream out;
  out << toml::toml_formatter(file) << "\n";
  return out.str();
}

}  // namespace stallscope::calib
