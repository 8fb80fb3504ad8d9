#pragma once
// NACA 4-digit section geometry (Jacobs, Ward & Pinkerton 1933, NACA Report 460;
// Abbott & von Doenhoff, Theory of Wing Sections, App. I). All lengths are
// fractions of the chord; x runs from the leading edge (0) to the trailing edge (1).
#include <string>
#include <string_view>
#include <vector>

namespace stallscope::theory {

struct Naca4Section {
  double max_camber = 0.0;       // m
  double camber_position = 0.0;  // p (ignored when m = 0)
  double thickness = 0.12;       // t
  // Closed trailing edge: last thickness coefficient -0.1036 instead of -0.1015.
  bool closed_trailing_edge = false;
};

// "0012", "2412" -> section. Throws InputError (at `where`) for anything but four
// digits, or for a cambered section without a camber position ("2012").
Naca4Section parse_naca4(std::string_view designation, bool closed_trailing_edge = false,
                         const std::string& where = "NACA 4-digit designation");

// Half thickness y_t(x) and its slope dy_t/dx, normal to the mean line.
double naca4_half_thickness(const Naca4Section& section, double x);
double naca4_half_thickness_slope(const Naca4Section& section, double x);

// Mean line y_c(x) and its slope dy_c/dx.
double naca4_camber(const Naca4Section& section, double x);
double naca4_camber_slope(const Naca4Section& section, double x);

// A point on the surface and the surface slope dy/dx there (what the chordwise
// force Cc needs). Upper: x_u = x - y_t sin(theta), y_u = y_c + y_t cos(theta),
// theta = atan(dy_c/dx); lower with the signs of the y_t terms swapped.
struct SurfacePoint {
  double x = 0.0;
  double y = 0.0;
  double slope = 0.0;  // dy/dx along the surface; infinite at the leading edge
};
SurfacePoint naca4_upper_surface(const Naca4Section& section, double x);
SurfacePoint naca4_lower_surface(const Naca4Section& section, double x);

// Leading-edge radius from the sqrt(x) term: (5 t 0.2969)^2 / 2 = 1.1019 t^2.
double naca4_leading_edge_radius(const Naca4Section& section);

// Maximum of the thickness 2 y_t and where it sits (bisection on dy_t/dx = 0).
struct MaxThickness {
  double x = 0.0;
  double thickness = 0.0;
};
MaxThickness naca4_max_thickness(const Naca4Section& section);

enum class Surface { kUpper, kLower };

struct TapLocation {
  double x_over_c = 0.0;
  double y_over_c = 0.0;
  Surface surface = Surface::kUpper;
  double slope = 0.0;  // surface dy/dx at the tap
};

// n taps per surface at mean-line stations x_first .. x_last, cosine-clustered
// toward the leading edge: x_i = x_first + (x_last - x_first)(1 - cos(pi i / (2(n-1)))).
// Ordered counter-clockwise round the section: upper TE -> LE, then lower LE -> TE.
// Throws std::invalid_argument for n < 2 or stations outside (0, 1].
std::vector<TapLocation> naca4_tap_layout(const Naca4Section& section, int taps_per_surface,
                                          double x_first = 0.005, double x_last = 0.95);

}  // namespace stallscope::theory
