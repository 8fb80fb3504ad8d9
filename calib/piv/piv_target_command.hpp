#pragma once
// `stallscope calib ...`: calibration helpers that run before a reduction.
//   stallscope calib piv-target IMAGE -o FILE [--pattern chessboard|circles]
//       [--columns N] [--rows N] --spacing-m S [--origin-x-m X] [--origin-y-m Y] [--id ID] [--force]
#include <optional>

namespace stallscope::calib {

// nullopt unless argv[1] is "calib"; otherwise runs it and returns the exit
// code (InputError propagates to main, which makes it exit code 2).
std::optional<int> run_calib_command(int argc, char** argv);

}  // namespace stallscope::calib
