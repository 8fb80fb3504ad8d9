#pragma once
// Shared by the libFuzzer harnesses: a scratch folder in memory for parsers
// that read files, and the one rule every harness checks — bad input may only
// ever surface as stallscope::InputError; anything else (a crash, a sanitizer
// report, std::logic_error, std::bad_variant_access ...) is a finding.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <string>
#include <string_view>

#include "pipeline/errors.hpp"

namespace stallscope::fuzz {

// One folder per fuzzing process, in /dev/shm when there is one (no disk I/O).
inline const std::filesystem::path& scratch_dir() {
  static const std::filesystem::path dir = [] {
    namespace fs = std::filesystem;
    fs::path base = fs::exists("/dev/shm") ? fs::path("/dev/shm") : fs::temp_directory_path();
    auto d = base / ("stallscope-fuzz-" + std::to_string(getpid()));
    std::filesystem::create_directories(d);
    return d;
  }();
  return dir;
}

inline std::filesystem::path write_file(const std::string& name, std::string_view bytes) {
  auto p = scratch_dir() / name;
  std::ofstream(p, std::ios::binary | std::ios::trunc).write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
  return p;
}

inline std::string_view as_text(const std::uint8_t* data, std::size_t size) {
  return {reinterpret_cast<const char*>(data), size};
}

// Runs one parse; an InputError is the expected answer to bad input.
template <typename F>
void expect_only_input_errors(F&& parse) {
  try {
    parse();
  } catch (const InputError&) {
  }
}

}  // namespace stallscope::fuzz
