#include "pipeline/provenance.hpp"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <ctime>

#include "pipeline/sha256.hpp"
#include "stallscope/version.hpp"

namespace stallscope {

namespace fs = std::filesystem;

std::string utc_now_iso8601() {
  std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

Provenance Provenance::start(std::string command_line) {
  Provenance p;
  p.tool_version = kToolVersion;
  p.git_commit = kGitCommit;
  p.created_utc = utc_now_iso8601();
  p.command_line = std::move(command_line);
  char host[256] = {};
  if (gethostname(host, sizeof host - 1) == 0) p.host = host;
  return p;
}

void Provenance::add_input(const fs::path& path, const std::string& role) {
  std::string abs = fs::absolute(path).lexically_normal().string();
  if (std::any_of(inputs.begin(), inputs.end(), [&](const InputRecord& r) { return r.path == abs; })) return;
  inputs.push_back({abs, role, static_cast<std::uint64_t>(fs::file_size(path)), sha256_file(path)});
}

void Provenance::add_calibration(const std::string& id, const fs::path& file) {
  std::string abs = fs::absolute(file).lexically_normal().string();
  for (const auto& c : calibrations)
    if (c.id == id && c.file == abs) return;
  calibrations.push_back({id, abs, sha256_file(file)});
  add_input(file, "calibration file");
}

}  // namespace stallscope
