#include "stages/piv/airfoil_frame.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace stallscope::piv {

namespace {
constexpr double kDegToRad = std::numbers::pi / 180.0;
}

AirfoilPoint to_airfoil_frame(const AirfoilPlacement& a, double alpha_deg, double x_m, double y_m) {
  const double theta = (alpha_deg + a.chord_angle_offset_deg) * kDegToRad;
  const double dx = x_m - a.pivot_x_m, dy = y_m - a.pivot_y_m;
  // Chord direction (LE to TE) is (cos, -sin); the suction-side normal (sin, cos).
  const double along = dx * std::cos(theta) - dy * std::sin(theta);
  const double normal = dx * std::sin(theta) + dy * std::cos(theta);
  return {a.pivot_x_over_c + along / a.chord_m, normal / a.chord_m};
}

void to_lab_frame(const AirfoilPlacement& a, double alpha_deg, const AirfoilPoint& p, double& x_m, double& y_m) {
  const double theta = (alpha_deg + a.chord_angle_offset_deg) * kDegToRad;
  const double along = (p.x_over_c - a.pivot_x_over_c) * a.chord_m, normal = p.y_over_c * a.chord_m;
  x_m = a.pivot_x_m + along * std::cos(theta) + normal * std::sin(theta);
  y_m = a.pivot_y_m - along * std::sin(theta) + normal * std::cos(theta);
}

std::vector<std::uint8_t> airfoil_mask(const Grid& grid, const AirfoilPlacement& a,
                                       const theory::Naca4Section& section, double alpha_deg, double offset,
                                       double band) {
  std::vector<std::uint8_t> mask(grid.size(), 0);
  const double reach = offset + band;
  for (std::size_t j = 0; j < grid.ny(); ++j)
    for (std::size_t i = 0; i < grid.nx(); ++i) {
      const AirfoilPoint p = to_airfoil_frame(a, alpha_deg, grid.x_m[i], grid.y_m[j]);
      if (p.x_over_c < -reach || p.x_over_c > 1 + reach) continue;
      // How far outside the section the point lies: across the chord along its
      // span, radially ahead of the nose, the larger of either behind the tail.
      double outside;
      if (p.x_over_c < 0) {
        outside = std::hypot(p.x_over_c, p.y_over_c);
      } else {
        const double x = std::min(p.x_over_c, 1.0);
        outside = std::abs(p.y_over_c - theory::naca4_camber(section, x)) - theory::naca4_half_thickness(section, x);
        outside = std::max(outside, p.x_over_c - 1.0);  // a square end behind the trailing edge
      }
      mask[j * grid.nx() + i] = outside <= offset ? 1 : (band > 0 && outside <= reach ? 2 : 0);
    }
  return mask;
}

}  // namespace stallscope::piv
