#pragma once
// `stallscope calib ...`: the calibration helpers run before a reduction, one
// subcommand of the main command line.
//   stallscope calib transducer SWEEP -o FILE [--degree N] [--id ID] [--date yyyy-mm-dd]
//       [--kind pressure_transducers|reference_pressure] [--max-residual-pa X] [--force]
//   stallscope calib piv-target IMAGE -o FILE [--pattern chessboard|circles]
//       [--columns N] [--rows N] --spacing-m S [--origin-x-m X] [--origin-y-m Y] [--id ID] [--force]
#include <functional>

namespace CLI {
class App;
}

namespace stallscope::calib {

struct CalibCommand {
  CLI::App* command = nullptr;  // true after parsing when `calib` was given
  std::function<int()> run;     // runs the chosen helper; InputError propagates (exit code 2)
};

// Adds `calib` with its subcommands to the main command line.
CalibCommand add_calib_command(CLI::App& app);

}  // namespace stallscope::calib
