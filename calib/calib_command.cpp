#include "calib/calib_command.hpp"

#include <CLI/CLI.hpp>

#include <iostream>
#include <memory>

#include "calib/piv/piv_target.hpp"
#include "calib/transducers/sweep_fit.hpp"

namespace stallscope::calib {

CalibCommand add_calib_command(CLI::App& app) {
  auto* calib = app.add_subcommand("calib", "calibration helpers run before a reduction");
  calib->require_subcommand(1);

  auto fit = std::make_shared<TransducerFitRequest>();
  auto* transducer = calib->add_subcommand(
      "transducer", "fit pressure-transducer polynomials from a sweep CSV (applied_pa,<channel>,... one row per step)");
  transducer->add_option("sweep", fit->sweep, "sweep CSV: applied_pa,<channel>,... one row per step (mean volts)")
      ->required();
  transducer->add_option("-o,--output", fit->output, "calibration file to write (TOML)")->required();
  transducer->add_option("--degree", fit->degree, "polynomial degree")->capture_default_str()->check(CLI::Range(1, 5));
  transducer->add_option("--id", fit->id, "calibration id (default: the sweep file's name)");
  transducer->add_option("--date", fit->date, "calibration date yyyy-mm-dd (default: today, UTC)");
  transducer->add_option("--kind", fit->kind, "pressure_transducers or reference_pressure")
      ->check(CLI::IsMember({"pressure_transducers", "reference_pressure"}))
      ->capture_default_str();
  transducer->add_option("--max-residual-pa", fit->max_residual_pa,
                         "rms residual above which a channel's fit is flagged poor (default: 0.25 % of the applied "
                         "range)");
  transducer->add_flag("--force", fit->force, "replace an existing calibration file");

  auto target = std::make_shared<PivTargetRequest>();
  auto* piv = calib->add_subcommand("piv-target", "PIV spatial calibration (pixel -> lab metres) from a target image");
  piv->add_option("image", target->image, "image of the target in the light sheet (PNG, TIFF, PGM ...)")->required();
  piv->add_option("-o,--output", target->output, "calibration file to write (TOML)")->required();
  piv->add_option("--pattern", target->target.pattern, "chessboard (inner corners) or circles (dot grid)")
      ->check(CLI::IsMember({"chessboard", "circles"}))
      ->capture_default_str();
  piv->add_option("--columns", target->target.columns, "points per row")
      ->check(CLI::Range(2, 1000))
      ->capture_default_str();
  piv->add_option("--rows", target->target.rows, "rows of points")->check(CLI::Range(2, 1000))->capture_default_str();
  piv->add_option("--spacing-m", target->target.spacing_m, "distance between neighbouring points, m")
      ->required()
      ->check(CLI::PositiveNumber);
  piv->add_option("--origin-x-m", target->target.origin_x_m, "lab x of the top-left point, m")->capture_default_str();
  piv->add_option("--origin-y-m", target->target.origin_y_m, "lab y of the top-left point, m")->capture_default_str();
  piv->add_option("--id", target->id, "calibration id (default: the image's name)");
  piv->add_flag("--force", target->force, "replace an existing calibration file");

  return {calib, [transducer, fit, target] {
            return *transducer ? run_transducer_fit(*fit, std::cout) : run_piv_target_command(*target, std::cout);
          }};
}

}  // namespace stallscope::calib
