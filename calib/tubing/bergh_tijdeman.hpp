#pragma once
// Dynamic response of pneumatic tubing: Bergh & Tijdeman (1965), "Theoretical and
// experimental results for the dynamic response of pressure measuring systems",
// NLR-TR F.238. Laminar, compressible oscillating flow in rigid circular tubes, each
// ending in a transducer volume; the response is p_L / p_0 for a pressure p_0 e^{i w t}
// at the tube entrance.
#include <Eigen/Core>
#include <complex>
#include <span>

namespace stallscope::calib {

// Gas properties the model needs (SI). Plain data: set any field directly.
struct AirProperties {
  double rho = 0.0;      // density, kg/m^3
  double mu = 0.0;       // dynamic viscosity, Pa s
  double a0 = 0.0;       // speed of sound, m/s
  double gamma = 1.4;    // ratio of specific heats
  double prandtl = 0.71; // Prandtl number (about constant for air near room temperature)
  double k_p = 1.4;      // polytropic constant in the volumes: gamma adiabatic, 1 isothermal
  double sigma = 0.0;    // dimensionless volume increase from diaphragm deflection

  // Dry air at 20 C and 101325 Pa.
  AirProperties();
  // Ideal gas and Sutherland's law, from calib/air (standard-atmosphere constants).
  // Throws std::invalid_argument unless T > 0 and p > 0.
  AirProperties(double temperature_k, double pressure_pa);
};

// One tube of length L and radius R whose downstream end opens into a volume
// (end_volume may be 0: a closed end, or a junction straight into the next tube).
struct TubeSegment {
  double length = 0.0;      // m
  double radius = 0.0;      // m
  double end_volume = 0.0;  // m^3
};

// J_n(z) / J_{n-1}(z) for complex z, n >= 1: backward recurrence of the continued
// fraction for |z| <= 25, Hankel's asymptotic expansion beyond (accurate at the
// large shear wave numbers of wide tubes, where J_n itself overflows).
std::complex<double> bessel_j_ratio(int n, std::complex<double> z);
// J_2(z) / J_0(z), the ratio the model needs.
std::complex<double> bessel_j2_over_j0(std::complex<double> z);

// Single tube into its volume (the Bergh-Tijdeman closed form):
// p_L/p_0 = 1 / [cosh(phi L) + (V/V_t)(sigma + 1/k_p) n phi L sinh(phi L)],
// phi = (w/a0) sqrt(J0(alpha)/J2(alpha)) sqrt(gamma/n),
// n = 1 / [1 + ((gamma-1)/gamma) J2(alpha sqrt(Pr)) / J0(alpha sqrt(Pr))],
// alpha = i^{3/2} R sqrt(rho w / mu). Exactly 1 at f = 0.
std::complex<double> tube_response(const TubeSegment& tube, const AirProperties& air, double frequency_hz);

// Tubes and volumes in series, segment 0 at the orifice: p_N / p_0 by the
// Bergh-Tijdeman recursion (see the .cpp for the term and its derivation).
// Throws std::invalid_argument for an empty line or a non-positive length or radius.
std::complex<double> line_response(std::span<const TubeSegment> line, const AirProperties& air, double frequency_hz);
Eigen::VectorXcd line_response(std::span<const TubeSegment> line, const AirProperties& air,
                               const Eigen::VectorXd& frequencies_hz);

// Lossless limit (|alpha| -> infinity, n -> gamma, phi -> i w/a0):
// 1 / [cos(wL/a0) - (V/V_t)(sigma + 1/k_p) gamma (wL/a0) sin(wL/a0)].
std::complex<double> lossless_tube_response(const TubeSegment& tube, const AirProperties& air, double frequency_hz);

// Helmholtz resonance of a volume much larger than its tube, the small-wL/a0 root
// of the lossless form: (a0/2pi) sqrt(pi R^2 / (L V gamma (sigma + 1/k_p))), which is
// (a0/2pi) sqrt(pi R^2 / (L V)) for a rigid adiabatic volume.
double helmholtz_frequency(const TubeSegment& tube, const AirProperties& air);

}  // namespace stallscope::calib
