#pragma once
// Unsteady thin-airfoil theory of the oscillating flat plate (Theodorsen 1935,
// NACA Report 496; Bisplinghoff, Ashley & Halfman 1955, ch. 5). Reduced frequency
// k = omega b / U with b = c/2. Harmonic quantities are complex amplitudes for
// alpha = alpha_bar e^{i omega t}. The pitch axis sits a semichords behind mid-chord
// (a = -1/2 is the quarter chord, a = -1 the leading edge). Angles in radians.
#include <complex>
#include <numbers>

namespace stallscope::theory {

// C(k) = F + iG = H1(k) / (H1(k) + i H0(k)), Hankel functions of the second kind.
// C(0) = 1, C(k) -> 1/2 as k -> infinity. Throws std::invalid_argument for k < 0.
std::complex<double> theodorsen(double k);

// R.T. Jones's two-pole approximation (1940, NACA Report 681):
// 1 - 0.165/(1 - 0.0455 i/k) - 0.335/(1 - 0.3 i/k).
std::complex<double> theodorsen_jones(double k);

// Pitch axis in semichords from mid-chord for a pivot at x/c: a = 2 x/c - 1.
double pitch_axis_from_pivot(double pivot_x_over_c);

// Pure pitch about axis a, per unit alpha_bar:
// Cl = pi (ik + a k^2) + 2 pi C [1 + ik(1/2 - a)]
std::complex<double> pitch_lift_transfer(double k, double a);
// Cm about c/4 (only the apparent-mass part survives): (pi/2)(1/8 - a/2)k^2 - i(pi/2)k
std::complex<double> pitch_moment_quarter_chord_transfer(double k, double a);
// Cm about the pitch axis: (pi/2)[(1/8 + a^2)k^2 - ik(1/2 - a)] + pi(a + 1/2) C [1 + ik(1/2 - a)]
std::complex<double> pitch_moment_axis_transfer(double k, double a);

// alpha(t) = alpha_mean + alpha_amplitude sin(omega t).
struct SinusoidalPitch {
  double alpha_mean = 0.0;
  double alpha_amplitude = 0.0;
  double omega = 0.0;              // rad/s
  double reduced_frequency = 0.0;  // k = omega c / (2U)
  double pivot_x_over_c = 0.25;
};

// The linear part of the section's static polar that the attached reference uses.
struct LinearStaticPolar {
  double lift_slope = 2.0 * std::numbers::pi;  // per radian (thin-airfoil value)
  double zero_lift_angle = 0.0;           // rad
  double cm_quarter_chord = 0.0;          // zero-lift Cm about c/4
};

struct AttachedLoads {
  double alpha = 0.0;
  double alpha_rate = 0.0;  // rad/s
  double cl = 0.0;
  double cm_quarter_chord = 0.0;
  double cm_pivot = 0.0;  // about the pitch axis, nose-up positive
};

// Attached-flow (unstalled) unsteady loads at time t: Theodorsen's circulatory
// lift scaled to the static lift slope (2 pi -> lift_slope, common practice),
// apparent-mass terms unchanged, plus the static mean. Cm_pivot = Cm_c/4 +
// (x_pivot - 1/4) Cl, the linear-theory transfer (Cn ~ Cl).
AttachedLoads attached_pitch_loads(const SinusoidalPitch& motion, const LinearStaticPolar& polar, double t);

}  // namespace stallscope::theory
