#pragma once
// Velocity gradients on the PIV grid and the vortex identifiers built on them:
// vorticity omega_z = dv/dx - du/dy and swirl strength lambda_ci (Zhou, Adrian,
// Balachandar & Kendall 1999, J. Fluid Mech. 387), the imaginary part of the
// complex eigenvalue pair of the 2-D gradient tensor; and Graftieaux et al.'s
// (2001, Meas. Sci. Technol. 12) Gamma2. Only valid vectors are used.
#include <cstdint>
#include <vector>

#include "pipeline/allocator.hpp"
#include "stages/piv/frame_source.hpp"

namespace stallscope::piv {

enum class GradientScheme {
  kCentral,       // second-order central differences (three-point on uneven spacing), one-sided at gaps
  kLeastSquares,  // plane fitted to the valid 3x3 neighbourhood: smoother, more robust to noise
};

struct SwirlField {
  // swirl_field writes every point once, so its arrays skip the zeroing.
  using Values = std::vector<double, UnsetOnResize<double>>;
  Values vorticity;  // 1/s, NaN where no gradient
  Values swirl;      // lambda_ci >= 0, 1/s, NaN where no gradient
};

// lambda_ci of A = [[ux, uy], [vx, vy]]: sqrt(det A - (tr A / 2)^2) where positive, else 0.
double swirl_strength(double ux, double uy, double vx, double vy);

// Gradients of the frame's valid vectors (f.valid), then omega_z and lambda_ci.
SwirlField swirl_field(const Grid& grid, const Frame& frame, GradientScheme scheme);

// Gamma2 at point (j, i) over the (2 half_width + 1)^2 neighbourhood of valid
// vectors; NaN if fewer than 3 neighbours. Counter-clockwise positive.
double gamma2_at(const Grid& grid, const Frame& frame, std::size_t j, std::size_t i, int half_width);

// Graftieaux et al. (2001): |Gamma2| above 2/pi marks a vortex core, where
// rotation rules the flow; 2/pi is what a pure shear gives over a disc. Over
// the square neighbourhood of gamma2_at a pure shear reaches a little more
// (0.626 at half width 2, 0.645 at 8), so a core is judged against that.
inline constexpr double kGamma2Core = 0.63661977236758134;  // 2 / pi

// The largest |Gamma2| a pure shear of any direction gives over the square
// neighbourhood of this half width on square cells (at least 2/pi).
double gamma2_shear_ceiling(int half_width);

// Scale selection: the half width, in cells, of the neighbourhood of a vortex
// of this area, its equivalent radius over the mean grid spacing (1 to 20).
int gamma2_half_width_for(const Grid& grid, double area_m2);

}  // namespace stallscope::piv
