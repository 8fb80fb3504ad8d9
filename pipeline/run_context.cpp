#include "pipeline/run_context.hpp"

#include <fstream>

#include "pipeline/errors.hpp"
#include "pipeline/sha256.hpp"

namespace stallscope {

namespace fs = std::filesystem;

static void check_readable(const fs::path& path, const std::string& role) {
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError(path.string(), role + " not found");
  if (!fs::is_regular_file(path, ec)) throw InputError(path.string(), role + " is not a regular file");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), role + " cannot be read (permissions?)");
}

const fs::path& RunContext::raw_input(const fs::path& path, const std::string& role) {
  check_readable(path, role);
  if (!perturbation_) provenance_.add_input(path, role);  // a replica reads what the nominal run hashed
  return path;
}

void RunContext::calibration_used(const std::string& id, const fs::path& file) {
  check_readable(file, "calibration file");
  if (!perturbation_) provenance_.add_calibration(id, file);
}

}  // namespace stallscope
