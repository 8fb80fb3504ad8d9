#include "stages/theory/naca4.hpp"

#include <cctype>
#include <cmath>
#include <numbers>
#include <stdexcept>

#include "pipeline/errors.hpp"

namespace stallscope::theory {
namespace {

// Thickness polynomial coefficients (NACA Report 460).
constexpr double kA0 = 0.2969;
constexpr double kA1 = -0.1260;
constexpr double kA2 = -0.3516;
constexpr double kA3 = 0.2843;
constexpr double kA4Open = -0.1015;
constexpr double kA4Closed = -0.1036;

double a4(const Naca4Section& s) { return s.closed_trailing_edge ? kA4Closed : kA4Open; }

void check_station(double x) {
  if (!(x >= 0.0 && x <= 1.0)) throw std::invalid_argument("NACA 4-digit station x/c outside [0, 1]");
}

bool cambered(const Naca4Section& s) { return s.max_camber != 0.0; }

// Second derivative of the mean line (piecewise constant).
double camber_curvature(const Naca4Section& s, double x) {
  if (!cambered(s)) return 0.0;
  const double m = s.max_camber, p = s.camber_position;
  return x <= p ? -2.0 * m / (p * p) : -2.0 * m / ((1.0 - p) * (1.0 - p));
}

// sign = +1 upper, -1 lower.
SurfacePoint surface_point(const Naca4Section& s, double x, double sign) {
  check_station(x);
  const double yt = naca4_half_thickness(s, x);
  const double yc = naca4_camber(s, x);
  if (!cambered(s)) return {x, sign * yt, sign * naca4_half_thickness_slope(s, x)};
  const double dyc = naca4_camber_slope(s, x);
  const double theta = std::atan(dyc);
  const double dtheta = camber_curvature(s, x) / (1.0 + dyc * dyc);
  const double dyt = naca4_half_thickness_slope(s, x);
  const double st = std::sin(theta), ct = std::cos(theta);
  const double dx = 1.0 - sign * (dyt * st + yt * ct * dtheta);
  const double dy = dyc + sign * (dyt * ct - yt * st * dtheta);
  return {x - sign * yt * st, yc + sign * yt * ct, dy / dx};
}

}  // namespace

Naca4Section parse_naca4(std::string_view designation, bool closed_trailing_edge, const std::string& where) {
  bool digits = designation.size() == 4;
  for (char ch : designation) digits = digits && std::isdigit(static_cast<unsigned char>(ch));
  if (!digits) {
    throw InputError(where, "expected a NACA 4-digit designation such as 0012 or 2412, got '" +
                                std::string(designation) + "'");
  }
  Naca4Section s;
  s.max_camber = (designation[0] - '0') / 100.0;
  s.camber_position = (designation[1] - '0') / 10.0;
  s.thickness = ((designation[2] - '0') * 10 + (designation[3] - '0')) / 100.0;
  s.closed_trailing_edge = closed_trailing_edge;
  if (s.max_camber > 0.0 && s.camber_position == 0.0) {
    throw InputError(where, "NACA '" + std::string(designation) +
                                "' is cambered but has camber position 0; expected a second digit 1-9");
  }
  if (s.thickness == 0.0) {
    throw InputError(where, "NACA '" + std::string(designation) + "' has zero thickness; expected 01-99");
  }
  return s;
}

double naca4_half_thickness(const Naca4Section& s, double x) {
  check_station(x);
  return 5.0 * s.thickness * (kA0 * std::sqrt(x) + x * (kA1 + x * (kA2 + x * (kA3 + x * a4(s)))));
}

double naca4_half_thickness_slope(const Naca4Section& s, double x) {
  check_station(x);
  return 5.0 * s.thickness *
         (0.5 * kA0 / std::sqrt(x) + kA1 + x * (2.0 * kA2 + x * (3.0 * kA3 + x * 4.0 * a4(s))));
}

double naca4_camber(const Naca4Section& s, double x) {
  check_station(x);
  if (!cambered(s)) return 0.0;
  const double m = s.max_camber, p = s.camber_position;
  if (x <= p) return m / (p * p) * (2.0 * p * x - x * x);
  return m / ((1.0 - p) * (1.0 - p)) * ((1.0 - 2.0 * p) + 2.0 * p * x - x * x);
}

double naca4_camber_slope(const Naca4Section& s, double x) {
  check_station(x);
  if (!cambered(s)) return 0.0;
  const double m = s.max_camber, p = s.camber_position;
  if (x <= p) return 2.0 * m / (p * p) * (p - x);
  return 2.0 * m / ((1.0 - p) * (1.0 - p)) * (p - x);
}

SurfacePoint naca4_upper_surface(const Naca4Section& s, double x) { return surface_point(s, x, +1.0); }
SurfacePoint naca4_lower_surface(const Naca4Section& s, double x) { return surface_point(s, x, -1.0); }

double naca4_leading_edge_radius(const Naca4Section& s) {
  // Near x = 0, y_t ~ 5 t a0 sqrt(x), a parabola y^2 = 2 r x.
  const double k = 5.0 * s.thickness * kA0;
  return 0.5 * k * k;
}

MaxThickness naca4_max_thickness(const Naca4Section& s) {
  // dy_t/dx falls monotonically through zero between these stations for every t.
  double lo = 0.05, hi = 0.9;
  for (int i = 0; i < 200 && hi - lo > 1e-15; ++i) {
    const double mid = 0.5 * (lo + hi);
    (naca4_half_thickness_slope(s, mid) > 0.0 ? lo : hi) = mid;
  }
  const double x = 0.5 * (lo + hi);
  return {x, 2.0 * naca4_half_thickness(s, x)};
}

std::vector<TapLocation> naca4_tap_layout(const Naca4Section& s, int n, double x_first, double x_last) {
  if (n < 2) throw std::invalid_argument("naca4_tap_layout needs at least 2 taps per surface");
  if (!(x_first > 0.0 && x_first < x_last && x_last <= 1.0)) {
    throw std::invalid_argument("naca4_tap_layout needs 0 < x_first < x_last <= 1");
  }
  std::vector<double> stations(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) {
    const double beta = 0.5 * std::numbers::pi * i / (n - 1);
    stations[static_cast<std::size_t>(i)] = x_first + (x_last - x_first) * (1.0 - std::cos(beta));
  }
  std::vector<TapLocation> taps;
  taps.reserve(2 * stations.size());
  for (auto it = stations.rbegin(); it != stations.rend(); ++it) {
    const SurfacePoint p = naca4_upper_surface(s, *it);
    taps.push_back({p.x, p.y, Surface::kUpper, p.slope});
  }
  for (double x : stations) {
    const SurfacePoint p = naca4_lower_surface(s, x);
    taps.push_back({p.x, p.y, Surface::kLower, p.slope});
  }
  return taps;
}

}  // namespace stallscope::theory
