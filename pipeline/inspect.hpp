#pragma once
// `stallscope inspect` and `stallscope verify`: reading an archive back.
#include <filesystem>
#include <string>
#include <vector>

namespace stallscope {

// A compact human summary: run conditions, what the archive holds, stages
// with their times, event statistics if present, provenance.
std::string inspect_archive(const std::filesystem::path& archive);

struct InputCheck {
  std::string path, role;
  enum class State { kSame, kChanged, kMissing } state;
};

// Re-hashes every raw input named in provenance.
std::vector<InputCheck> verify_archive(const std::filesystem::path& archive);
std::string describe(const std::vector<InputCheck>& checks);

}  // namespace stallscope
