#pragma once
// Writes one synthetic tunnel run into a folder, in the project's raw input
// formats, with its ground truth:
//   daq.h5 | daq.csv      DAQ record (time_s, volts; channels alpha_enc, q_pitot,
//                         p_static, t_air, [cam_trigger], p01..pNN)
//   taps.csv, lines.toml  tap table (nominal tubing) and multi-segment lines
//   calib_taps.toml, calib_encoder.toml, calib_reference.toml, calib_temperature.toml
//   piv.h5                PIV stack (when [piv] is enabled)
//   truth.h5, truth_events.csv   ground truth from the generator's physical state
//   reduce.toml           a ready-to-reduce run config (stages that exist)
//   scenario.toml         the scenario, copied
// Files are written under a staging folder and moved in only when all are complete.
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/progress.hpp"
#include "tools/synth/scenario.hpp"

namespace stallscope::synth {

struct SynthSummary {
  std::filesystem::path directory;
  std::vector<std::filesystem::path> files;
  std::int64_t samples = 0;
  std::int64_t frames = 0;
  int cycles_with_stall = 0;
  std::string brief() const;
};

// Throws InputError if the folder already holds a run and !force.
SynthSummary write_synthetic_run(const Scenario& scenario, const std::filesystem::path& directory, bool force,
                                 Progress& progress);

// The tap names and channel order the writer uses (for tests and the demo config).
std::vector<std::string> tap_names(const Scenario& scenario);

}  // namespace stallscope::synth
