#pragma once
// Provenance of a reduced run: enough to trace a result to its raw files,
// calibrations, settings and binary a year later. The runner fills it; stages
// only name the files they open (RunContext::raw_input).
#include <filesystem>
#include <string>
#include <vector>

namespace stallscope {

struct InputRecord {
  std::string path;  // absolute, as opened
  std::string role;  // "daq file", "tap table", ...
  std::uint64_t bytes = 0;
  std::string sha256;
};

struct CalibrationRecord {
  std::string id;
  std::string file;
  std::string sha256;
};

struct StageRecord {
  std::string name;
  double seconds = 0.0;
  std::string parameters;  // TOML of the options in force, defaults included
};

struct Provenance {
  std::string tool_version;
  std::string git_commit;
  std::string created_utc;
  std::string command_line;
  std::string host;
  std::string config_path;
  std::string config_toml;
  std::vector<InputRecord> inputs;
  std::vector<CalibrationRecord> calibrations;
  std::vector<StageRecord> stages;

  // Fills version, commit, UTC time and host.
  static Provenance start(std::string command_line);
  // Hashes the file now; a file already recorded is not hashed twice.
  void add_input(const std::filesystem::path& path, const std::string& role);
  void add_calibration(const std::string& id, const std::filesystem::path& file);
};

std::string utc_now_iso8601();

}  // namespace stallscope
