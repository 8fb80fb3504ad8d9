#include "stages/theory/lamb_oseen.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::theory {
namespace {

constexpr double kPi = std::numbers::pi;

void check(const LambOseenVortex& v) {
  if (!(v.core_radius > 0.0)) throw std::invalid_argument("Lamb-Oseen core radius must be > 0");
}

// Peak angular velocity scale Omega0 = Gamma / (2 pi r_c^2) = omega_z(0) / 2.
double omega0(const LambOseenVortex& v) { return v.circulation / (2.0 * kPi * v.core_radius * v.core_radius); }

// g(s) = (1 - e^{-s}) / s with s = eta^2: u_theta / r = Omega0 g.
double g(double s) { return s == 0.0 ? 1.0 : -std::expm1(-s) / s; }

// h(s) = g'(s) = (e^{-s} - g(s)) / s; its series sum_k (-s)^{k-1} k/(k+1)! avoids
// the cancellation near the centre.
double h(double s) {
  if (s > 0.5) return (std::exp(-s) - g(s)) / s;
  double term_power = 1.0, factorial = 2.0, sum = 0.0;  // (-s)^{k-1}, (k+1)!
  for (int k = 1; k <= 20; ++k) {
    sum -= k * term_power / factorial;  // (-1)^k s^{k-1} = -(-s)^{k-1}
    term_power *= -s;
    factorial *= k + 2;
  }
  return sum;
}

}  // namespace

double lamb_oseen_core_radius(double kinematic_viscosity, double age) {
  if (!(kinematic_viscosity > 0.0 && age > 0.0)) throw std::invalid_argument("Lamb-Oseen needs nu > 0 and t > 0");
  return std::sqrt(4.0 * kinematic_viscosity * age);
}

double tangential_velocity(const LambOseenVortex& v, double r) {
  check(v);
  const double eta = r / v.core_radius;
  return omega0(v) * r * g(eta * eta);
}

double vorticity(const LambOseenVortex& v, double r) {
  check(v);
  const double eta = r / v.core_radius;
  return 2.0 * omega0(v) * std::exp(-eta * eta);
}

double circulation_within(const LambOseenVortex& v, double r) {
  check(v);
  const double eta = r / v.core_radius;
  return -v.circulation * std::expm1(-eta * eta);
}

double swirl_strength(const LambOseenVortex& v, double r) {
  check(v);
  const double s = (r / v.core_radius) * (r / v.core_radius);
  const double gs = g(s);
  const double square = gs * (2.0 * std::exp(-s) - gs);
  return square > 0.0 ? std::abs(omega0(v)) * std::sqrt(square) : 0.0;
}

double peak_velocity_radius(const LambOseenVortex& v) {
  check(v);
  double s = 1.25;  // Newton on e^s - 1 - 2s = 0
  for (int i = 0; i < 50; ++i) {
    const double step = (std::exp(s) - 1.0 - 2.0 * s) / (std::exp(s) - 2.0);
    s -= step;
    if (std::abs(step) < 1e-16 * s) break;
  }
  return std::sqrt(s) * v.core_radius;
}

double peak_tangential_velocity(const LambOseenVortex& v) { return tangential_velocity(v, peak_velocity_radius(v)); }

Eigen::Vector2d velocity_at(const LambOseenVortex& v, double x, double y) {
  check(v);
  const double dx = x - v.x0, dy = y - v.y0;
  const double f = omega0(v) * g((dx * dx + dy * dy) / (v.core_radius * v.core_radius));  // u_theta / r
  return {-f * dy, f * dx};
}

Eigen::Matrix2d velocity_gradient_at(const LambOseenVortex& v, double x, double y) {
  check(v);
  const double dx = x - v.x0, dy = y - v.y0;
  const double rc2 = v.core_radius * v.core_radius;
  const double s = (dx * dx + dy * dy) / rc2;
  const double f = omega0(v) * g(s);                 // u_theta / r
  const double df_over_r = 2.0 * omega0(v) * h(s) / rc2;  // (d/dr)(u_theta / r) / r
  Eigen::Matrix2d a;
  a << -df_over_r * dx * dy, -f - df_over_r * dy * dy, f + df_over_r * dx * dx, df_over_r * dx * dy;
  return a;
}

}  // namespace stallscope::theory
