#pragma once
// Reduces one tunnel run: config -> stages -> schedule -> run -> archive.
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/progress.hpp"
#include "pipeline/provenance.hpp"

namespace stallscope {

struct ReduceRequest {
  std::filesystem::path config;
  std::filesystem::path output_directory = ".";
  bool force = false;
  int threads = 0;  // 0: all cores
  std::string command_line;
  // A config given as text (a campaign's base config with per-run overrides):
  // parsed instead of reading `config`, which then only names it and anchors
  // its relative paths; `config_sources` are the files it was made from.
  std::string config_text;
  std::vector<std::filesystem::path> config_sources;
};

struct ReduceSummary {
  std::string run_name;
  std::filesystem::path archive;
  std::vector<StageRecord> stages;
  double seconds = 0.0;
  // A few lines: archive path, stages with their times.
  std::string brief() const;
};

ReduceSummary reduce(const ReduceRequest& request, Progress& progress);

}  // namespace stallscope
