#include "calib/piv/piv_target_command.hpp"

#include <CLI/CLI.hpp>

#include <cstdio>
#include <iostream>
#include <string>

#include "calib/piv/piv_target.hpp"

namespace stallscope::calib {

std::optional<int> run_calib_command(int argc, char** argv) {
  if (argc < 2 || std::string(argv[1]) != "calib") return std::nullopt;
  CLI::App app{"calibration helpers run before a reduction"};
  app.name("stallscope calib");
  app.require_subcommand(1);
  PivTargetRequest r;
  auto* piv = app.add_subcommand("piv-target", "PIV spatial calibration (pixel -> lab metres) from a target image");
  piv->add_option("image", r.image, "image of the target in the light sheet (PNG, TIFF, PGM ...)")->required();
  piv->add_option("-o,--output", r.output, "calibration file to write (TOML)")->required();
  piv->add_option("--pattern", r.target.pattern, "chessboard (inner corners) or circles (dot grid)")
      ->check(CLI::IsMember({"chessboard", "circles"}))
      ->capture_default_str();
  piv->add_option("--columns", r.target.columns, "points per row")->check(CLI::Range(2, 1000))->capture_default_str();
  piv->add_option("--rows", r.target.rows, "rows of points")->check(CLI::Range(2, 1000))->capture_default_str();
  piv->add_option("--spacing-m", r.target.spacing_m, "distance between neighbouring points, m")
      ->required()
      ->check(CLI::PositiveNumber);
  piv->add_option("--origin-x-m", r.target.origin_x_m, "lab x of the top-left point, m")->capture_default_str();
  piv->add_option("--origin-y-m", r.target.origin_y_m, "lab y of the top-left point, m")->capture_default_str();
  piv->add_option("--id", r.id, "calibration id (default: the image's name)");
  piv->add_flag("--force", r.force, "replace an existing calibration file");
  try {
    app.parse(argc - 1, argv + 1);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::fprintf(stderr, "stallscope: error: %s (see stallscope calib --help)\n", e.what());
    return 2;
  }
  return run_piv_target_command(r, std::cout);
}

}  // namespace stallscope::calib
