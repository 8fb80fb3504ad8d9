#pragma once
// Where the model sits in the PIV frame, from the data: the vectors inside the
// section are not flow (a real camera sees the model there, and the files
// mark them invalid), so the pitch axis and the angle offset are those whose
// section, turned to each frame's angle, covers the invalid vectors best.
// Frames at several angles pin the axis down to a fraction of a grid cell.
#include <cstdint>
#include <vector>

#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/frame_source.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::piv {

struct RegistrationFrame {
  double alpha_deg = 0;
  std::vector<std::uint8_t> invalid;  // 1 where the frame has no valid vector (grid size)
};

struct Registration {
  AirfoilPlacement placement;
  // Cells where section and invalid vectors disagree, over the cells either
  // marks: 0 is a perfect fit, 1 no overlap at all.
  double mismatch = 1;
  std::size_t frames = 0;
};

// How far the section at placement a is from the frames' invalid vectors: the
// cells where one marks and the other does not, over the cells either marks.
double registration_mismatch(const Grid& grid, const std::vector<RegistrationFrame>& frames,
                             const theory::Naca4Section& section, const AirfoilPlacement& a);

// Starts from `guess` (chord and pivot x/c as given) and searches within
// `radius_m` of its axis and `angle_deg` of its offset, by a pattern search
// whose steps halve from a grid cell down to 1/32 of one.
Registration register_from_data(const Grid& grid, const std::vector<RegistrationFrame>& frames,
                                const theory::Naca4Section& section, const AirfoilPlacement& guess, double radius_m,
                                double angle_deg);

}  // namespace stallscope::piv
