#pragma once
// Strict TOML configuration. A section is read through ConfigSection, which
// remembers every key it was asked for (with the value in force, default or
// not) so that unknown keys can be reported and the parameters a stage ran
// with go into provenance as TOML.
#include <filesystem>
#include <optional>
#include <string>
#include <vector>
#include <toml++/toml.h>

namespace stallscope {

// A parsed config file: its path, text and table. Throws InputError naming the
// file (and line:column for syntax errors) when it cannot be read or parsed.
class ConfigFile {
 public:
  static ConfigFile load(const std::filesystem::path& path);
  static ConfigFile parse(std::string text, const std::filesystem::path& path);

  const std::filesystem::path& path() const { return path_; }
  const std::filesystem::path& directory() const { return directory_; }
  const std::string& text() const { return text_; }
  const toml::table& table() const { return table_; }

 private:
  std::filesystem::path path_, directory_;
  std::string text_;
  toml::table table_;
};

class ConfigSection {
 public:
  // name is the dotted path of the section ("tubing", "daq.channels"); an
  // absent section reads as empty, so every key takes its default.
  ConfigSection(const ConfigFile& file, std::string name);
  ConfigSection(const ConfigFile& file, std::string name, const toml::table* table);

  bool present() const { return table_ != nullptr; }
  bool has(const std::string& key) const;
  const std::string& name() const { return name_; }

  // Typed reads. A wrong type is an InputError at the key's line and column.
  double number(const std::string& key, double fallback);
  double number(const std::string& key);  // required
  std::int64_t integer(const std::string& key, std::int64_t fallback);
  std::int64_t integer(const std::string& key);
  bool boolean(const std::string& key, bool fallback);
  std::string text(const std::string& key, const std::string& fallback);
  std::string text(const std::string& key);
  // One of a fixed set of words, e.g. motion = "sine" | "ramp" | "static".
  std::string choice(const std::string& key, const std::vector<std::string>& allowed,
                     const std::string& fallback);
  std::vector<std::string> texts(const std::string& key, const std::vector<std::string>& fallback);
  std::vector<double> numbers(const std::string& key, const std::vector<double>& fallback);
  // A file path, resolved relative to the config file's folder.
  std::filesystem::path path(const std::string& key);
  std::optional<std::filesystem::path> optional_path(const std::string& key);

  // A range check that names the key: "must be > 0", etc.
  void require(bool ok, const std::string& key, const std::string& rule) const;

  ConfigSection subsection(const std::string& key);
  // Keys of a free-form table (e.g. channel roles), in file order.
  std::vector<std::string> keys() const;

  // Throws InputError for the first key nobody asked for.
  void reject_unknown_keys() const;
  // The keys read, with the values in force, as a TOML table (provenance).
  std::string parameters_toml() const;
  const toml::table& used() const { return used_; }

  // "file:line:column: section.key" for messages about a key.
  std::string where(const std::string& key) const;

 private:
  const toml::node* find(const std::string& key) const;
  [[noreturn]] void wrong_type(const std::string& key, const char* expected) const;
  [[noreturn]] void missing(const std::string& key, const char* expected) const;
  template <typename T>
  void record(const std::string& key, T value);

  const ConfigFile* file_;
  std::string name_;
  const toml::table* table_;
  toml::table used_;
  std::vector<std::string> asked_;
};

}  // namespace stallscope
