#include "stages/theory/goman_khrabrov.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace stallscope::theory {
namespace {

constexpr double kPi = std::numbers::pi;
// published-checks section 9 prints percentages to 4 digits [C]: half a unit.
constexpr double kFourDigitTolerance = 5e-5;
// Exactness of the exponential step for piecewise-linear forcing: rounding only.
constexpr double kRounding = 1e-12;

Eigen::VectorXd uniform_time(int n, double dt) { return Eigen::VectorXd::LinSpaced(n, 0.0, dt * (n - 1)); }

TEST(Kirchhoff, NormalForceFallsToAQuarterWhenFullySeparated) {
  // published-checks 9 [C]: Cn / (Cn_alpha sin alpha) = 1, 0.5625, 0.25 at x = 1, 0.25, 0.
  const double alpha = 0.2, slope = 6.1;
  EXPECT_NEAR(kirchhoff_normal_force(slope, alpha, 1.0) / (slope * std::sin(alpha)), 1.0, 1e-15);
  EXPECT_NEAR(kirchhoff_normal_force(slope, alpha, 0.25) / (slope * std::sin(alpha)), 0.5625, 1e-15);
  EXPECT_NEAR(kirchhoff_normal_force(slope, alpha, 0.0) / (slope * std::sin(alpha)), 0.25, 1e-15);
}

TEST(Kirchhoff, InversionRecoversTheSeparationPointAndClips) {
  const double slope = 5.8;
  for (double alpha : {0.1, 0.3, -0.25}) {
    for (double x : {0.0, 0.04, 0.3, 0.81, 1.0}) {
      const auto back = kirchhoff_separation(kirchhoff_normal_force(slope, alpha, x), slope, alpha);
      ASSERT_TRUE(back.has_value());
      EXPECT_NEAR(*back, x, 1e-13) << "alpha = " << alpha << ", x = " << x;
    }
    EXPECT_EQ(kirchhoff_separation(1.2 * slope * std::sin(alpha), slope, alpha), 1.0);  // above attached
    EXPECT_EQ(kirchhoff_separation(0.1 * slope * std::sin(alpha), slope, alpha), 0.0);  // below separated
    EXPECT_EQ(kirchhoff_separation(-0.5 * slope * std::sin(alpha), slope, alpha), 0.0);  // wrong sign
  }
  EXPECT_FALSE(kirchhoff_separation(0.1, slope, 0.0).has_value());
}

TEST(GomanKhrabrov, StaticFitIsHalfAtTheBreakAngleAndBounded) {
  const SeparationFit fit{25.0, 0.26};
  EXPECT_DOUBLE_EQ(static_separation(fit, 0.26), 0.5);
  EXPECT_NEAR(static_separation(fit, 0.0), 1.0, 1e-5);
  EXPECT_NEAR(static_separation(fit, 0.6), 0.0, 1e-7);
  EXPECT_GT(static_separation(fit, 0.2), static_separation(fit, 0.3));
}

TEST(GomanKhrabrov, SteadyAngleKeepsTheStaticSeparation) {
  const SeparationFit fit{20.0, 0.25};
  const Eigen::VectorXd t = uniform_time(50, 0.01);
  const Eigen::VectorXd alpha = Eigen::VectorXd::Constant(50, 0.27);
  const Eigen::VectorXd x = integrate_goman_khrabrov(
      t, alpha, [&](double a) { return static_separation(fit, a); }, {0.05, 0.02});
  EXPECT_NEAR((x.array() - static_separation(fit, 0.27)).abs().maxCoeff(), 0.0, kRounding);
}

// Step in x0 at t = 0 (state still at the old value): 36.79 % remains after tau1,
// 4.98 % after 3 tau1 (published-checks 9 [C]), exact for any step size.
TEST(GomanKhrabrov, StepResponseRelaxesWithTau1) {
  const double tau1 = 0.2;
  for (double dt : {0.002, 0.037, 0.6}) {
    const int n = static_cast<int>(std::round(0.6 / dt)) + 1;
    const Eigen::VectorXd t = uniform_time(n, dt);
    const Eigen::VectorXd alpha = Eigen::VectorXd::Constant(n, 0.5);
    const Eigen::VectorXd x = integrate_goman_khrabrov(
        t, alpha, Eigen::VectorXd::Zero(n), [](double) { return 0.0; }, {tau1, 0.1}, 1.0);
    for (int i = 0; i < n; ++i) EXPECT_NEAR(x[i], std::exp(-t[i] / tau1), kRounding) << "dt = " << dt;
  }
  const Eigen::VectorXd t = uniform_time(601, 0.001);
  const Eigen::VectorXd x = integrate_goman_khrabrov(
      t, Eigen::VectorXd::Zero(601), Eigen::VectorXd::Zero(601), [](double) { return 0.0; }, {tau1, 0.0}, 1.0);
  EXPECT_NEAR(x[200], 0.3679, kFourDigitTolerance);
  EXPECT_NEAR(x[600], 0.0498, kFourDigitTolerance);
}

// Constant pitch rate with linear x0: x -> x0(alpha - (tau1 + tau2) alpha_dot) exactly.
TEST(GomanKhrabrov, ConstantPitchRateLagsByBothTimeConstants) {
  const GomanKhrabrovTimes times{0.03, 0.012};
  const double rate = 1.7;
  auto x0 = [](double a) { return 1.0 - 2.0 * a; };
  const Eigen::VectorXd t = uniform_time(400, 0.005);
  const Eigen::VectorXd alpha = (0.05 + rate * t.array()).matrix();
  // Start on the lagged solution: then every sample is on it.
  const double start = x0(alpha[0] - (times.tau1 + times.tau2) * rate);
  for (const Eigen::VectorXd& x :
       {integrate_goman_khrabrov(t, alpha, Eigen::VectorXd::Constant(400, rate), x0, times, start),
        integrate_goman_khrabrov(t, alpha, x0, times, start)}) {
    for (int i = 0; i < 400; ++i) {
      EXPECT_NEAR(x[i], x0(alpha[i] - (times.tau1 + times.tau2) * rate), kRounding);
    }
  }
  // From the steady start the transient dies out as exp(-t/tau1).
  const Eigen::VectorXd x = integrate_goman_khrabrov(t, alpha, x0, times);
  EXPECT_NEAR(x[399], x0(alpha[399] - (times.tau1 + times.tau2) * rate), 1e-12);
}

// Small harmonic motion about a linear x0: x_hat / x0_hat = (1 - i w tau2)/(1 + i w tau1).
TEST(GomanKhrabrov, HarmonicMotionFollowsTheFirstOrderTransfer) {
  const GomanKhrabrovTimes times{0.04, 0.015};
  const double omega = 2 * kPi * 3.0, amplitude = 0.1;
  auto x0 = [](double a) { return 0.5 - a; };  // x0_hat = -alpha_hat
  const int per_cycle = 4000, cycles = 8;
  const int n = per_cycle * cycles + 1;
  const Eigen::VectorXd t = uniform_time(n, 2 * kPi / omega / per_cycle);
  const Eigen::VectorXd alpha = (amplitude * (omega * t.array()).sin()).matrix();
  const Eigen::VectorXd x = integrate_goman_khrabrov(t, alpha, x0, times);
  // Fourier coefficient over the last cycle (transient gone: exp(-7 T / tau1)).
  std::complex<double> coefficient = 0;
  for (int i = n - 1 - per_cycle; i < n - 1; ++i) {
    coefficient += (x[i] - 0.5) * std::exp(std::complex<double>(0, -omega * t[i]));
  }
  coefficient *= 2.0 / per_cycle;
  // alpha = Im(A e^{iwt}) has coefficient -iA; x0_hat = +iA.
  const std::complex<double> expected = std::complex<double>(0, amplitude) *
                                        goman_khrabrov_harmonic_response(omega, times);
  EXPECT_NEAR(std::abs(coefficient - expected) / amplitude, 0.0, 1e-6);
  EXPECT_EQ(goman_khrabrov_harmonic_response(0.0, times), std::complex<double>(1.0, 0.0));
}

TEST(GomanKhrabrov, ZeroRelaxationFollowsTheDelayedStaticCurve) {
  const SeparationFit fit{15.0, 0.3};
  const Eigen::VectorXd t = uniform_time(30, 0.01);
  const Eigen::VectorXd alpha = (0.2 + 2.0 * t.array()).matrix();
  const Eigen::VectorXd x =
      integrate_goman_khrabrov(t, alpha, [&](double a) { return static_separation(fit, a); }, {0.0, 0.02});
  for (int i = 0; i < 30; ++i) EXPECT_NEAR(x[i], static_separation(fit, alpha[i] - 0.04), 1e-12);
}

TEST(GomanKhrabrov, RejectsUnorderedTimesAndMismatchedSamples) {
  auto x0 = [](double) { return 1.0; };
  Eigen::VectorXd t(3), alpha(3);
  t << 0.0, 0.2, 0.1;
  alpha << 0.0, 0.1, 0.2;
  EXPECT_THROW(integrate_goman_khrabrov(t, alpha, x0, {0.1, 0.0}), std::invalid_argument);
  EXPECT_THROW(integrate_goman_khrabrov(uniform_time(4, 0.1), alpha, x0, {0.1, 0.0}), std::invalid_argument);
  EXPECT_THROW(integrate_goman_khrabrov(uniform_time(3, 0.1), alpha, x0, {-0.1, 0.0}), std::invalid_argument);
}

}  // namespace
}  // namespace stallscope::theory
