#pragma once
// Lamb-Oseen vortex (Lamb 1932; Oseen 1911; as used by Devenport et al. 1996,
// J. Fluid Mech. 312): u_theta = Gamma/(2 pi r) [1 - exp(-r^2/r_c^2)], r_c^2 = 4 nu t.
// Gamma > 0 turns counter-clockwise. The swirl-strength closed form follows from
// lambda_ci^2 = (u_theta/r) du_theta/dr for any axisymmetric vortex.
#include <Eigen/Core>

namespace stallscope::theory {

struct LambOseenVortex {
  double x0 = 0.0;
  double y0 = 0.0;
  double circulation = 1.0;  // Gamma, m^2/s, counter-clockwise positive
  double core_radius = 1.0;  // r_c, m
};

// r_c = sqrt(4 nu t) for a vortex of age t diffusing with kinematic viscosity nu.
double lamb_oseen_core_radius(double kinematic_viscosity, double age);

double tangential_velocity(const LambOseenVortex& v, double r);
// omega_z = Gamma/(pi r_c^2) exp(-r^2/r_c^2)
double vorticity(const LambOseenVortex& v, double r);
// Gamma(r) = Gamma [1 - exp(-r^2/r_c^2)]
double circulation_within(const LambOseenVortex& v, double r);
// lambda_ci = Omega0 sqrt(g (2 e^{-eta^2} - g)), g = (1 - e^{-eta^2})/eta^2,
// Omega0 = Gamma/(2 pi r_c^2), eta = r/r_c; zero beyond the velocity peak. Unsigned.
double swirl_strength(const LambOseenVortex& v, double r);

// Radius of the velocity peak, the root of e^{eta^2} = 1 + 2 eta^2 (1.12091 r_c),
// and the peak velocity there.
double peak_velocity_radius(const LambOseenVortex& v);
double peak_tangential_velocity(const LambOseenVortex& v);

// Velocity (u, v) at (x, y) and the gradient [[du/dx, du/dy], [dv/dx, dv/dy]].
Eigen::Vector2d velocity_at(const LambOseenVortex& v, double x, double y);
Eigen::Matrix2d velocity_gradient_at(const LambOseenVortex& v, double x, double y);

}  // namespace stallscope::theory
