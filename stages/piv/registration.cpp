#include "stages/piv/registration.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

namespace stallscope::piv {

double registration_mismatch(const Grid& grid, const std::vector<RegistrationFrame>& frames,
                             const theory::Naca4Section& section, const AirfoilPlacement& a) {
  std::size_t differ = 0, either = 0;
  for (const auto& f : frames) {
    const std::vector<std::uint8_t> inside = airfoil_mask(grid, a, section, f.alpha_deg, 0.0);
    for (std::size_t p = 0; p < inside.size(); ++p) {
      differ += inside[p] != f.invalid[p];
      either += inside[p] || f.invalid[p];
    }
  }
  return either ? static_cast<double>(differ) / static_cast<double>(either) : 1.0;
}

Registration register_from_data(const Grid& grid, const std::vector<RegistrationFrame>& frames,
                                const theory::Naca4Section& section, const AirfoilPlacement& guess, double radius_m,
                                double angle_deg) {
  Registration r;
  r.placement = guess;
  r.frames = frames.size();
  if (frames.empty() || grid.nx() < 2 || grid.ny() < 2) return r;
  r.mismatch = registration_mismatch(grid, frames, section, guess);
  const double cell = std::min(std::abs(grid.x_m[1] - grid.x_m[0]), std::abs(grid.y_m[1] - grid.y_m[0]));
  // A step in angle moves the far end of the section by about a step in position.
  const double cell_deg = cell / guess.chord_m * 180.0 / std::numbers::pi;
  // Coarse steps first, so a guess a few cells off is not trapped by the
  // staircase of a cell-sized objective.
  double step = std::max(cell, radius_m / 4), step_deg = std::max(cell_deg, angle_deg / 4);
  while (step >= cell / 32) {
    bool improved = true;
    while (improved) {
      improved = false;
      const std::array<std::array<double, 3>, 6> moves = {{{step, 0, 0}, {-step, 0, 0}, {0, step, 0},
                                                           {0, -step, 0}, {0, 0, step_deg}, {0, 0, -step_deg}}};
      for (const auto& m : moves) {
        AirfoilPlacement trial = r.placement;
        trial.pivot_x_m += m[0];
        trial.pivot_y_m += m[1];
        trial.chord_angle_offset_deg += m[2];
        if (std::hypot(trial.pivot_x_m - guess.pivot_x_m, trial.pivot_y_m - guess.pivot_y_m) > radius_m ||
            std::abs(trial.chord_angle_offset_deg - guess.chord_angle_offset_deg) > angle_deg)
          continue;
        const double e = registration_mismatch(grid, frames, section, trial);
        if (e < r.mismatch) r.placement = trial, r.mismatch = e, improved = true;
      }
    }
    step /= 2, step_deg /= 2;
  }
  return r;
}

}  // namespace stallscope::piv
