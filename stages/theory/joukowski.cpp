#include "stages/theory/joukowski.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::theory {
namespace {

using Complex = std::complex<double>;
constexpr double kPi = std::numbers::pi;

Complex circle_point(const JoukowskiGeometry& g, double theta) {
  return g.centre + g.radius * std::polar(1.0, theta);
}

Complex map(const JoukowskiGeometry& g, Complex zeta) { return zeta + g.airfoil.a * g.airfoil.a / zeta; }

// dz/dtheta on the circle.
Complex map_tangent(const JoukowskiGeometry& g, double theta) {
  const Complex zeta = circle_point(g, theta);
  const double a = g.airfoil.a;
  return (1.0 - a * a / (zeta * zeta)) * Complex(0.0, g.radius) * std::polar(1.0, theta);
}

// Golden-section minimum of Re z(theta) in [lo, hi].
double minimise_x(const JoukowskiGeometry& g, double lo, double hi) {
  const double ratio = 0.5 * (std::sqrt(5.0) - 1.0);
  auto x = [&](double t) { return map(g, circle_point(g, t)).real(); };
  double t1 = hi - ratio * (hi - lo), t2 = lo + ratio * (hi - lo);
  double x1 = x(t1), x2 = x(t2);
  while (hi - lo > 1e-12) {
    if (x1 < x2) {
      hi = t2, t2 = t1, x2 = x1, t1 = hi - ratio * (hi - lo), x1 = x(t1);
    } else {
      lo = t1, t1 = t2, x1 = x2, t2 = lo + ratio * (hi - lo), x2 = x(t2);
    }
  }
  return 0.5 * (lo + hi);
}

double leading_edge_x(const JoukowskiGeometry& g) { return 2.0 * g.airfoil.a - g.chord; }

}  // namespace

JoukowskiGeometry make_joukowski(const JoukowskiAirfoil& f) {
  if (!(f.a > 0.0) || !(f.epsilon >= 0.0) || !std::isfinite(f.epsilon) || !std::isfinite(f.camber)) {
    throw std::invalid_argument("Joukowski airfoil needs a > 0, epsilon >= 0 and finite camber");
  }
  JoukowskiGeometry g;
  g.airfoil = f;
  g.centre = Complex(-f.epsilon * f.a, f.camber * f.a);
  g.radius = std::abs(f.a - g.centre);
  g.beta = std::atan2(f.camber, 1.0 + f.epsilon);
  // Coarse scan for the bracket, then golden section (Re z has a single minimum
  // there, also at the sharp edge of the circular arc).
  const int n = 720;
  const double step = 2 * kPi / n;
  int best = 0;
  double best_x = INFINITY;
  for (int i = 0; i < n; ++i) {
    const double x = map(g, circle_point(g, -g.beta + step * i)).real();
    if (x < best_x) best_x = x, best = i;
  }
  const double centre = -g.beta + step * best;
  g.leading_edge_theta = minimise_x(g, centre - step, centre + step);
  g.chord = 2.0 * f.a - map(g, circle_point(g, g.leading_edge_theta)).real();
  return g;
}

double joukowski_lift_coefficient(const JoukowskiGeometry& g, double alpha) {
  return 8.0 * kPi * g.radius / g.chord * std::sin(alpha + g.beta);
}

double joukowski_surface_cp(const JoukowskiGeometry& g, double alpha, double theta) {
  const Complex zeta = circle_point(g, theta);
  const double numerator = std::cos(0.5 * (theta - 2.0 * alpha - g.beta));
  double ratio;  // |w| / U
  if (g.airfoil.epsilon == 0.0) {
    // zeta = -a lies on the circle (sharp leading edge): |zeta + a| = 2R|cos((theta - beta)/2)|,
    // which cancels the numerator exactly at ideal incidence.
    ratio = numerator / std::cos(0.5 * (theta - g.beta)) * std::norm(zeta) / (g.radius * g.radius);
  } else {
    ratio = 2.0 * numerator * std::norm(zeta) / (g.radius * std::abs(zeta + g.airfoil.a));
  }
  return 1.0 - ratio * ratio;
}

JoukowskiStation joukowski_station(const JoukowskiGeometry& g, double theta) {
  const Complex zeta = circle_point(g, theta);
  const double h = 0.5 * (theta - g.beta);
  JoukowskiStation s{0.0, std::cos(h), std::sin(h)};
  s.k = g.airfoil.epsilon == 0.0 ? std::norm(zeta) / (s.cos_h * g.radius * g.radius)
                                 : 2.0 * std::norm(zeta) / (g.radius * std::abs(zeta + g.airfoil.a));
  return s;
}

JoukowskiSurfacePoint joukowski_surface_point(const JoukowskiGeometry& g, double alpha, double theta) {
  const Complex z = map(g, circle_point(g, theta));
  const Complex dz = map_tangent(g, theta);
  return {(z.real() - leading_edge_x(g)) / g.chord, z.imag() / g.chord, dz.imag() / dz.real(),
          joukowski_surface_cp(g, alpha, theta)};
}

double joukowski_theta_at(const JoukowskiGeometry& g, double x_over_c, Surface surface) {
  if (!(x_over_c >= 0.0 && x_over_c <= 1.0)) throw std::invalid_argument("Joukowski x/c outside [0, 1]");
  // Upper: theta from -beta (TE) to the LE; lower: LE to 2 pi - beta (TE).
  double lo = surface == Surface::kUpper ? -g.beta : g.leading_edge_theta;
  double hi = surface == Surface::kUpper ? g.leading_edge_theta : 2 * kPi - g.beta;
  auto x_of = [&](double t) { return (map(g, circle_point(g, t)).real() - leading_edge_x(g)) / g.chord; };
  const bool rising = x_of(hi) > x_of(lo);
  for (int i = 0; i < 200 && hi - lo > 1e-15; ++i) {
    const double mid = 0.5 * (lo + hi);
    ((x_of(mid) < x_over_c) == rising ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

SectionLoads joukowski_integrated_loads(const JoukowskiGeometry& g, double alpha, int samples) {
  if (samples < 8) throw std::invalid_argument("joukowski_integrated_loads needs at least 8 samples");
  const double chord = g.chord;
  const double x_ref = leading_edge_x(g) + 0.25 * chord;
  const double h = 2 * kPi / samples;
  double fx = 0, fy = 0, moment = 0;
  for (int i = 0; i < samples; ++i) {
    const double theta = -g.beta + h * i;
    const double cp = joukowski_surface_cp(g, alpha, theta);
    const Complex z = map(g, circle_point(g, theta));
    const Complex dz = map_tangent(g, theta) * h;
    fx += cp * dz.real();
    fy += cp * dz.imag();
    moment += cp * ((z.real() - x_ref) * dz.real() + z.imag() * dz.imag());
  }
  SectionLoads out;
  out.cn = fx / chord;
  out.cc = -fy / chord;
  out.cm_quarter_chord = -moment / (chord * chord);
  out.cl = out.cn * std::cos(alpha) - out.cc * std::sin(alpha);
  out.cd_pressure = out.cn * std::sin(alpha) + out.cc * std::cos(alpha);
  return out;
}

double flat_plate_cp(double x_over_c, double alpha, Surface surface) {
  if (!(x_over_c > 0.0 && x_over_c <= 1.0)) throw std::invalid_argument("flat plate x/c outside (0, 1]");
  const double sign = surface == Surface::kUpper ? 1.0 : -1.0;
  const double speed = std::cos(alpha) + sign * std::sin(alpha) * std::sqrt((1.0 - x_over_c) / x_over_c);
  return 1.0 - speed * speed;
}

SectionLoads flat_plate_loads(double alpha) {
  SectionLoads out;
  out.cn = kPi * std::sin(2.0 * alpha);
  out.cl = out.cn * std::cos(alpha);
  out.cd_pressure = out.cn * std::sin(alpha);
  return out;
}

double cylinder_cp(double theta, double circulation_ratio) {
  const double speed = 2.0 * std::sin(theta) + circulation_ratio / (2.0 * kPi);
  return 1.0 - speed * speed;
}

}  // namespace stallscope::theory
