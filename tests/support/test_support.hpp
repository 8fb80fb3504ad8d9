#pragma once
// Shared test helpers: a scratch folder removed afterwards, running the
// stallscope binary or a Debian python3 script and capturing what it printed.
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>

namespace stallscope::testing {

inline const std::filesystem::path kSourceDir = STALLSCOPE_SOURCE_DIR;
inline const std::filesystem::path kBinary = STALLSCOPE_BINARY;
// Debian's interpreter, which has numpy, scipy and h5py (the one on PATH may not).
inline const char* kPython = "/usr/bin/python3";

class ScratchDir {
 public:
  ScratchDir() {
    std::random_device rd;
    path_ = std::filesystem::temp_directory_path() / ("stallscope-test-" + std::to_string(getpid()) + "-" +
                                                      std::to_string(rd()));
    std::filesystem::create_directories(path_);
  }
  ~ScratchDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  const std::filesystem::path& path() const { return path_; }
  std::filesystem::path operator/(const std::string& name) const { return path_ / name; }
  // Writes text to a file in this folder and returns its path.
  std::filesystem::path write(const std::string& name, const std::string& text) const {
    auto p = path_ / name;
    std::filesystem::create_directories(p.parent_path());
    std::ofstream(p, std::ios::binary) << text;
    return p;
  }

 private:
  std::filesystem::path path_;
};

struct CommandResult {
  int exit_code = -1;
  std::string out, err;
};

inline std::string shell_quote(const std::string& s) {
  std::string q = "'";
  for (char c : s) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

inline std::string read_text(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

// Runs a shell command line, capturing stdout and stderr separately.
inline CommandResult run_command(const std::string& command_line) {
  ScratchDir tmp;
  const auto out = tmp / "out.txt", err = tmp / "err.txt";
  std::string cmd = command_line + " >" + shell_quote(out.string()) + " 2>" + shell_quote(err.string()) + " </dev/null";
  int status = std::system(cmd.c_str());
  CommandResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = read_text(out);
  r.err = read_text(err);
  return r;
}

inline CommandResult run_stallscope(const std::string& args) {
  return run_command(shell_quote(kBinary.string()) + " " + args);
}

inline CommandResult run_python(const std::filesystem::path& script, const std::string& args) {
  return run_command(std::string(kPython) + " " + shell_quote(script.string()) + " " + args);
}

inline int count_lines(const std::string& s) {
  int n = 0;
  for (char c : s) n += c == '\n';
  return n;
}

}  // namespace stallscope::testing
