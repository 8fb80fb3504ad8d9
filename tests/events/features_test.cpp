// Event location on sampled traces: exact cases where the answer is known in closed form.
#include <gtest/gtest.h>

#include <cmath>

#include "stages/events/features.hpp"

namespace stallscope::events {
namespace {

// Exact arithmetic on piecewise-linear and parabolic data leaves only rounding.
constexpr double kExact = 1e-12;

Eigen::VectorXd uniform_time(Eigen::Index n, double dt, double t0 = 0) {
  Eigen::VectorXd t(n);
  for (Eigen::Index i = 0; i < n; ++i) t[i] = t0 + dt * static_cast<double>(i);
  return t;
}

TEST(LocateExtremum, FindsTheVertexOfASampledParabolaBetweenSamples) {
  const Eigen::VectorXd t = uniform_time(101, 0.01);
  Eigen::VectorXd y(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) y[i] = 2.5 - 40 * (t[i] - 0.4237) * (t[i] - 0.4237);
  const Trace tr{t, y, 0.0};
  const Detection d = locate_extremum(tr, 0, t.size(), true);
  ASSERT_TRUE(d.found);
  EXPECT_NEAR(d.t_s, 0.4237, kExact);
  EXPECT_NEAR(d.value, 2.5, kExact);
  // No noise: only the sample interval, dt / sqrt 12.
  EXPECT_NEAR(d.sigma_s, 0.01 / std::sqrt(12.0), kExact);
}

TEST(LocateExtremum, NoiseWidensTheUncertaintyBySqrtTwoNoiseOverCurvature) {
  const Eigen::VectorXd t = uniform_time(101, 0.01);
  Eigen::VectorXd y(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) y[i] = -40 * (t[i] - 0.5) * (t[i] - 0.5);
  const Detection d = locate_extremum(Trace{t, y, 0.02}, 0, t.size(), true);
  ASSERT_TRUE(d.found);
  // |y''| = 80: half-width sqrt(2 0.02 / 80) = 0.02236.
  EXPECT_NEAR(d.sigma_s, std::hypot(0.01 / std::sqrt(12.0), std::sqrt(0.04 / 80)), 1e-9);
}

TEST(LocateExtremum, AnExtremeOnTheWindowEdgeIsMissingWithAReason) {
  const Eigen::VectorXd t = uniform_time(50, 0.1);
  const Eigen::VectorXd y = t;  // still rising at the end
  const Detection d = locate_extremum(Trace{t, y, 0.0}, 0, 50, true);
  EXPECT_FALSE(d.found);
  EXPECT_NE(d.reason.find("edge"), std::string::npos);
}

TEST(SustainedDrop, InterpolatesTheCrossingOfALinearFallExactly) {
  // y = 1 until 0.3 s, then falls at 2 per second: y = 0.9 at t = 0.35 s exactly.
  const Eigen::VectorXd t = uniform_time(200, 0.004);
  Eigen::VectorXd y(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) y[i] = t[i] < 0.3 ? 1.0 : 1.0 - 2 * (t[i] - 0.3);
  const Eigen::VectorXd threshold = Eigen::VectorXd::Constant(t.size(), 0.9);
  const Detection d = first_sustained_drop(Trace{t, y, 0.0}, threshold, 0, t.size(), 0.05);
  ASSERT_TRUE(d.found);
  EXPECT_NEAR(d.t_s, 0.35, kExact);
  EXPECT_NEAR(d.value, 0.9, kExact);
}

TEST(SustainedDrop, IgnoresABlipShorterThanThePersistenceTime) {
  const Eigen::VectorXd t = uniform_time(500, 0.001);
  Eigen::VectorXd y = Eigen::VectorXd::Ones(t.size());
  for (Eigen::Index i = 100; i < 110; ++i) y[i] = 0.0;  // 10 ms below
  for (Eigen::Index i = 300; i < 500; ++i) y[i] = 0.0;  // for good
  const Eigen::VectorXd threshold = Eigen::VectorXd::Constant(t.size(), 0.5);
  const Detection d = first_sustained_drop(Trace{t, y, 0.0}, threshold, 0, t.size(), 0.02);
  ASSERT_TRUE(d.found);
  EXPECT_NEAR(d.t_s, 0.2995, kExact);  // halfway between samples 299 (1) and 300 (0)
  const Detection blip = first_sustained_drop(Trace{t, y, 0.0}, threshold, 0, 200, 0.02);
  EXPECT_FALSE(blip.found);
}

TEST(ProminentPeaks, KeepsOnlyPeaksAboveTheProminence) {
  const Eigen::VectorXd t = uniform_time(1000, 0.001);
  Eigen::VectorXd y(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i)
    y[i] = 0.5 * std::exp(-std::pow((t[i] - 0.3) / 0.03, 2)) + 0.05 * std::exp(-std::pow((t[i] - 0.6) / 0.03, 2));
  const auto peaks = prominent_peaks(Trace{t, y, 0.0}, 0, t.size(), 0.1);
  ASSERT_EQ(peaks.size(), 1u);
  EXPECT_NEAR(peaks[0].t_s, 0.3, 1e-6);  // parabola on a Gaussian: O(dt^3 / width^2)
}

TEST(LineFitTest, RecoversSpeedAndCrossingTimeOfExactPoints) {
  const std::vector<double> t = {0.10, 0.12, 0.14, 0.16}, x = {0.2, 0.4, 0.6, 0.8};
  const LineFit f = fit_line(t, x);
  ASSERT_TRUE(f.ok);
  EXPECT_NEAR(f.slope, 10.0, 1e-9);
  EXPECT_NEAR(f.time_at(1.0), 0.18, 1e-12);
  EXPECT_NEAR(f.slope_error, 0.0, 1e-9);
}

}  // namespace
}  // namespace stallscope::events
