#pragma once
// `stallscope calib transducer SWEEP -o FILE [--degree N] [--id ID] [--date yyyy-mm-dd]
//  [--kind pressure_transducers|reference_pressure] [--max-residual-pa X] [--force]`.
#include <optional>

namespace stallscope::calib {

// nullopt unless argv[1..2] are "calib transducer"; otherwise parses the rest,
// runs run_transducer_fit and returns the exit code (InputError propagates to
// main: exit code 2).
std::optional<int> run_transducer_command(int argc, char** argv);

}  // namespace stallscope::calib
