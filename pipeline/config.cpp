#include "pipeline/config.hpp"

#include <algorithm>
#include <fstream>
#include <sstream>

#include "pipeline/errors.hpp"

namespace stallscope {

namespace fs = std::filesystem;

ConfigFile ConfigFile::load(const fs::path& path) {
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError(path.string(), "config file not found");
  if (fs::is_directory(path, ec)) throw InputError(path.string(), "expected a TOML config file, found a folder");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "config file cannot be read");
  std::ostringstream text;
  text << in.rdbuf();
  return parse(text.str(), path);
}

ConfigFile ConfigFile::parse(std::string text, const fs::path& path) {
  ConfigFile f;
  f.path_ = path;
  f.directory_ = path.has_parent_path() ? path.parent_path() : fs::path(".");
  f.text_ = std::move(text);
  try {
    f.table_ = toml::parse(f.text_, path.string());
  } catch (const toml::parse_error& e) {
    const auto& b = e.source().begin;
    throw InputError(path.string() + ":" + std::to_string(b.line) + ":" + std::to_string(b.column),
                     "not valid TOML: " + std::string(e.description()));
  }
  return f;
}

ConfigSection::ConfigSection(const ConfigFile& file, std::string name)
    : file_(&file), name_(std::move(name)), table_(nullptr) {
  const toml::table* t = &file.table();
  std::string rest = name_;
  while (t && !rest.empty()) {
    auto dot = rest.find('.');
    std::string head = rest.substr(0, dot);
    rest = dot == std::string::npos ? "" : rest.substr(dot + 1);
    const toml::node* n = t->get(head);
    if (n && !n->is_table()) throw InputError(where(""), "expected a table [" + name_ + "]");
    t = n ? n->as_table() : nullptr;
  }
  table_ = t;
}

ConfigSection::ConfigSection(const ConfigFile& file, std::string name, const toml::table* table)
    : file_(&file), name_(std::move(name)), table_(table) {}

std::string ConfigSection::where(const std::string& key) const {
  std::string at = file_->path().string();
  // TOML++ records where each value (and table) begins; that is the line the user looks at.
  toml::source_position pos{};
  if (key.empty() && table_) pos = table_->source().begin;
  if (const toml::node* n = key.empty() ? nullptr : find(key)) pos = n->source().begin;
  if (pos.line > 0) at += ":" + std::to_string(pos.line) + ":" + std::to_string(pos.column);
  std::string dotted = name_.empty() ? key : (key.empty() ? name_ : name_ + "." + key);
  return dotted.empty() ? at : at + ": " + dotted;
}

const toml::node* ConfigSection::find(const std::string& key) const {
  return table_ ? table_->get(key) : nullptr;
}

bool ConfigSection::has(const std::string& key) const { return find(key) != nullptr; }

void ConfigSection::wrong_type(const std::string& key, const char* expected) const {
  throw InputError(where(key), std::string("expected ") + expected);
}

void ConfigSection::missing(const std::string& key, const char* expected) const {
  throw InputError(where(""), "required key '" + key + "' (" + expected + ") is missing" +
                                  (name_.empty() ? "" : " in [" + name_ + "]"));
}

template <typename T>
void ConfigSection::record(const std::string& key, T value) {
  asked_.push_back(key);
  used_.insert_or_assign(key, std::move(value));
}

double ConfigSection::number(const std::string& key, double fallback) {
  const toml::node* n = find(key);
  double v = fallback;
  if (n) {
    if (auto d = n->value_exact<double>()) v = *d;
    else if (auto i = n->value_exact<std::int64_t>()) v = static_cast<double>(*i);
    else wrong_type(key, "a number");
  }
  record(key, v);
  return v;
}

double ConfigSection::number(const std::string& key) {
  if (!find(key)) missing(key, "a number");
  return number(key, 0.0);
}

std::int64_t ConfigSection::integer(const std::string& key, std::int64_t fallback) {
  const toml::node* n = find(key);
  std::int64_t v = fallback;
  if (n) {
    if (auto i = n->value_exact<std::int64_t>()) v = *i;
    else wrong_type(key, "a whole number");
  }
  record(key, v);
  return v;
}

std::int64_t ConfigSection::integer(const std::string& key) {
  if (!find(key)) missing(key, "a whole number");
  return integer(key, 0);
}

bool ConfigSection::boolean(const std::string& key, bool fallback) {
  const toml::node* n = find(key);
  bool v = fallback;
  if (n) {
    if (auto b = n->value_exact<bool>()) v = *b;
    else wrong_type(key, "true or false");
  }
  record(key, v);
  return v;
}

std::string ConfigSection::text(const std::string& key, const std::string& fallback) {
  const toml::node* n = find(key);
  std::string v = fallback;
  if (n) {
    if (auto s = n->value_exact<std::string>()) v = *s;
    else wrong_type(key, "a string");
  }
  record(key, v);
  return v;
}

std::string ConfigSection::text(const std::string& key) {
  if (!find(key)) missing(key, "a string");
  return text(key, "");
}

std::string ConfigSection::choice(const std::string& key, const std::vector<std::string>& allowed,
                                  const std::string& fallback) {
  std::string v = text(key, fallback);
  for (const auto& a : allowed)
    if (a == v) return v;
  std::string list;
  for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + ("'" + a + "'");
  throw InputError(where(key), "expected one of " + list + ", found '" + v + "'");
}

std::vector<std::string> ConfigSection::texts(const std::string& key, const std::vector<std::string>& fallback) {
  const toml::node* n = find(key);
  std::vector<std::string> v = fallback;
  if (n) {
    const toml::array* a = n->as_array();
    if (!a) wrong_type(key, "an array of strings");
    v.clear();
    for (const auto& e : *a) {
      auto s = e.value_exact<std::string>();
      if (!s) wrong_type(key, "an array of strings");
      v.push_back(*s);
    }
  }
  toml::array out;
  for (const auto& s : v) out.push_back(s);
  record(key, std::move(out));
  return v;
}

std::vector<double> ConfigSection::numbers(const std::string& key, const std::vector<double>& fallback) {
  const toml::node* n = find(key);
  std::vector<double> v = fallback;
  if (n) {
    const toml::array* a = n->as_array();
    if (!a) wrong_type(key, "an array of numbers");
    v.clear();
    for (const auto& e : *a) {
      if (auto d = e.value_exact<double>()) v.push_back(*d);
      else if (auto i = e.value_exact<std::int64_t>()) v.push_back(static_cast<double>(*i));
      else wrong_type(key, "an array of numbers");
    }
  }
  toml::array out;
  for (double d : v) out.push_back(d);
  record(key, std::move(out));
  return v;
}

fs::path ConfigSection::path(const std::string& key) {
  if (!find(key)) missing(key, "a file path");
  auto p = optional_path(key);
  return *p;
}

std::optional<fs::path> ConfigSection::optional_path(const std::string& key) {
  if (!find(key)) {
    asked_.push_back(key);
    return std::nullopt;
  }
  fs::path p = text(key, "");
  if (p.empty()) throw InputError(where(key), "expected a file path, found an empty string");
  return p.is_absolute() ? p : (file_->directory() / p).lexically_normal();
}

void ConfigSection::require(bool ok, const std::string& key, const std::string& rule) const {
  if (!ok) throw InputError(where(key), rule);
}

ConfigSection ConfigSection::subsection(const std::string& key) {
  asked_.push_back(key);
  const toml::node* n = find(key);
  if (n && !n->is_table()) wrong_type(key, "a table");
  return ConfigSection(*file_, name_.empty() ? key : name_ + "." + key, n ? n->as_table() : nullptr);
}

std::vector<std::string> ConfigSection::keys() const {
  std::vector<std::pair<toml::source_position, std::string>> ordered;
  if (table_)
    for (const auto& [k, n] : *table_) ordered.emplace_back(n.source().begin, std::string(k.str()));
  std::sort(ordered.begin(), ordered.end(), [](const auto& a, const auto& b) {
    return a.first.line != b.first.line ? a.first.line < b.first.line : a.first.column < b.first.column;
  });
  std::vector<std::string> out;
  for (auto& [_, k] : ordered) out.push_back(std::move(k));
  return out;
}

void ConfigSection::reject_unknown_keys() const {
  if (!table_) return;
  for (const auto& k : keys()) {
    if (std::find(asked_.begin(), asked_.end(), k) != asked_.end()) continue;
    std::string known;
    for (const auto& a : asked_)
      if (known.find("'" + a + "'") == std::string::npos) known += (known.empty() ? "" : ", ") + ("'" + a + "'");
    throw InputError(where(k), "unknown key" + (known.empty() ? std::string() : " (expected one of " + known + ")"));
  }
}

std::string ConfigSection::parameters_toml() const {
  std::ostringstream out;
  out << toml::toml_formatter(used_);
  return out.str();
}

}  // namespace stallscope
