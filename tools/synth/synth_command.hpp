#pragma once
// `stallscope synth SCENARIO.toml -o DIR`: write one synthetic run with its truth.
#include <filesystem>

namespace stallscope {

struct SynthRequest {
  std::filesystem::path scenario;
  std::filesystem::path output_directory = ".";
  bool force = false;  // overwrite a run already in the folder
  bool quiet = false;
};

// Returns the exit code (0). Bad scenarios throw InputError (exit 2).
int run_synth(const SynthRequest& request);

}  // namespace stallscope
