#pragma once
// Exact potential flow about Joukowski airfoils, plus the flat-plate and cylinder
// closed forms: the exact cases the pressure-integration stage is checked against
// (Milne-Thomson, Theoretical Hydrodynamics; Anderson, Fundamentals of
// Aerodynamics, ch. 3-4). Map z = zeta + a^2/zeta, circle centre
// zeta0 = a(-epsilon + i camber), radius R = |a - zeta0| (trailing edge at zeta = a,
// z = 2a), beta = atan(camber / (1 + epsilon)). Kutta condition: Gamma = 4 pi U R sin(alpha + beta).
//
// Frame: x/c along the real z-axis from the leading edge (0) to the trailing edge
// (1), y/c toward the suction side; alpha is measured from the real z-axis. That
// axis is the chord line exactly for the symmetric (camber = 0) and the
// circular-arc (epsilon = 0) families.
#include <complex>

#include "stages/theory/naca4.hpp"  // Surface

namespace stallscope::theory {

struct JoukowskiAirfoil {
  double a = 1.0;        // map constant
  double epsilon = 0.1;  // thickness parameter (t/c ~ 1.299 epsilon)
  double camber = 0.0;   // n/a; circular arc: f/c = camber/2 when epsilon = 0
};

// The circle, leading edge and chord, worked out once per airfoil.
struct JoukowskiGeometry {
  JoukowskiAirfoil airfoil;
  std::complex<double> centre;
  double radius = 0.0;
  double beta = 0.0;                // the trailing edge sits at circle angle -beta
  double leading_edge_theta = 0.0;  // circle angle of the minimum-x point
  double chord = 0.0;               // TE x minus LE x
};
// Throws std::invalid_argument unless a > 0 and epsilon >= 0.
// Symmetric: c = a[2 + (1 + 2 eps) + 1/(1 + 2 eps)]; circular arc: c = 4a.
JoukowskiGeometry make_joukowski(const JoukowskiAirfoil& airfoil);

// Exact Cl = 8 pi (R/c) sin(alpha + beta).
double joukowski_lift_coefficient(const JoukowskiGeometry& g, double alpha);

// Exact surface Cp = 1 - |w|^2/U^2 at circle angle theta, written without the
// 0/0 at the trailing edge: |w|/U = 2|cos((theta - 2 alpha - beta)/2)| |zeta|^2 / (R |zeta + a|).
double joukowski_surface_cp(const JoukowskiGeometry& g, double alpha, double theta);

// The incidence-free part of that Cp at one circle angle, so that Cp at many
// incidences costs a few multiplications (a synthetic run solves it for every
// station at every sample): |w|/U = k cos(h - alpha) with h = (theta - beta)/2.
struct JoukowskiStation {
  double k = 0.0, cos_h = 1.0, sin_h = 0.0;
};
JoukowskiStation joukowski_station(const JoukowskiGeometry& g, double theta);
inline double joukowski_surface_cp(const JoukowskiStation& s, double cos_alpha, double sin_alpha) {
  const double ratio = s.k * (s.cos_h * cos_alpha + s.sin_h * sin_alpha);
  return 1.0 - ratio * ratio;
}

struct JoukowskiSurfacePoint {
  double x_over_c = 0.0;
  double y_over_c = 0.0;
  double slope = 0.0;  // dy/dx along the surface
  double cp = 0.0;
};
JoukowskiSurfacePoint joukowski_surface_point(const JoukowskiGeometry& g, double alpha, double theta);

// Circle angle of the surface point at x/c (bisection; x/c in [0, 1]).
double joukowski_theta_at(const JoukowskiGeometry& g, double x_over_c, Surface surface);

// Loads by integrating a Cp distribution round the contour (Cm about c/4 on the chord line).
struct SectionLoads {
  double cn = 0.0;
  double cc = 0.0;
  double cl = 0.0;
  double cd_pressure = 0.0;
  double cm_quarter_chord = 0.0;
};

// The exact Cp integrated on `samples` uniform circle angles (trapezoid rule,
// spectrally accurate for this periodic integrand): the contour form
// Cn = (1/c) oint Cp dx, Cc = -(1/c) oint Cp dy, Cm = -(1/c^2) oint Cp[(x - xP)dx + (y - yP)dy].
SectionLoads joukowski_integrated_loads(const JoukowskiGeometry& g, double alpha, int samples = 1024);

// Flat plate, exact: |w|/U = cos(alpha) +- sin(alpha) sqrt((1 - x)/x), + on the upper face.
double flat_plate_cp(double x_over_c, double alpha, Surface surface);
// Its loads in closed form: Cn = pi sin 2 alpha, Cc = 0, Cm_c/4 = 0 (tap integration
// misses the leading-edge suction, so Cl = Cn cos alpha, not 2 pi sin alpha).
SectionLoads flat_plate_loads(double alpha);

// Circular cylinder with clockwise circulation, theta counter-clockwise from the
// downstream axis: Cp = 1 - (2 sin theta + Gamma/(2 pi U R))^2. circulation_ratio = Gamma/(U R).
double cylinder_cp(double theta, double circulation_ratio);

}  // namespace stallscope::theory
