#include "stages/theory/theodorsen.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::theory {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr std::complex<double> kI{0.0, 1.0};

void check_k(double k) {
  if (!(k >= 0.0) || std::isinf(k)) throw std::invalid_argument("reduced frequency k must be finite and >= 0");
}

// Circulatory factor 1 + ik(1/2 - a): the downwash at the three-quarter chord per alpha_bar.
std::complex<double> three_quarter_chord_downwash(double k, double a) { return 1.0 + kI * k * (0.5 - a); }

}  // namespace

std::complex<double> theodorsen(double k) {
  check_k(k);
  if (k == 0.0) return 1.0;
  // H_n^(2) = J_n - i Y_n; the complex division is scaled, so tiny k does not overflow.
  const std::complex<double> h1{std::cyl_bessel_j(1.0, k), -std::cyl_neumann(1.0, k)};
  const std::complex<double> h0{std::cyl_bessel_j(0.0, k), -std::cyl_neumann(0.0, k)};
  return h1 / (h1 + kI * h0);
}

std::complex<double> theodorsen_jones(double k) {
  check_k(k);
  if (k == 0.0) return 1.0;
  return 1.0 - 0.165 / (1.0 - 0.0455 * kI / k) - 0.335 / (1.0 - 0.3 * kI / k);
}

double pitch_axis_from_pivot(double pivot_x_over_c) { return 2.0 * pivot_x_over_c - 1.0; }

std::complex<double> pitch_lift_transfer(double k, double a) {
  return kPi * (kI * k + a * k * k) + 2.0 * kPi * theodorsen(k) * three_quarter_chord_downwash(k, a);
}

std::complex<double> pitch_moment_quarter_chord_transfer(double k, double a) {
  check_k(k);
  return 0.5 * kPi * (0.125 - 0.5 * a) * k * k - 0.5 * kPi * kI * k;
}

std::complex<double> pitch_moment_axis_transfer(double k, double a) {
  return 0.5 * kPi * ((0.125 + a * a) * k * k - kI * k * (0.5 - a)) +
         kPi * (a + 0.5) * theodorsen(k) * three_quarter_chord_downwash(k, a);
}

AttachedLoads attached_pitch_loads(const SinusoidalPitch& m, const LinearStaticPolar& polar, double t) {
  const double k = m.reduced_frequency;
  const double a = pitch_axis_from_pivot(m.pivot_x_over_c);
  // Lift per alpha_bar with the circulatory part on the static slope.
  const std::complex<double> lift =
      kPi * (kI * k + a * k * k) + polar.lift_slope * theodorsen(k) * three_quarter_chord_downwash(k, a);
  const std::complex<double> moment = pitch_moment_quarter_chord_transfer(k, a);
  // alpha = Im(alpha_1 e^{i omega t}), so each response is Im(H alpha_1 e^{i omega t}).
  const std::complex<double> phasor = m.alpha_amplitude * std::exp(kI * (m.omega * t));

  AttachedLoads out;
  out.alpha = m.alpha_mean + phasor.imag();
  out.alpha_rate = m.omega * phasor.real();
  out.cl = polar.lift_slope * (m.alpha_mean - polar.zero_lift_angle) + (lift * phasor).imag();
  out.cm_quarter_chord = polar.cm_quarter_chord + (moment * phasor).imag();
  out.cm_pivot = out.cm_quarter_chord + (m.pivot_x_over_c - 0.25) * out.cl;
  return out;
}

}  // namespace stallscope::theory
