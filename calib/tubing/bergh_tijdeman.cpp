#include "calib/tubing/bergh_tijdeman.hpp"

#include "calib/air/air.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>
#include <vector>

namespace stallscope::calib {
namespace {

using Complex = std::complex<double>;
constexpr double kPi = std::numbers::pi;

// Beyond this |z| the asymptotic series is better than 1e-20 before its terms grow.
constexpr double kAsymptoticFrom = 25.0;
// A segment attenuating by more than e^-350 passes nothing the double can hold.
constexpr double kOpaque = 350.0;

// Continued fraction J_n/J_{n-1} = 1/(2n/z - J_{n+1}/J_n), summed from far above
// |z| downward, where the ratio of the minimal solution is ~0.
// 1/w by its conjugate: the library's complex division guards against
// overflow and NaN at several times the cost, and |w| here is far from both.
Complex reciprocal(Complex w) {
  const double d = w.real() * w.real() + w.imag() * w.imag();
  return {w.real() / d, -w.imag() / d};
}

Complex ratio_by_recurrence(int n, Complex z) {
  const int top = n + static_cast<int>(2.0 * std::abs(z)) + 60;
  const Complex two_over_z = 2.0 * reciprocal(z);
  Complex r = 0.0;
  for (int m = top; m >= n; --m) r = reciprocal(static_cast<double>(m) * two_over_z - r);
  return r;
}

// Hankel's expansion (Abramowitz & Stegun 9.2.5, 9.2.9-10) for Re z >= 0:
// J_nu = sqrt(2/(pi z)) [P cos chi - Q sin chi], chi = z - nu pi/2 - pi/4.
void hankel_pq(int nu, Complex z, Complex& p, Complex& q) {
  const double mu = 4.0 * nu * nu;
  p = 0.0, q = 0.0;
  Complex term = 1.0;  // a_k(nu) / z^k
  double previous = INFINITY;
  for (int k = 0; k < 200; ++k) {
    const double size = std::abs(term);
    if (size < 1e-18 * std::abs(p) || size > previous) break;
    previous = size;
    const double sign = (k / 2) % 2 == 0 ? 1.0 : -1.0;
    (k % 2 == 0 ? p : q) += sign * term;
    term *= (mu - (2.0 * k + 1) * (2.0 * k + 1)) / (8.0 * (k + 1)) / z;
  }
}

Complex ratio_by_asymptotics(int n, Complex z) {
  Complex p_n, q_n, p_m, q_m;
  hankel_pq(n, z, p_n, q_n);
  hankel_pq(n - 1, z, p_m, q_m);
  // Divide numerator and denominator by cos(chi_{n-1}); tan stays finite for large Im z.
  const Complex t = std::tan(z - (n - 1) * kPi / 2 - kPi / 4);
  return (p_n * t + q_n) / (p_m - q_m * t);
}

struct SegmentWave {
  Complex j2_over_j0;  // at the shear wave number alpha
  Complex n;           // polytropic exponent of the tube gas
  Complex phi;         // propagation factor, 1/m
  Complex phi_l;       // phi L
};

SegmentWave wave(const TubeSegment& s, const AirProperties& air, double omega) {
  const Complex i_three_halves = std::polar(1.0, 0.75 * kPi);
  const Complex alpha = i_three_halves * s.radius * std::sqrt(air.rho * omega / air.mu);
  SegmentWave w;
  w.j2_over_j0 = bessel_j2_over_j0(alpha);
  w.n = 1.0 / (1.0 + (air.gamma - 1.0) / air.gamma * bessel_j2_over_j0(alpha * std::sqrt(air.prandtl)));
  w.phi = omega / air.a0 * std::sqrt(air.gamma / (w.n * w.j2_over_j0));
  w.phi_l = w.phi * s.length;
  return w;
}

void check(const TubeSegment& s, const AirProperties& air) {
  if (!(s.length > 0.0 && s.radius > 0.0 && s.end_volume >= 0.0)) {
    throw std::invalid_argument("tube segment needs length > 0, radius > 0 and volume >= 0");
  }
  if (!(air.rho > 0.0 && air.mu > 0.0 && air.a0 > 0.0 && air.gamma > 1.0 && air.prandtl > 0.0 && air.k_p > 0.0)) {
    throw std::invalid_argument("air properties must be positive (gamma > 1)");
  }
}

double tube_volume(const TubeSegment& s) { return kPi * s.radius * s.radius * s.length; }

}  // namespace

AirProperties::AirProperties() : AirProperties(293.15, 101325.0) {}

AirProperties::AirProperties(double temperature_k, double pressure_pa) {
  if (!(temperature_k > 0.0 && pressure_pa > 0.0)) {
    throw std::invalid_argument("air properties need temperature > 0 K and pressure > 0 Pa");
  }
  rho = air::density(pressure_pa, temperature_k);
  mu = air::viscosity(temperature_k);
  a0 = air::speed_of_sound(temperature_k);
  k_p = gamma;
}

std::complex<double> bessel_j_ratio(int n, std::complex<double> z) {
  if (n < 1) throw std::invalid_argument("bessel_j_ratio needs n >= 1");
  if (z == 0.0) return 0.0;
  if (std::abs(z) <= kAsymptoticFrom) return ratio_by_recurrence(n, z);
  // J_n(-z) = (-1)^n J_n(z): keep the expansion in the right half-plane.
  return z.real() >= 0.0 ? ratio_by_asymptotics(n, z) : -ratio_by_asymptotics(n, -z);
}

std::complex<double> bessel_j2_over_j0(std::complex<double> z) {
  if (z == 0.0 || std::abs(z) > kAsymptoticFrom) return bessel_j_ratio(2, z) * bessel_j_ratio(1, z);
  // One continued fraction passes J2/J1 on its way down to J1/J0.
  const int top = 2 + static_cast<int>(2.0 * std::abs(z)) + 60;
  const Complex two_over_z = 2.0 * reciprocal(z);
  Complex r = 0.0;
  for (int m = top; m >= 2; --m) r = reciprocal(static_cast<double>(m) * two_over_z - r);
  return r * reciprocal(two_over_z - r);
}

std::complex<double> tube_response(const TubeSegment& tube, const AirProperties& air, double frequency_hz) {
  const TubeSegment line[] = {tube};
  return line_response(line, air, frequency_hz);
}

// Recursion for N segments (p_j at the end of segment j-1, p_0 at the orifice):
//   p_{j+1}/p_j = 1 / { cosh(Phi_j) + sinh(Phi_j) [ (V_j/Vt_j)(sigma + 1/k_p) n_j Phi_j
//       + (Vt_{j+1}/Vt_j)(phi_{j+1}/phi_j)(L_j/L_{j+1}) (J0_j J2_{j+1})/(J2_j J0_{j+1})
//         (cosh(Phi_{j+1}) - p_{j+2}/p_{j+1}) / sinh(Phi_{j+1}) ] },  Phi = phi L,
// the second bracket term absent for the last segment. This is the form reported for
// Bergh & Tijdeman (1965); we could not read the report itself, so it was re-derived
// from transmission-line theory: each tube is a line with propagation phi and
// characteristic impedance Z_c = phi n rho a0^2 / (i w A gamma); the flow out of
// node j+1 into tube j+1 is (p_{j+1} cosh(Phi_{j+1}) - p_{j+2}) / (Z_c,j+1 sinh(Phi_{j+1})),
// and Z_c,j / Z_c,j+1 reduces to the coefficient above. The tests check it against an
// independent chain of transmission matrices.
std::complex<double> line_response(std::span<const TubeSegment> line, const AirProperties& air,
                                   double frequency_hz) {
  if (line.empty()) throw std::invalid_argument("line_response needs at least one tube segment");
  for (const TubeSegment& s : line) check(s, air);
  if (!(frequency_hz >= 0.0) || !std::isfinite(frequency_hz)) {
    throw std::invalid_argument("line_response needs a finite frequency >= 0");
  }
  if (frequency_hz == 0.0) return 1.0;
  const double omega = 2.0 * kPi * frequency_hz;
  std::vector<SegmentWave> waves;
  waves.reserve(line.size());
  for (const TubeSegment& s : line) waves.push_back(wave(s, air, omega));

  const double volume_factor = air.sigma + 1.0 / air.k_p;
  Complex total = 1.0, downstream_ratio = 0.0;
  for (std::size_t j = line.size(); j-- > 0;) {
    const TubeSegment& s = line[j];
    const SegmentWave& w = waves[j];
    Complex load = s.end_volume / tube_volume(s) * volume_factor * w.n * w.phi_l;
    if (j + 1 < line.size()) {
      const TubeSegment& next = line[j + 1];
      const SegmentWave& wn = waves[j + 1];
      const Complex impedance_ratio = tube_volume(next) / tube_volume(s) * (wn.phi / w.phi) *
                                      (s.length / next.length) * (wn.j2_over_j0 / w.j2_over_j0);
      load += impedance_ratio * (1.0 / std::tanh(wn.phi_l) - downstream_ratio / std::sinh(wn.phi_l));
    }
    const Complex ratio =
        w.phi_l.real() > kOpaque ? Complex(0.0) : 1.0 / (std::cosh(w.phi_l) + std::sinh(w.phi_l) * load);
    total *= ratio;
    downstream_ratio = ratio;
  }
  return total;
}

Eigen::VectorXcd line_response(std::span<const TubeSegment> line, const AirProperties& air,
                               const Eigen::VectorXd& frequencies_hz) {
  Eigen::VectorXcd out(frequencies_hz.size());
  for (Eigen::Index i = 0; i < frequencies_hz.size(); ++i) out[i] = line_response(line, air, frequencies_hz[i]);
  return out;
}

std::complex<double> lossless_tube_response(const TubeSegment& tube, const AirProperties& air,
                                            double frequency_hz) {
  check(tube, air);
  const double x = 2.0 * kPi * frequency_hz * tube.length / air.a0;
  const double volume_term = tube.end_volume / tube_volume(tube) * (air.sigma + 1.0 / air.k_p) * air.gamma;
  return 1.0 / (std::cos(x) - volume_term * x * std::sin(x));
}

double helmholtz_frequency(const TubeSegment& tube, const AirProperties& air) {
  check(tube, air);
  if (!(tube.end_volume > 0.0)) throw std::invalid_argument("helmholtz_frequency needs a volume > 0");
  const double stiffness = air.gamma * (air.sigma + 1.0 / air.k_p);  // 1 for an adiabatic rigid volume
  return air.a0 / (2.0 * kPi) *
         std::sqrt(kPi * tube.radius * tube.radius / (tube.length * tube.end_volume * stiffness));
}

}  // namespace stallscope::calib
