#pragma once
// The airfoil-fixed frame: x/c along the chord from the leading edge, y/c
// normal toward the suction side, for a model pitching nose-up by alpha about
// its pitch axis. Lab frame: x downstream, y up; the model's chord lies at
// chord_angle_offset_deg (nose-up positive, like alpha) in the lab at alpha = 0.
#include <cstdint>
#include <vector>

#include "stages/piv/frame_source.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::piv {

struct AirfoilPlacement {
  double chord_m = 1.0;
  double pivot_x_over_c = 0.25;
  double pivot_x_m = 0.0, pivot_y_m = 0.0;  // the pitch axis in the PIV lab frame
  double chord_angle_offset_deg = 0.0;      // registration: the geometric angle at alpha = 0
};

struct AirfoilPoint {
  double x_over_c = 0, y_over_c = 0;
};

AirfoilPoint to_airfoil_frame(const AirfoilPlacement& placement, double alpha_deg, double x_m, double y_m);
// The inverse: where an airfoil-frame point sits in the lab at alpha.
void to_lab_frame(const AirfoilPlacement& placement, double alpha_deg, const AirfoilPoint& point, double& x_m,
                  double& y_m);

// 1 for grid points inside the section grown by offset_over_c (the wall
// region where PIV vectors are not flow), 2 in the next band_over_c beyond
// it (the wall band, where glare is looked for), 0 elsewhere.
std::vector<std::uint8_t> airfoil_mask(const Grid& grid, const AirfoilPlacement& placement,
                                       const theory::Naca4Section& section, double alpha_deg, double offset_over_c,
                                       double band_over_c = 0);

}  // namespace stallscope::piv
