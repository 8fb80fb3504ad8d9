#include "calib/transducers/transducer_command.hpp"

#include <CLI/CLI.hpp>

#include <cstdio>
#include <iostream>
#include <string>

#include "calib/transducers/sweep_fit.hpp"

namespace stallscope::calib {

std::optional<int> run_transducer_command(int argc, char** argv) {
  if (argc < 3 || std::string(argv[1]) != "calib" || std::string(argv[2]) != "transducer") return std::nullopt;
  CLI::App app{"fit pressure-transducer polynomials from a sweep CSV (applied_pa,<channel>,... one row per step)"};
  app.name("stallscope calib transducer");
  TransducerFitRequest r;
  app.add_option("sweep", r.sweep, "sweep CSV: applied_pa,<channel>,... one row per step (mean volts)")->required();
  app.add_option("-o,--output", r.output, "calibration file to write (TOML)")->required();
  app.add_option("--degree", r.degree, "polynomial degree")->capture_default_str()->check(CLI::Range(1, 5));
  app.add_option("--id", r.id, "calibration id (default: the sweep file's name)");
  app.add_option("--date", r.date, "calibration date yyyy-mm-dd (default: today, UTC)");
  app.add_option("--kind", r.kind, "pressure_transducers or reference_pressure")
      ->check(CLI::IsMember({"pressure_transducers", "reference_pressure"}))
      ->capture_default_str();
  app.add_option("--max-residual-pa", r.max_residual_pa,
                 "rms residual above which a channel's fit is flagged poor (default: 0.25 % of the applied range)");
  app.add_flag("--force", r.force, "replace an existing calibration file");
  try {
    app.parse(argc - 2, argv + 2);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::fprintf(stderr, "stallscope: error: %s (see stallscope calib transducer --help)\n", e.what());
    return 2;
  }
  return run_transducer_fit(r, std::cout);
}

}  // namespace stallscope::calib
