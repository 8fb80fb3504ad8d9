#pragma once
// A PIV field exported mirrored (an image axis flipped, the sheet filmed from
// behind) silently flips every vorticity sign, and with it which vortex is the
// leading-edge one. Two facts of the flow tell: the free stream runs downstream
// (+x in the lab frame), and with lift the flow over the suction side is faster
// than under the pressure side (the bound circulation, Kutta-Joukowski).
#include <string>
#include <vector>

#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/frame_source.hpp"

namespace stallscope::piv {

struct OrientationSample {
  const Frame* frame = nullptr;
  double alpha_deg = 0;
};

struct Orientation {
  double streamwise = 0;        // median u over all valid vectors, in free-stream units (+1 expected)
  double suction_excess = 0;    // mean (u above - u below) sign(alpha) / U over attached frames (> 0 expected)
  double suction_error = 0;     // its standard error over those frames
  std::size_t frames_used = 0;  // frames at 2 to 12 deg either side, where the flow is taken as attached
  bool x_reversed = false, y_reversed = false;
  std::string verdict;          // "as expected", "mirrored ...", or why it could not tell
};

// velocity_scale turns the frames' units into m/s; u_inf_m_s is the free stream.
Orientation check_orientation(const Grid& grid, const std::vector<OrientationSample>& frames,
                              const AirfoilPlacement& placement, double velocity_scale, double u_inf_m_s);

}  // namespace stallscope::piv
