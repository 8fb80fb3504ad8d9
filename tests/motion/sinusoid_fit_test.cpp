#include "stages/numerics/sinusoid_fit.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>

namespace stallscope::numerics {
namespace {

constexpr double kPi = std::numbers::pi;

struct Truth {
  double mean = 10, amp = 8, freq = 2.0, phase = 0.3, noise = 0.05, rate = 1000, duration = 5;
};

void sample(const Truth& s, unsigned seed, Eigen::VectorXd& t, Eigen::VectorXd& y) {
  const auto n = static_cast<Eigen::Index>(s.rate * s.duration);
  t.resize(n);
  y.resize(n);
  std::mt19937 gen(seed);
  std::normal_distribution<double> noise(0.0, s.noise);
  for (Eigen::Index i = 0; i < n; ++i) {
    t[i] = static_cast<double>(i) / s.rate;
    y[i] = s.mean + s.amp * std::sin(2 * kPi * s.freq * t[i] + s.phase) + noise(gen);
  }
}

// Tolerances: 5 standard deviations of the Cramer-Rao bound for one real
// sinusoid in white noise (Rife & Boorstyn 1974, IEEE Trans. Inf. Theory 20(5),
// from memory): var(f) = 24 s^2 / ((2 pi)^2 A^2 N T^2), var(A) = 2 s^2 / N,
// var(mean) = s^2 / N, and for the phase at the record's start
// var(phi_0) = 8 s^2 / (A^2 N) (2 at the record's centre plus (T/2)^2 var(omega)).
TEST(SinusoidFit, RecoversFrequencyMeanAmplitudeAndPhaseFromNoisyAngles) {
  const Truth s;
  const double n = s.rate * s.duration;
  const double sd_f = std::sqrt(24.0 / n) * s.noise / (2 * kPi * s.amp * s.duration);
  const double sd_a = std::sqrt(2.0 / n) * s.noise, sd_m = s.noise / std::sqrt(n);
  const double sd_phi = std::sqrt(8.0 / n) * s.noise / s.amp;
  for (unsigned seed = 1; seed <= 5; ++seed) {
    Eigen::VectorXd t, y;
    sample(s, seed, t, y);
    const SinusoidFit f = fit_sinusoid(t, y, 1);
    EXPECT_NEAR(f.frequency_hz, s.freq, 5 * sd_f) << "seed " << seed;
    EXPECT_NEAR(f.amplitude, s.amp, 5 * sd_a) << "seed " << seed;
    EXPECT_NEAR(f.mean, s.mean, 5 * sd_m) << "seed " << seed;
    EXPECT_NEAR(f.phase_rad, s.phase, 5 * sd_phi) << "seed " << seed;
    EXPECT_NEAR(f.rms_residual, s.noise, 0.05 * s.noise) << "seed " << seed;
    // The fit's own error estimates agree with the bound (within 20 %).
    EXPECT_NEAR(f.frequency_error_hz / sd_f, 1.0, 0.2);
    EXPECT_NEAR(f.amplitude_error / sd_a, 1.0, 0.2);
    EXPECT_NEAR(f.mean_error / sd_m, 1.0, 0.2);
    EXPECT_NEAR(f.phase_error_rad / sd_phi, 1.0, 0.2);
  }
}

TEST(SinusoidFit, FindsTheFrequencyBetweenFftBinsAndFarFromTimeZero) {
  Truth s;
  s.freq = 1.37;  // 6.85 cycles in the record: far from any FFT bin
  s.noise = 0.0;
  Eigen::VectorXd t, y;
  sample(s, 1, t, y);
  t.array() += 1000.0;  // the same samples 1000 s later: phase at t = 0 shifts by 2 pi f 1000
  for (Eigen::Index i = 0; i < t.size(); ++i) y[i] = s.mean + s.amp * std::sin(2 * kPi * s.freq * t[i] + s.phase);
  const SinusoidFit f = fit_sinusoid(t, y, 1);
  EXPECT_NEAR(f.frequency_hz, s.freq, 1e-10);
  EXPECT_NEAR(f.amplitude, s.amp, 1e-9);
  for (double tt : {t[0], t[t.size() / 2], t[t.size() - 1]})
    EXPECT_NEAR(f.value(tt), s.mean + s.amp * std::sin(2 * kPi * s.freq * tt + s.phase), 1e-8);
}

TEST(SinusoidFit, SeparatesHarmonicDistortion) {
  // alpha = 10 + 8 sin(theta) + 0.3 sin(2 theta) + 0.2 cos(3 theta), theta = 2 pi 2 t + 0.3.
  const Eigen::Index n = 4000;
  Eigen::VectorXd t(n), y(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    t[i] = static_cast<double>(i) / 1000.0;
    const double th = 2 * kPi * 2.0 * t[i] + 0.3;
    y[i] = 10 + 8 * std::sin(th) + 0.3 * std::sin(2 * th) + 0.2 * std::cos(3 * th);
  }
  const SinusoidFit f = fit_sinusoid(t, y, 3);
  ASSERT_EQ(f.harmonics.size(), 2u);
  EXPECT_NEAR(f.harmonics[0].real(), 0.3, 1e-9);
  EXPECT_NEAR(f.harmonics[0].imag(), 0.0, 1e-9);
  EXPECT_NEAR(f.harmonics[1].real(), 0.0, 1e-9);
  EXPECT_NEAR(f.harmonics[1].imag(), 0.2, 1e-9);
  EXPECT_NEAR(f.distortion, std::sqrt(0.13) / 8.0, 1e-9);
  EXPECT_NEAR(f.rms_residual, 0.0, 1e-9);
  // What a pure sine leaves: the harmonics' rms, sqrt((0.3^2 + 0.2^2) / 2).
  EXPECT_NEAR(f.rms_residual_fundamental, std::sqrt(0.13 / 2), 1e-6);
  // The rate comes from the fitted series: d/dt of the exact signal.
  const double tt = 0.4321, th = 2 * kPi * 2.0 * tt + 0.3;
  const double rate = 2 * kPi * 2.0 * (8 * std::cos(th) + 0.6 * std::cos(2 * th) - 0.6 * std::sin(3 * th));
  EXPECT_NEAR(f.derivative(tt), rate, 1e-7);
}

TEST(FitAtFrequency, ReturnsTheComplexAmplitudeOfTransferFunctions) {
  // y = 1 + Re[(2 - i) e^{i omega t}] = 1 + 2 cos(omega t) + sin(omega t).
  const Eigen::Index n = 999;
  Eigen::VectorXd t(n), y(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    t[i] = 3.0 + static_cast<double>(i) / 500.0;
    y[i] = 1 + 2 * std::cos(2 * kPi * 1.5 * t[i]) + std::sin(2 * kPi * 1.5 * t[i]);
  }
  const auto [mean, amplitude] = fit_at_frequency(t, y, 1.5);
  EXPECT_NEAR(mean, 1.0, 1e-12);
  EXPECT_NEAR(amplitude.real(), 2.0, 1e-12);
  EXPECT_NEAR(amplitude.imag(), -1.0, 1e-12);
}

TEST(SinusoidFit, RefusesConstantOrTooShortRecords) {
  Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(100, 0.0, 1.0);
  EXPECT_THROW(fit_sinusoid(t, Eigen::VectorXd::Constant(100, 4.0)), std::invalid_argument);
  // 0.3 of a period: whatever sine is fitted leaves a misfit as large as its
  // amplitude, which is how the motion stage tells it is not a periodic run.
  Eigen::VectorXd slow = (2 * kPi * 0.3 * t.array()).sin().matrix();
  const SinusoidFit f = fit_sinusoid(t, slow);
  EXPECT_GT(f.rms_residual_fundamental / f.amplitude, 0.5);
  EXPECT_THROW(fit_sinusoid(t.head(3), slow.head(3)), std::invalid_argument);
}

}  // namespace
}  // namespace stallscope::numerics
