#include "calib/tubing/bergh_tijdeman.hpp"

#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <complex>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <sstream>
#include <string>
#include <vector>

namespace stallscope::calib {
namespace {

using Complex = std::complex<double>;
constexpr double kPi = std::numbers::pi;
constexpr double kDeg = 180 / kPi;

// The reference library is scipy (Debian python3-scipy) through /usr/bin/python3.
constexpr const char* kPython = "/usr/bin/python3";
// scipy's AMOS Bessel functions and ours agree to about this relative accuracy.
constexpr double kScipyTolerance = 1e-11;
// published-checks 5 prints the regression values to 4 decimals and 2 in degrees.
constexpr double kGainTolerance = 5e-5;
constexpr double kPhaseToleranceDeg = 5e-3;

// The air of published-checks 5: 20 C, rho = 1.204, mu = 1.81e-5, a0 = 343.2, Pr = 0.71.
AirProperties reference_air() {
  AirProperties air;
  air.rho = 1.204;
  air.mu = 1.81e-5;
  air.a0 = 343.2;
  air.gamma = 1.4;
  air.prandtl = 0.71;
  air.k_p = 1.4;
  air.sigma = 0.0;
  return air;
}

// An inviscid gas: the shear wave number goes to infinity.
AirProperties inviscid_air() {
  AirProperties air = reference_air();
  air.mu = 1e-24;
  return air;
}

// Runs a Python script (given as text) on /usr/bin/python3 and returns its stdout;
// fails the test if the interpreter or scipy is missing.
std::string run_python(const std::string& script) {
  const auto path = std::filesystem::temp_directory_path() /
                    ("stallscope_tubing_" + std::to_string(::getpid()) + ".py");
  std::ofstream(path) << script;
  std::string out;
  FILE* pipe = ::popen((std::string(kPython) + " " + path.string() + " 2>&1").c_str(), "r");
  if (pipe == nullptr) {
    ADD_FAILURE() << "cannot start " << kPython;
    return out;
  }
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) out += buffer;
  const int status = ::pclose(pipe);
  std::filesystem::remove(path);
  EXPECT_EQ(status, 0) << kPython << " with scipy (Debian python3-scipy) is needed; it said:\n" << out;
  return out;
}

std::vector<double> parse_numbers(const std::string& text) {
  std::istringstream in(text);
  std::vector<double> v;
  for (double x; in >> x;) v.push_back(x);
  return v;
}

std::string python_complex_list(const std::vector<Complex>& z) {
  std::ostringstream s;
  s.precision(17);
  s << "[";
  for (const Complex& c : z) s << "complex(" << c.real() << "," << c.imag() << "),";
  s << "]";
  return s.str();
}

TEST(BesselRatio, MatchesScipyOverSmallAndLargeComplexArguments) {
  std::vector<Complex> z;
  // The shear-wave-number ray i^{3/2} s, and the same scaled by sqrt(Pr).
  for (double s : {1e-6, 1e-3, 0.1, 1.0, 3.0, 10.0, 24.9, 25.1, 40.0, 100.0, 1e3, 1e4}) {
    z.push_back(std::polar(s, 0.75 * kPi));
    z.push_back(std::polar(s * std::sqrt(0.71), 0.75 * kPi));
  }
  for (Complex c : {Complex(3, 0.5), Complex(-7, 2), Complex(0.5, -20), Complex(30, 1), Complex(-50, -3),
                    Complex(20, 20), Complex(-300, 40), Complex(1e-8, 1e-8)}) {
    z.push_back(c);
  }
  const std::string out = run_python(
      "from scipy.special import jve\n"
      "for z in " + python_complex_list(z) + ":\n"
      "    r1 = jve(1, z) / jve(0, z)\n"
      "    r2 = jve(2, z) / jve(0, z)\n"
      "    print(repr(r1.real), repr(r1.imag), repr(r2.real), repr(r2.imag))\n");
  const std::vector<double> v = parse_numbers(out);
  ASSERT_EQ(v.size(), 4 * z.size()) << out;
  for (std::size_t i = 0; i < z.size(); ++i) {
    const Complex r1{v[4 * i], v[4 * i + 1]}, r2{v[4 * i + 2], v[4 * i + 3]};
    EXPECT_LT(std::abs(bessel_j_ratio(1, z[i]) - r1), kScipyTolerance * std::abs(r1)) << "z = " << z[i];
    EXPECT_LT(std::abs(bessel_j2_over_j0(z[i]) - r2), kScipyTolerance * std::abs(r2)) << "z = " << z[i];
  }
}

TEST(BesselRatio, StartsAsZOverTwoN) {
  const Complex z{1e-5, -2e-5};
  EXPECT_LT(std::abs(bessel_j_ratio(1, z) - z / 2.0), 1e-15);
  EXPECT_LT(std::abs(bessel_j2_over_j0(z) - z * z / 8.0), 1e-20);
  EXPECT_EQ(bessel_j_ratio(3, 0.0), Complex(0.0));
  EXPECT_THROW(bessel_j_ratio(0, 1.0), std::invalid_argument);
}

// The single-tube closed form evaluated by scipy (jve) for the same inputs: checks
// our coding of phi, n and alpha, and our Bessel ratios inside them.
TEST(BerghTijdeman, SingleTubeMatchesTheFormulaEvaluatedWithScipy) {
  struct Case {
    double f, length, radius, volume;
  };
  const std::vector<Case> cases{{1, 0.5, 5e-4, 0},      {10, 0.5, 5e-4, 0},    {100, 0.5, 5e-4, 0},
                                {131, 0.5, 5e-4, 0},    {2000, 0.5, 5e-4, 0},  {5, 1.2, 8e-4, 5e-7},
                                {50, 1.2, 8e-4, 5e-7},  {200, 1.2, 8e-4, 5e-7}, {50, 0.5, 1e-2, 0},
                                {800, 0.3, 2.5e-4, 2e-8}};
  std::ostringstream rows;
  rows.precision(17);
  rows << "[";
  for (const Case& c : cases) rows << "(" << c.f << "," << c.length << "," << c.radius << "," << c.volume << "),";
  rows << "]";
  const std::string out = run_python(
      "import numpy as np\n"
      "from scipy.special import jve\n"
      "rho, mu, a0, g, pr, kp, sigma = 1.204, 1.81e-5, 343.2, 1.4, 0.71, 1.4, 0.0\n"
      "q = lambda z: jve(2, z) / jve(0, z)\n"
      "for f, L, R, V in " + rows.str() + ":\n"
      "    w = 2 * np.pi * f\n"
      "    al = 1j**1.5 * R * np.sqrt(rho * w / mu)\n"
      "    n = 1 / (1 + (g - 1) / g * q(al * np.sqrt(pr)))\n"
      "    phi = w / a0 * np.sqrt(1 / q(al)) * np.sqrt(g / n)\n"
      "    vt = np.pi * R**2 * L\n"
      "    h = 1 / (np.cosh(phi * L) + V / vt * (sigma + 1 / kp) * n * phi * L * np.sinh(phi * L))\n"
      "    print(repr(h.real), repr(h.imag))\n");
  const std::vector<double> v = parse_numbers(out);
  ASSERT_EQ(v.size(), 2 * cases.size()) << out;
  for (std::size_t i = 0; i < cases.size(); ++i) {
    const Case& c = cases[i];
    const Complex expected{v[2 * i], v[2 * i + 1]};
    const Complex h = tube_response({c.length, c.radius, c.volume}, reference_air(), c.f);
    EXPECT_LT(std::abs(h - expected), kScipyTolerance * std::abs(expected)) << "f = " << c.f << ", R = " << c.radius;
  }
}

// published-checks 5 regression values [C, self-computed, not published]:
// L = 0.5 m, R = 0.5 mm, V = 0.
TEST(BerghTijdeman, ReproducesTheSelfComputedRegressionValues) {
  const TubeSegment tube{0.5, 5e-4, 0.0};
  const Complex h10 = tube_response(tube, reference_air(), 10.0);
  EXPECT_NEAR(std::abs(h10), 1.0060, kGainTolerance);
  EXPECT_NEAR(std::arg(h10) * kDeg, -2.59, kPhaseToleranceDeg);
  const Complex h100 = tube_response(tube, reference_air(), 100.0);
  EXPECT_NEAR(std::abs(h100), 1.7444, kGainTolerance);
  EXPECT_NEAR(std::arg(h100) * kDeg, -45.35, kPhaseToleranceDeg);
  // Peak of about 2.083 near 131 Hz, below the lossless a0/(4L) = 171.6 Hz.
  double best_f = 0, best = 0;
  for (double f = 100; f <= 170; f += 0.01) {
    const double gain = std::abs(tube_response(tube, reference_air(), f));
    if (gain > best) best = gain, best_f = f;
  }
  EXPECT_NEAR(best, 2.083, 5e-4);
  EXPECT_NEAR(best_f, 131, 0.5);
  // A wide tube (R = 10 mm, 50 Hz): 1.1205 against the lossless 1.1147.
  const TubeSegment wide{0.5, 1e-2, 0.0};
  EXPECT_NEAR(std::abs(tube_response(wide, reference_air(), 50.0)), 1.1205, kGainTolerance);
  EXPECT_NEAR(std::abs(lossless_tube_response(wide, reference_air(), 50.0)), 1.1147, kGainTolerance);
}

// Slow oscillations: gain 1, phase 0, and the first-order lag of a Poiseuille
// resistance 8 mu L/(pi R^4) charging the volume (V/k_p p) plus half the tube's own
// isothermal capacity (V_t/2p), p = rho a0^2/gamma [derived, lumped RC line].
TEST(BerghTijdeman, PassesSteadyPressureWithThePoiseuilleLag) {
  const TubeSegment tube{0.8, 4e-4, 3e-7};
  const AirProperties air = reference_air();
  EXPECT_EQ(tube_response(tube, air, 0.0), Complex(1.0));
  const double f = 1e-3;
  const Complex h = tube_response(tube, air, f);
  EXPECT_NEAR(std::abs(h), 1.0, 1e-6);
  const double pressure = air.rho * air.a0 * air.a0 / air.gamma;
  const double resistance = 8 * air.mu * tube.length / (kPi * std::pow(tube.radius, 4));
  const double vt = kPi * tube.radius * tube.radius * tube.length;
  const double lag = resistance * (tube.end_volume / air.k_p + 0.5 * vt) / pressure;
  EXPECT_NEAR(std::arg(h), -2 * kPi * f * lag, 1e-3 * 2 * kPi * f * lag);
}

// Lossless limit (derived in published-checks 5): 1/cos(wL/a0), first resonance a0/(4L).
TEST(BerghTijdeman, InviscidGasGivesTheOrganPipeResponse) {
  const TubeSegment tube{0.5, 5e-4, 0.0};
  for (double f : {10.0, 60.0, 120.0, 160.0, 250.0}) {
    const Complex h = tube_response(tube, inviscid_air(), f);
    EXPECT_LT(std::abs(h - 1.0 / std::cos(2 * kPi * f * 0.5 / 343.2)), 1e-6 * std::abs(h)) << f;
    EXPECT_LT(std::abs(h - lossless_tube_response(tube, inviscid_air(), f)), 1e-6 * std::abs(h)) << f;
  }
  EXPECT_NEAR(343.2 / (4 * 0.5), 171.6, 1e-12);
  EXPECT_GT(std::abs(tube_response(tube, inviscid_air(), 171.6)), 1e4);
  EXPECT_GT(std::abs(lossless_tube_response(tube, inviscid_air(), 171.6)), 1e12);
  // Losses pull the peak below the organ-pipe frequency (131 Hz above).
  EXPECT_LT(std::abs(tube_response(tube, reference_air(), 171.6)), 2.0);
}

// Large volume, small wL/a0: the lossless response peaks at the Helmholtz frequency,
// (a0/2pi) sqrt(pi R^2/(L V)), to first order in V_t/V (next term -V_t/(6V)).
TEST(BerghTijdeman, LargeVolumeResonatesAtTheHelmholtzFrequency) {
  const double vt = kPi * 5e-4 * 5e-4 * 0.1;
  const TubeSegment tube{0.1, 5e-4, 1000 * vt};
  const double f_h = helmholtz_frequency(tube, inviscid_air());
  EXPECT_NEAR(f_h, 343.2 / (2 * kPi) * std::sqrt(kPi * 5e-4 * 5e-4 / (0.1 * 1000 * vt)), 1e-12);
  // Golden-section search for the peak of the inviscid model.
  double lo = 0.5 * f_h, hi = 1.5 * f_h;
  auto gain = [&](double f) { return std::abs(tube_response(tube, inviscid_air(), f)); };
  for (int i = 0; i < 100; ++i) {
    const double a = hi - 0.618 * (hi - lo), b = lo + 0.618 * (hi - lo);
    (gain(a) > gain(b) ? hi : lo) = gain(a) > gain(b) ? b : a;
  }
  EXPECT_NEAR(0.5 * (lo + hi) / f_h, 1.0 - 1.0 / 6000, 2e-5);
  // An isothermal volume (k_p = 1) is softer by gamma.
  AirProperties isothermal = inviscid_air();
  isothermal.k_p = 1.0;
  EXPECT_NEAR(helmholtz_frequency(tube, isothermal), f_h / std::sqrt(1.4), 1e-9);
}

// Transmission matrices: [p; Q]_in = [[cosh, Zc sinh], [sinh/Zc, cosh]] [p; Q]_out per
// tube, [[1, 0], [Y_v, 1]] per volume, with Z_s = -i w rho/(A J2/J0), Z_c = Z_s/phi,
// Y_v = i w V (sigma + 1/k_p) gamma/(rho a0^2). Written here independently of the
// recursion in the library.
Complex chain_response(const std::vector<TubeSegment>& line, const AirProperties& air, double f) {
  const double w = 2 * kPi * f;
  using Matrix = Eigen::Matrix2cd;
  Matrix total = Matrix::Identity();
  for (const TubeSegment& s : line) {
    const Complex alpha = std::polar(1.0, 0.75 * kPi) * s.radius * std::sqrt(air.rho * w / air.mu);
    const Complex q = bessel_j2_over_j0(alpha);
    const Complex n = 1.0 / (1.0 + (air.gamma - 1) / air.gamma * bessel_j2_over_j0(alpha * std::sqrt(air.prandtl)));
    const Complex phi = w / air.a0 * std::sqrt(air.gamma / (n * q));
    const double area = kPi * s.radius * s.radius;
    const Complex zc = Complex(0, -w * air.rho) / (area * q) / phi;
    Matrix tube;
    tube << std::cosh(phi * s.length), zc * std::sinh(phi * s.length), std::sinh(phi * s.length) / zc,
        std::cosh(phi * s.length);
    Matrix volume;
    volume << 1.0, 0.0, Complex(0, w * s.end_volume * (air.sigma + 1 / air.k_p) * air.gamma / (air.rho * air.a0 * air.a0)),
        1.0;
    total = total * tube * volume;
  }
  return 1.0 / total(0, 0);  // closed end: Q_N = 0
}

TEST(BerghTijdeman, SeriesRecursionAgreesWithTransmissionMatrices) {
  const std::vector<TubeSegment> line{{0.3, 5e-4, 0.0}, {0.05, 1.2e-3, 2e-7}, {0.6, 3e-4, 8e-8}};
  for (double f : {2.0, 40.0, 150.0, 600.0, 3000.0}) {
    const Complex expected = chain_response(line, reference_air(), f);
    EXPECT_LT(std::abs(line_response(line, reference_air(), f) - expected), 1e-10 * std::abs(expected)) << f;
  }
  const std::vector<TubeSegment> one{{0.5, 5e-4, 1e-7}};
  EXPECT_LT(std::abs(tube_response(one[0], reference_air(), 90.0) - chain_response(one, reference_air(), 90.0)),
            1e-12);
}

TEST(BerghTijdeman, TwoIdenticalSegmentsEqualOneOfTwiceTheLength) {
  const std::vector<TubeSegment> split{{0.4, 6e-4, 0.0}, {0.4, 6e-4, 4e-7}};
  const TubeSegment whole{0.8, 6e-4, 4e-7};
  const Eigen::VectorXd f = Eigen::VectorXd::LinSpaced(40, 1.0, 1200.0);
  const Eigen::VectorXcd a = line_response(split, reference_air(), f);
  for (Eigen::Index i = 0; i < f.size(); ++i) {
    const Complex b = tube_response(whole, reference_air(), f[i]);
    EXPECT_LT(std::abs(a[i] - b), 1e-12 * std::abs(b)) << f[i];
  }
}

TEST(BerghTijdeman, VeryLossyLineGivesZeroNotNaN) {
  const std::vector<TubeSegment> line{{20.0, 1e-4, 0.0}, {1.0, 1e-4, 1e-8}};
  const Complex h = line_response(line, reference_air(), 20000.0);
  EXPECT_TRUE(std::isfinite(h.real()) && std::isfinite(h.imag()));
  EXPECT_LT(std::abs(h), 1e-100);
}

TEST(BerghTijdeman, RejectsImpossibleGeometry) {
  const std::vector<TubeSegment> empty;
  EXPECT_THROW(line_response(empty, reference_air(), 10.0), std::invalid_argument);
  EXPECT_THROW(tube_response({0.0, 5e-4, 0.0}, reference_air(), 10.0), std::invalid_argument);
  EXPECT_THROW(tube_response({0.5, 5e-4, -1.0}, reference_air(), 10.0), std::invalid_argument);
  EXPECT_THROW(tube_response({0.5, 5e-4, 0.0}, reference_air(), -1.0), std::invalid_argument);
  EXPECT_THROW(helmholtz_frequency({0.5, 5e-4, 0.0}, reference_air()), std::invalid_argument);
}

// Sea level of the U.S. Standard Atmosphere 1976: 288.15 K, 101325 Pa, rho = 1.2250
// [V, COESA 1976 table]; mu = 1.7894e-5 and a = 340.294 m/s [from memory].
TEST(AirProperties, MatchesTheStandardAtmosphereAtSeaLevel) {
  const AirProperties air(288.15, 101325.0);
  EXPECT_NEAR(air.rho, 1.2250, 5e-5);
  EXPECT_NEAR(air.mu, 1.7894e-5, 5e-10);
  EXPECT_NEAR(air.a0, 340.294, 5e-4);
  EXPECT_DOUBLE_EQ(air.k_p, air.gamma);
  // Default: 20 C, the air of published-checks 5 to its printed digits.
  const AirProperties room;
  EXPECT_NEAR(room.rho, 1.204, 5e-4);
  EXPECT_NEAR(room.mu, 1.81e-5, 5e-8);
  EXPECT_NEAR(room.a0, 343.2, 0.05);
  EXPECT_THROW(AirProperties(0.0, 101325.0), std::invalid_argument);
}

}  // namespace
}  // namespace stallscope::calib
