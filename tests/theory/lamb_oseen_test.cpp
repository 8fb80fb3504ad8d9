#include "stages/theory/lamb_oseen.hpp"

#include <gtest/gtest.h>

#include <Eigen/Eigenvalues>
#include <array>
#include <cmath>
#include <numbers>

namespace stallscope::theory {
namespace {

constexpr double kPi = std::numbers::pi;

// published-checks section 6 prints its values to 6 significant digits [C]:
// half a unit of the last digit.
constexpr double kSixDigitTolerance = 5e-7;

const LambOseenVortex kUnit{0.0, 0.0, 1.0, 1.0};

TEST(LambOseen, SwirlStrengthMatchesThePublishedProfile) {
  const std::array<double, 6> eta{0.25, 0.5, 0.75, 1.0, 1.1, 1.12091};
  const std::array<double, 6> ratio{0.938935, 0.771554, 0.535359, 0.255953, 0.097507, 0.0};
  const LambOseenVortex v{0.3, -0.1, 2.0, 0.04};
  const double omega0 = 2.0 / (2 * kPi * 0.04 * 0.04);
  EXPECT_NEAR(swirl_strength(v, 0.0) / omega0, 1.0, 1e-15);
  for (std::size_t i = 0; i < eta.size(); ++i) {
    EXPECT_NEAR(swirl_strength(v, eta[i] * 0.04) / omega0, ratio[i], kSixDigitTolerance) << "eta = " << eta[i];
  }
  EXPECT_EQ(swirl_strength(v, 1.2 * 0.04), 0.0);
  EXPECT_EQ(swirl_strength(v, 3 * 0.04), 0.0);
}

TEST(LambOseen, SwirlEndsExactlyAtThePeakVelocityRadius) {
  const double r_max = peak_velocity_radius(kUnit);
  EXPECT_NEAR(r_max, 1.12091, 5e-6);
  EXPECT_NEAR(r_max * r_max, 1.25643, 5e-6);
  EXPECT_GT(swirl_strength(kUnit, r_max * (1 - 1e-6)), 0.0);
  EXPECT_EQ(swirl_strength(kUnit, r_max * (1 + 1e-9)), 0.0);
  EXPECT_LT(swirl_strength(kUnit, r_max * (1 - 1e-6)), 3e-3);
}

TEST(LambOseen, PeakVelocityAndCirculationMatchThePublishedValues) {
  const LambOseenVortex v{0, 0, 3.0, 0.2};
  EXPECT_NEAR(peak_tangential_velocity(v) / (3.0 / (2 * kPi * 0.2)), 0.638173, kSixDigitTolerance);
  EXPECT_NEAR(peak_tangential_velocity(v) / (3.0 / 0.2), 0.101568, kSixDigitTolerance);
  EXPECT_NEAR(circulation_within(v, 0.2) / 3.0, 0.632121, kSixDigitTolerance);
  EXPECT_NEAR(circulation_within(v, peak_velocity_radius(v)) / 3.0, 0.715332, kSixDigitTolerance);
  EXPECT_NEAR(circulation_within(v, 0.4) / 3.0, 0.981684, kSixDigitTolerance);
  EXPECT_NEAR(vorticity(v, 0.0), 3.0 / (kPi * 0.04), 1e-12);
  EXPECT_NEAR(swirl_strength(v, 0.0), vorticity(v, 0.0) / 2, 1e-12);
  // Far field: a point vortex.
  EXPECT_NEAR(tangential_velocity(v, 5.0), 3.0 / (2 * kPi * 5.0), 1e-15);
}

TEST(LambOseen, CoreRadiusGrowsWithViscousDiffusion) {
  EXPECT_NEAR(lamb_oseen_core_radius(1.5e-5, 0.01), std::sqrt(6e-7), 1e-18);
  EXPECT_THROW(lamb_oseen_core_radius(0.0, 1.0), std::invalid_argument);
  EXPECT_THROW(tangential_velocity({0, 0, 1, 0}, 1.0), std::invalid_argument);
}

TEST(LambOseen, PositiveCirculationTurnsCounterClockwise) {
  const LambOseenVortex v{1.0, 2.0, 0.5, 0.1};
  const Eigen::Vector2d east = velocity_at(v, 1.3, 2.0);
  EXPECT_NEAR(east.x(), 0.0, 1e-15);
  EXPECT_GT(east.y(), 0.0);
  EXPECT_NEAR(east.y(), tangential_velocity(v, 0.3), 1e-15);
  const Eigen::Vector2d north = velocity_at(v, 1.0, 2.2);
  EXPECT_LT(north.x(), 0.0);
  EXPECT_TRUE(velocity_at(v, 1.0, 2.0).isZero(0.0));
}

// Stokes: the line integral of the velocity round a circle is Gamma(r).
TEST(LambOseen, LineIntegralOfVelocityIsTheEnclosedCirculation) {
  const LambOseenVortex v{0.2, -0.3, 1.7, 0.05};
  for (double r : {0.01, 0.05, 0.12}) {
    const int n = 32;
    double gamma = 0;
    for (int i = 0; i < n; ++i) {
      const double t = 2 * kPi * i / n;
      const Eigen::Vector2d u = velocity_at(v, v.x0 + r * std::cos(t), v.y0 + r * std::sin(t));
      gamma += (-u.x() * std::sin(t) + u.y() * std::cos(t)) * r * 2 * kPi / n;
    }
    EXPECT_NEAR(gamma, circulation_within(v, r), 1e-13);
  }
}

TEST(LambOseen, GradientMatchesFiniteDifferencesAndIsDivergenceFree) {
  const LambOseenVortex v{0.1, 0.2, 0.8, 0.03};
  const double h = 1e-7;
  for (auto [x, y] : {std::pair{0.1, 0.2}, std::pair{0.1003, 0.2001}, std::pair{0.12, 0.17}, std::pair{0.2, 0.3}}) {
    const Eigen::Matrix2d a = velocity_gradient_at(v, x, y);
    const Eigen::Vector2d d_dx = (velocity_at(v, x + h, y) - velocity_at(v, x - h, y)) / (2 * h);
    const Eigen::Vector2d d_dy = (velocity_at(v, x, y + h) - velocity_at(v, x, y - h)) / (2 * h);
    const double scale = a.norm();
    EXPECT_NEAR(a(0, 0), d_dx.x(), 1e-6 * scale);
    EXPECT_NEAR(a(1, 0), d_dx.y(), 1e-6 * scale);
    EXPECT_NEAR(a(0, 1), d_dy.x(), 1e-6 * scale);
    EXPECT_NEAR(a(1, 1), d_dy.y(), 1e-6 * scale);
    EXPECT_NEAR(a.trace(), 0.0, 1e-12 * scale);
    EXPECT_NEAR(a(1, 0) - a(0, 1), vorticity(v, std::hypot(x - 0.1, y - 0.2)), 1e-12 * scale);
  }
}

// Zhou et al. (1999): lambda_ci is the imaginary part of the complex eigenvalue
// pair of the velocity gradient; here computed by Eigen's general eigensolver.
TEST(LambOseen, ClosedFormSwirlIsTheImaginaryEigenvalueOfTheGradient) {
  const LambOseenVortex v{0, 0, -1.3, 0.5};  // clockwise: lambda_ci is unsigned
  for (double r : {0.0, 1e-4, 0.1, 0.3, 0.5, 0.55, 0.7}) {
    const Eigen::Matrix2d a = velocity_gradient_at(v, r * 0.6, r * 0.8);
    Eigen::EigenSolver<Eigen::Matrix2d> solver(a);
    const double lambda_ci = std::abs(solver.eigenvalues()[0].imag());
    EXPECT_NEAR(swirl_strength(v, r), lambda_ci, 1e-12) << "r = " << r;
  }
}

}  // namespace
}  // namespace stallscope::theory
